"""What the simulator side cannot drive: contracts refused before anything is built.

The generated harness drives every key of docs/contract.md. What it refuses, with the cause named,
is timing it cannot place exactly: a clock with fewer than 4 timescale-precision units per period,
a sample point with no room to change the inputs before it, or clocks whose edges line up again only
after more than :data:`~memcheck.sim.checking.ticks.MAX_HYPER_TICKS` edges. Every job (check, March
run, replay) calls :func:`require_simulator_support` before building.
"""

from __future__ import annotations

from memcheck.contract import Contract
from memcheck.sim.checking.ticks import harness_timing


def simulator_support_problems(contract: Contract) -> list[str]:
    """One sentence per key of ``contract`` the simulator harness cannot honour yet (empty: none).

    Every key of docs/contract.md is honoured now; what remains refused is timing the harness cannot
    place exactly (see :func:`~memcheck.sim.checking.ticks.harness_timing`), checked by
    :func:`require_simulator_support`."""
    del contract
    return []


def require_simulator_support(contract: Contract) -> None:
    """Raise :class:`~memcheck.errors.NotYetSimulated` when the harness cannot drive ``contract``'s
    clocks and sample point exactly, before anything is built.

    Raises
    ------
    NotYetSimulated
        One paragraph: what cannot be placed, and what to change.
    """
    harness_timing(contract)
