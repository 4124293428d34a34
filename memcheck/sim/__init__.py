"""Check wrapper RTL against its contract under Icarus Verilog through cocotb.

The only package of memcheck that uses cocotb. Public API::

    from memcheck.sim import check_contract, replay_file, run_march, CheckOptions
    result = check_contract("contract.toml", examples=200, seed=1)
    assert result.passed, result.summary()
    march = run_march("contract.toml", "March C-")   # one March test alone on the RTL

Attributes are loaded on first use, so importing this package stays cheap and does not start
cocotb's machinery until a check runs.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from memcheck.sim.api import CheckOptions, CheckResult, ReplayResult, check_contract, replay_file
    from memcheck.sim.checker import CheckedTrace, CycleRow
    from memcheck.sim.engine import Engine, RunOptions
    from memcheck.sim.layout import Observed
    from memcheck.sim.march_run import MarchFailure, MarchRunOptions, MarchRunResult, run_march
    from memcheck.sim.result import Failure, PhaseResult

_EXPORTS = {
    "CheckOptions": "memcheck.sim.api",
    "CheckResult": "memcheck.sim.api",
    "ReplayResult": "memcheck.sim.api",
    "check_contract": "memcheck.sim.api",
    "replay_file": "memcheck.sim.api",
    "CheckedTrace": "memcheck.sim.checker",
    "CycleRow": "memcheck.sim.checker",
    "Engine": "memcheck.sim.engine",
    "RunOptions": "memcheck.sim.engine",
    "Observed": "memcheck.sim.layout",
    "MarchFailure": "memcheck.sim.march_run",
    "MarchRunOptions": "memcheck.sim.march_run",
    "MarchRunResult": "memcheck.sim.march_run",
    "run_march": "memcheck.sim.march_run",
    "Failure": "memcheck.sim.result",
    "PhaseResult": "memcheck.sim.result",
}

__all__ = [
    "CheckOptions",
    "CheckResult",
    "CheckedTrace",
    "CycleRow",
    "Engine",
    "Failure",
    "MarchFailure",
    "MarchRunOptions",
    "MarchRunResult",
    "Observed",
    "PhaseResult",
    "ReplayResult",
    "RunOptions",
    "check_contract",
    "replay_file",
    "run_march",
]


def __getattr__(name: str) -> Any:
    module = _EXPORTS.get(name)
    if module is None:
        raise AttributeError(f"module 'memcheck.sim' has no attribute {name!r}")
    import importlib

    return getattr(importlib.import_module(module), name)
