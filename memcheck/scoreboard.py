"""The scoreboard for users' cocotb tests with memcheck's failure table (also ``memcheck.sim.Scoreboard``).

::

    from memcheck.sim import Scoreboard

    @cocotb.test()
    async def traffic(dut):
        board = Scoreboard("rtl/buf/contract.toml", dut.u_buf).start()
        ...  # the design's own traffic; the first wrong read fails the test with the table

The monitor lives in the simulator layer (:mod:`memcheck.sim.plumbing.scoreboard`, the only
layer that imports cocotb) and the table in the report layer (:mod:`memcheck.report.text`); this
module joins the two, as the CLI does for its commands. Importing it imports cocotb.
"""

from __future__ import annotations

from memcheck.contract import Contract
from memcheck.records import CheckedTrace
from memcheck.report.text import DISCLAIMER, render_failure
from memcheck.sim.plumbing.scoreboard import Scoreboard as _MonitorOnly
from memcheck.sim.plumbing.scoreboard import ScoreboardMismatch


def render_window(contract: Contract, checked: CheckedTrace, start_text: str) -> str:
    """The last cycles as memcheck's failure table, the broken rule in words, and the disclaimer."""
    return f"{render_failure(contract, checked, start_text=start_text)}\n\n{DISCLAIMER}"


class Scoreboard(_MonitorOnly):
    __doc__ = _MonitorOnly.__doc__
    default_render = staticmethod(render_window)


__all__ = ["Scoreboard", "ScoreboardMismatch", "render_window"]
