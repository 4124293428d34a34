"""Traces on the tick timeline of a contract with several clocks, and the harness's exact timing.

The tick timeline (:func:`memcheck.contract.timeline`) repeats every *hyperperiod* (the least common
multiple of the port clocks' periods): tick ``k + n`` has the same clocks and the same time offsets
as tick ``k`` whenever ``n`` is a whole number of :func:`hyper_ticks`. Every segment the simulator
runs starts at a multiple of it, so a trace laid from tick 0 means the same thing wherever it runs,
and the model of an example starts at tick 0 too.

* :func:`lay` puts cycles written as if every port stepped together (the fixed sequences: fill,
  flush, smoke, sweeps) onto the timeline: each cycle's operations go to the next edge of their
  port, and a cycle that issues nothing lasts until every port had an edge (so ``read_latency``
  quiet cycles still drain every pipeline).
* :func:`fit` makes any list of ticks valid again after shrinking removed some (an operation at a
  tick without its port's edge becomes ``NO_EDGE``, a missing one at an edge becomes quiet).

For a single clock (or identical clocks) every function here is the identity.

:class:`HarnessTiming` holds the harness's delays in whole units of the contract's timescale
precision (so every edge is exact): per group of clocks with the same edges, its period, the first
edge, when inputs change after an edge, and when read data is sampled.
"""

from __future__ import annotations

import math
import re
from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction

import numpy as np

from memcheck.contract import Contract, timeline
from memcheck.errors import NotYetSimulated
from memcheck.model_fast import IDLE, READ, Columns
from memcheck.ops import NO_EDGE, Cycle, OpKind, PortOp

#: Longest repeating tick pattern the simulator side accepts (ticks per hyperperiod).
MAX_HYPER_TICKS = 1024
#: Inputs change this long after their clock's rising edge, and read data is sampled this long
#: before the next one by default (both shorter for clocks faster than 4 ns).
INPUT_DELAY_NS = Fraction(1)


def _lcm(a: Fraction, b: Fraction) -> Fraction:
    return Fraction(math.lcm(a.numerator, b.numerator), math.gcd(a.denominator, b.denominator))


def hyperperiod_ns(contract: Contract) -> Fraction:
    """The least common multiple of the port clocks' periods (ns)."""
    out = Fraction(0)
    for c in contract.port_clocks:
        out = c.period_ns if out == 0 else _lcm(out, c.period_ns)
    return out


def hyper_ticks(contract: Contract) -> int:
    """Ticks per hyperperiod (1 for one clock); refuses a pattern longer than :data:`MAX_HYPER_TICKS`.

    Raises
    ------
    NotYetSimulated
        The clocks' edges repeat only after more ticks than the simulator side lays out.
    """
    if contract.lockstep:
        return 1
    h = hyperperiod_ns(contract)
    groups = {(c.period_ns, c.phase_ns) for c in contract.port_clocks}
    estimate = sum(h / p for p, _ in groups)
    if estimate > MAX_HYPER_TICKS:
        listed = ", ".join(f"{c.name} {c.period:g} ns" for c in contract.port_clocks)
        raise NotYetSimulated(
            f"{_where(contract)}the port clocks ({listed}) line up again only every {float(h):g} ns, "
            f"about {int(estimate)} edges; the simulator side lays traces on a pattern of at most "
            f"{MAX_HYPER_TICKS} edges: give the clocks periods with a smaller common multiple "
            "(for example 10 and 15 ns rather than 10 and 10.1 ns)."
        )
    t0 = min(c.phase_ns for c in contract.port_clocks)
    return len(timeline(contract.port_clocks, until=t0 + h)) - 1


def _where(contract: Contract) -> str:
    return f"{contract.path}: " if contract.path is not None else ""


def edge_pattern(contract: Contract) -> np.ndarray:
    """(hyper_ticks, ports) bool: does each port's clock have a rising edge at each tick of the pattern?"""
    n = hyper_ticks(contract)
    if contract.lockstep:
        return np.ones((1, len(contract.ports)), dtype=bool)
    ticks = timeline(contract.port_clocks, count=n)
    return np.array([[p.clock in t.clocks for p in contract.ports] for t in ticks], dtype=bool)


