"""memcheck: prove SRAM wrapper RTL against a memory contract, generate March tests, and measure
which manufacturing faults they detect.

This module is the public API; everything else is internal. Importing it never imports cocotb or a
simulator: the simulator side lives in :mod:`memcheck.sim`.
"""

from memcheck.contract import (
    ClockSpec,
    Contract,
    MemorySpec,
    PortSpec,
    PowerSpec,
    ResetSpec,
    RtlSpec,
    TimingSpec,
    load_contract,
    parse_contract,
    timeline,
)
from memcheck.errors import (
    BudgetError,
    ContractError,
    FaultModelError,
    InvalidOperation,
    MemcheckError,
    NotationError,
    NotYetSimulated,
    ReplayError,
    SimulationError,
    UnknownAlgorithm,
    UsageError,
)
from memcheck.faults import Arrangement, CoverageReport, coverage, parse_universe, plot_coverage
from memcheck.march import (
    ALGORITHMS,
    MarchStream,
    MarchTest,
    address_order,
    expand,
    get_algorithm,
    parse_march,
    resolve_test,
    write_export,
)
from memcheck.model import Model
from memcheck.ops import IDLE, NO_EDGE, UNKNOWN, Cycle, Expected, PortOp, Power, Trace, idle, read, write

__version__ = "0.1.0"

__all__ = [
    "ALGORITHMS",
    "IDLE",
    "NO_EDGE",
    "UNKNOWN",
    "Arrangement",
    "BudgetError",
    "ClockSpec",
    "Contract",
    "ContractError",
    "CoverageReport",
    "Cycle",
    "Expected",
    "FaultModelError",
    "InvalidOperation",
    "MarchStream",
    "MarchTest",
    "MemcheckError",
    "MemorySpec",
    "Model",
    "NotYetSimulated",
    "NotationError",
    "PortOp",
    "PortSpec",
    "Power",
    "PowerSpec",
    "ReplayError",
    "ResetSpec",
    "RtlSpec",
    "SimulationError",
    "TimingSpec",
    "Trace",
    "UnknownAlgorithm",
    "UsageError",
    "__version__",
    "address_order",
    "coverage",
    "expand",
    "get_algorithm",
    "idle",
    "load_contract",
    "parse_contract",
    "parse_march",
    "parse_universe",
    "plot_coverage",
    "read",
    "resolve_test",
    "timeline",
    "write",
    "write_export",
]
