"""memcheck: prove SRAM wrapper RTL against a memory contract, generate March tests, and measure
which manufacturing faults they detect.

This module is the public API; everything else is internal. Importing it never imports cocotb or a
simulator: the simulator side lives in :mod:`memcheck.sim`.
"""

from memcheck.contract import (
    Contract,
    MemorySpec,
    PortSpec,
    ResetSpec,
    RtlSpec,
    load_contract,
    parse_contract,
)
from memcheck.errors import (
    ContractError,
    FaultModelError,
    InvalidOperation,
    MemcheckError,
    NotationError,
    ReplayError,
    SimulationError,
    UnknownAlgorithm,
)
from memcheck.ops import IDLE, UNKNOWN, Cycle, Expected, PortOp, Trace, idle, read, write

__version__ = "0.1.0"

__all__ = [
    "IDLE",
    "UNKNOWN",
    "Contract",
    "ContractError",
    "Cycle",
    "Expected",
    "FaultModelError",
    "InvalidOperation",
    "MemcheckError",
    "MemorySpec",
    "NotationError",
    "PortOp",
    "PortSpec",
    "ReplayError",
    "ResetSpec",
    "RtlSpec",
    "SimulationError",
    "Trace",
    "UnknownAlgorithm",
    "__version__",
    "idle",
    "load_contract",
    "parse_contract",
    "read",
    "write",
]
