"""March tests: notation, the published algorithm library, address orders, data backgrounds,
lazy vectorised expansion into operation streams, and exports.

Pure Python + numpy: never imports the simulator side.
"""

from memcheck.march.notation import Delay, MarchElement, MarchOp, MarchTest, Order, parse_march

__all__ = ["Delay", "MarchElement", "MarchOp", "MarchTest", "Order", "parse_march"]
