"""March tests: notation, the published algorithm library, address orders, data backgrounds,
lazy vectorised expansion into operation streams, and exports.

Pure Python + numpy: never imports the simulator side.
"""

from memcheck.march.backgrounds import (
    BACKGROUND_NAMES,
    DataBackground,
    background_words,
    int_to_limbs,
    limbs_to_int,
    resolve_backgrounds,
    standard_set,
)
from memcheck.march.expand import (
    OP_READ,
    OP_WRITE,
    MarchStep,
    MarchStream,
    OpsChunk,
    Pause,
    StreamArrays,
    expand,
)
from memcheck.march.export import FORMATS, HexLayout, hex_layout, iter_export, render, write_export
from memcheck.march.library import (
    ALGORITHMS,
    FAULT_CLASSES,
    MarchAlgorithm,
    Source,
    algorithm_names,
    get_algorithm,
    resolve_test,
)
from memcheck.march.notation import Delay, MarchElement, MarchOp, MarchTest, Order, parse_march
from memcheck.march.orders import ORDER_KINDS, AddressOrder, address_order, lfsr_sequence, parse_layout

__all__ = [
    "ALGORITHMS",
    "BACKGROUND_NAMES",
    "FAULT_CLASSES",
    "FORMATS",
    "OP_READ",
    "OP_WRITE",
    "ORDER_KINDS",
    "AddressOrder",
    "DataBackground",
    "Delay",
    "HexLayout",
    "MarchAlgorithm",
    "MarchElement",
    "MarchOp",
    "MarchStep",
    "MarchStream",
    "MarchTest",
    "OpsChunk",
    "Order",
    "Pause",
    "Source",
    "StreamArrays",
    "address_order",
    "algorithm_names",
    "background_words",
    "expand",
    "get_algorithm",
    "hex_layout",
    "int_to_limbs",
    "iter_export",
    "lfsr_sequence",
    "limbs_to_int",
    "parse_layout",
    "parse_march",
    "render",
    "resolve_backgrounds",
    "resolve_test",
    "standard_set",
    "write_export",
]
