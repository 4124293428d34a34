"""Check wrapper RTL against its contract under Icarus Verilog through cocotb.

Public API::

    from memcheck.sim import check_contract, replay_file, run_march, SimOptions
    result = check_contract("contract.toml", examples=200, seed=1)
    assert result.passed, result.summary()
    march = run_march("contract.toml", "March C-")   # one March test alone on the RTL
    board = Scoreboard("contract.toml", dut.u_buf).start()  # inside a user's own cocotb test

Layers (each imports only those below it):

* ``jobs/`` -- ``check_contract``, ``replay_file``, ``run_march``: thin jobs on ``session.py``, the one
  run pipeline (options, folders, build, launch, replay, waveform);
* ``checking/`` -- the work inside the simulator that needs no simulator: phases, fixed sequences,
  bulk examples, comparison with the model, shrinking, the March schedule and the March job;
* ``plumbing/`` -- build, pins, the generated harness and its bit layout, the simulator launch and
  its watchdog, the cocotb entry module: the only modules that import cocotb.

Results are records of :mod:`memcheck.records`; :mod:`memcheck.report` renders them. Attributes are
loaded on first use, so importing this package stays cheap and does not start cocotb's machinery
until a job runs.
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from memcheck.records import (
        CheckedTrace,
        CheckResult,
        CheckVerdict,
        CycleRow,
        Failure,
        MarchFailure,
        MarchRunResult,
        Observed,
        PhaseResult,
        ReplayResult,
        RunRecord,
    )
    from memcheck.scoreboard import Scoreboard, ScoreboardMismatch
    from memcheck.sim.jobs.check import check_contract, replay_file
    from memcheck.sim.jobs.march import run_march
    from memcheck.sim.options import SimOptions
    from memcheck.sim.session import Session

_EXPORTS = {
    "check_contract": "memcheck.sim.jobs.check",
    "replay_file": "memcheck.sim.jobs.check",
    "run_march": "memcheck.sim.jobs.march",
    "SimOptions": "memcheck.sim.options",
    "Session": "memcheck.sim.session",
    # Joins the monitor (sim/plumbing/scoreboard.py) with the report layer's failure table.
    "Scoreboard": "memcheck.scoreboard",
    "ScoreboardMismatch": "memcheck.scoreboard",
    "CheckResult": "memcheck.records",
    "CheckVerdict": "memcheck.records",
    "CheckedTrace": "memcheck.records",
    "CycleRow": "memcheck.records",
    "Failure": "memcheck.records",
    "MarchFailure": "memcheck.records",
    "MarchRunResult": "memcheck.records",
    "Observed": "memcheck.records",
    "PhaseResult": "memcheck.records",
    "ReplayResult": "memcheck.records",
    "RunRecord": "memcheck.records",
}
#: Names of earlier releases: the options of check and march run are one type now.
_ALIASES = {"CheckOptions": "SimOptions", "MarchRunOptions": "SimOptions"}

__all__ = [
    "CheckResult",
    "CheckVerdict",
    "CheckedTrace",
    "CycleRow",
    "Failure",
    "MarchFailure",
    "MarchRunResult",
    "Observed",
    "PhaseResult",
    "ReplayResult",
    "RunRecord",
    "Scoreboard",
    "ScoreboardMismatch",
    "Session",
    "SimOptions",
    "check_contract",
    "replay_file",
    "run_march",
]


def __getattr__(name: str) -> Any:
    name = _ALIASES.get(name, name)
    module = _EXPORTS.get(name)
    if module is None:
        raise AttributeError(f"module 'memcheck.sim' has no attribute {name!r}")
    import importlib

    return getattr(importlib.import_module(module), name)