def edges(contract: Contract, n: int) -> np.ndarray:
    """(n, ports) bool: the edge pattern from tick 0 for ``n`` ticks."""
    pat = edge_pattern(contract)
    reps = -(-n // len(pat)) if n else 0
    return np.tile(pat, (reps, 1))[:n]


def quiet_ops(contract: Contract) -> tuple[PortOp, ...]:
    """Per port, the operation that issues nothing (a read of address 0 for a port without enable)."""
    return tuple(PortOp(OpKind.IDLE) if p.can_idle else PortOp(OpKind.READ, 0) for p in contract.ports)


def lay(contract: Contract, cycles: Sequence[Cycle], *, pad: bool = True) -> list[Cycle]:
    """Cycles written for ports stepping together, laid on the tick timeline from tick 0 (see the
    module docstring); with ``pad``, quiet ticks follow up to a whole number of hyperperiods."""
    if contract.lockstep:
        return list(cycles)
    pat = edge_pattern(contract).tolist()
    quiet = quiet_ops(contract)
    ports = range(len(quiet))
    out: list[Cycle] = []
    for c in cycles:
        need = {i for i in ports if c[i] != quiet[i]} or set(ports)
        while need:
            e = pat[len(out) % len(pat)]
            out.append(tuple(NO_EDGE if not e[i] else c[i] if i in need else quiet[i] for i in ports))
            need -= {i for i in ports if e[i]}
    if pad:
        out += padding(contract, len(out))
    return out


def padding(contract: Contract, n: int) -> list[Cycle]:
    """Quiet ticks that bring a trace of ``n`` ticks to a whole number of hyperperiods."""
    h = hyper_ticks(contract)
    if h == 1:
        return []
    pat = edge_pattern(contract).tolist()
    quiet = quiet_ops(contract)
    return [tuple(q if e else NO_EDGE for q, e in zip(quiet, pat[k % h], strict=True)) for k in range(n, n + (-n) % h)]


def fit(contract: Contract, cycles: Sequence[Cycle]) -> list[Cycle]:
    """``cycles`` made valid on the timeline from tick 0 (see the module docstring)."""
    if contract.lockstep:
        return list(cycles)
    pat = edge_pattern(contract).tolist()
    quiet = quiet_ops(contract)
    out: list[Cycle] = []
    for k, c in enumerate(cycles):
        e = pat[k % len(pat)]
        out.append(
            tuple((quiet[i] if op.kind == OpKind.NO_EDGE else op) if e[i] else NO_EDGE for i, op in enumerate(c))
        )
    return out


def fit_columns(contract: Contract, cols: Columns) -> Columns:
    """:func:`fit` for columns (in place where possible; returns the same object)."""
    if contract.lockstep or not len(cols):
        return cols
    mask = edges(contract, len(cols))
    kind = cols.kind
    for i, port in enumerate(contract.ports):
        lost = mask[:, i] & (kind[:, i] == OpKind.NO_EDGE)
        kind[lost, i] = IDLE if port.can_idle else READ
        cols.address[lost, i] = 0
    off = ~mask
    kind[off] = OpKind.NO_EDGE
    cols.address[off] = 0
    cols.data[off] = 0
    cols.lanes_given[off] = False
    return cols


def lay_columns(contract: Contract, cols: Columns) -> Columns:
    """:func:`lay` for columns (through cycles: only for several clocks, where the model is slow anyway)."""
    if contract.lockstep:
        return cols
    return Columns.from_cycles(contract, lay(contract, cols.to_cycles()))


# -- the harness's timing ---------------------------------------------------------------------

_SCALE = re.compile(r"/\s*(\d+)\s*(s|ms|us|ns|ps|fs)\s*$")


@dataclass(frozen=True)
class ClockGroup:
    """Clock pins with the same edges, driven by one harness clock, and the ports that step on them.

    Times are whole units of the harness timescale: ``first`` is the delay from the start of a batch
    to the virtual edge before the group's first edge; inputs change ``apply`` after each edge, read
    data is sampled ``sample`` after it, and the clock falls ``half`` after it.
    """

    clocks: tuple[str, ...]
    ports: tuple[int, ...]
    period: int
    phase: int
    first: int
    apply: int
    sample: int
    half: int


@dataclass(frozen=True)
class HarnessTiming:
    """Everything time-related the generated harness needs, exact in units of ``unit_ns``."""

    unit_ns: Fraction
    timescale: str  # the harness's own `timescale directive, "<precision>/<precision>"
    groups: tuple[ClockGroup, ...]
    lead: int  # units from a batch's start to its first tick's pattern time origin
    tick_times: tuple[int, ...]  # one hyperperiod of tick times, units, relative to the pattern origin
    hyper: int  # units per hyperperiod (0 for one clock)

    @property
    def lockstep(self) -> bool:
        return len(self.groups) == 1

    def units(self, ns: Fraction) -> int:
        return int(ns / self.unit_ns)

    def tick_apply_delays(self, first: int, count: int) -> list[int]:
        """Delays (units) between the moments the tick-sampled pins (reset, power) of ticks
        ``first .. first + count - 1`` change, from the start of the batch (``first`` a multiple of the
        pattern): the pins of tick k change shortly after tick k - 1."""
        n = len(self.tick_times)
        gap = self.units(INPUT_DELAY_NS)
        out: list[int] = []
        prev_change = 0
        for j in range(count):
            k = first + j
            t = self.lead + (k // n - first // n) * self.hyper + self.tick_times[k % n]
            if j == 0:
                before = t - max(g.period for g in self.groups)
            else:
                kk = k - 1
                before = self.lead + (kk // n - first // n) * self.hyper + self.tick_times[kk % n]
            change = before + max(1, min(gap, (t - before) // 2))
            out.append(change - prev_change)
            prev_change = change
        return out


def harness_timing(contract: Contract) -> HarnessTiming:
    """The harness's delays for ``contract`` (see :class:`ClockGroup`).

    Raises
    ------
    NotYetSimulated
        A clock too fast for the timescale precision (fewer than 4 units per period), or a sample point
        that leaves no room to change the inputs before it.
    """
    m = _SCALE.search(contract.timing.timescale)
    assert m is not None
    unit = contract.timing.precision_ns
    scale = f"{m.group(1)}{m.group(2)}"
    hyper_ticks(contract)  # refuses patterns too long
    gap_ns = INPUT_DELAY_NS
    clocks = contract.port_clocks
    periods = [int(c.period_ns / unit) for c in clocks]
    lead = max(periods)
    by_edges: dict[tuple[Fraction, Fraction], list[str]] = {}
    for c in clocks:
        by_edges.setdefault((c.period_ns, c.phase_ns), []).append(c.name)
    groups = []
    for (period_ns, phase_ns), names in by_edges.items():
        period = int(period_ns / unit)
        phase = int(phase_ns / unit)
        if period < 4:
            raise NotYetSimulated(
                f"{_where(contract)}clock {names[0]!r} has a period of {float(period_ns):g} ns, fewer than 4 units "
                f"of the timescale precision ({contract.timing.timescale}); the harness needs room to change "
                "inputs and sample read data inside a cycle: use a finer [timing] timescale."
            )
        gap = max(1, min(int(gap_ns / unit), period // 4))
        sample = period - gap if contract.timing.sample is None else int(Fraction(repr(contract.timing.sample)) / unit)
        if sample < 2:
            raise NotYetSimulated(
                f"{_where(contract)}[timing] sample = {contract.timing.sample} ns leaves no room to change the inputs "
                f"after the edge and before the sample point at the timescale precision "
                f"({contract.timing.timescale}); sample later or use a finer timescale."
            )
        apply = max(1, min(gap, sample // 2))
        ports = tuple(i for i, p in enumerate(contract.ports) if p.clock in names)
        groups.append(ClockGroup(tuple(names), ports, period, phase, lead + phase - period, apply, sample, period // 2))
    h = hyper_ticks(contract)
    if contract.lockstep:
        times: tuple[int, ...] = (groups[0].phase,)
        hyper = groups[0].period
    else:
        times = tuple(int(t.time / unit) for t in timeline(clocks, count=h))
        hyper = int(hyperperiod_ns(contract) / unit)
    return HarnessTiming(unit, f"{scale}/{scale}", tuple(groups), lead, times, hyper)
