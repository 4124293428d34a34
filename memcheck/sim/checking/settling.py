"""The timing hint of a failing read: did the read data become right later than the sample point?

When a failure is replayed, the harness also records, for every sampled row, the read data as it
last changed after the sample point (before the next one, or within one clock period after the last
edge) and when (:class:`memcheck.records.Settled`). A mismatch whose data settles to the expected
value, or whose X bits clear, shortly after the sample point is most likely a timing problem (a
clock-to-output delay longer than the sample point allows) rather than a logic bug. A change exactly
at one of the port's own rising edges is a synchronous change (for example the next read's data,
or a read latency one cycle longer than promised), not settling, so it gives no hint.
"""

from __future__ import annotations

from fractions import Fraction

from memcheck.contract import Contract
from memcheck.records import CheckedTrace, CycleRow
from memcheck.sim.checking.ticks import HarnessTiming, harness_timing


def timing_hint(contract: Contract, checked: CheckedTrace) -> str:
    """One sentence for the first mismatching read whose data settled after the sample point, or ""."""
    timing = harness_timing(contract)
    for row in checked.rows:
        if row.ok or not row.settled:
            continue
        for i, d in enumerate(row.diff):
            hint = _port_hint(contract, row, i, d, timing)
            if hint:
                return hint
        return ""
    return ""


def _port_hint(contract: Contract, row: CycleRow, i: int, diff: int, timing: HarnessTiming) -> str:
    s = row.settled[i] if i < len(row.settled) else None
    obs = row.observed[i]
    if not diff or s is None or obs is None or s.after_ns <= 0:
        return ""
    group = next(g for g in timing.groups if i in g.ports)
    after = timing.units(Fraction(repr(s.after_ns)))
    if (group.sample + after) % group.period == 0:
        return ""  # changed exactly at an edge of its own clock: synchronous, not settling
    port = contract.ports[i].name
    advice = "check [timing] sample or the clock period"
    exp = row.expected[i]
    if exp.mismatch(s.value, s.defined) == 0:
        return (
            f"port {port}, cycle {row.cycle}: read data settled {s.after_ns:g} ns after the sample point "
            f"to the expected value: {advice}."
        )
    x_bits = diff & ~obs.defined
    if x_bits and x_bits & s.defined == x_bits:
        return (
            f"port {port}, cycle {row.cycle}: an X on the read data cleared {s.after_ns:g} ns after the sample "
            f"point: {advice}."
        )
    return ""
