"""Clock pins, read-data timing, and the tick timeline shared by the model and the harness.

A multi-clock trace is a sequence of *ticks*: the union of every clock's rising edges in time
order, where edges of different clocks at the same instant form one tick (they are simultaneous).
A single-clock contract has exactly one tick per clock cycle, as it always had. Times are exact
rationals (:class:`fractions.Fraction` ns, taken from the decimal the contract states), so the
order of edges never depends on floating-point rounding.
"""

from __future__ import annotations

import re
from collections.abc import Iterator, Mapping, Sequence
from dataclasses import dataclass
from fractions import Fraction
from typing import Any

from memcheck.contract._fields import did_you_mean, get_float, reject_unknown, table, where
from memcheck.errors import ContractError

DEFAULT_PERIOD = 10.0
DEFAULT_TIMESCALE = "1ns/1ps"
CLOCK_KEYS = ("name", "period", "phase")
TIMING_KEYS = ("sample", "timescale")

_UNITS_NS = {
    "s": Fraction(10**9),
    "ms": Fraction(10**6),
    "us": Fraction(10**3),
    "ns": Fraction(1),
    "ps": Fraction(1, 10**3),
    "fs": Fraction(1, 10**6),
}
_TIMESCALE = re.compile(r"^\s*(1|10|100)\s*(s|ms|us|ns|ps|fs)\s*/\s*(1|10|100)\s*(s|ms|us|ns|ps|fs)\s*$")


def exact_ns(value: float) -> Fraction:
    """A float read from TOML as the exact decimal it was written as (``3.3`` -> 33/10)."""
    return Fraction(repr(float(value)))


@dataclass(frozen=True)
class ClockSpec:
    """One clock pin: rising edges at ``phase + k * period`` ns, k = 0, 1, 2, ..."""

    name: str
    period: float = DEFAULT_PERIOD
    phase: float = 0.0

    @property
    def period_ns(self) -> Fraction:
        return exact_ns(self.period)

    @property
    def phase_ns(self) -> Fraction:
        return exact_ns(self.phase)


@dataclass(frozen=True)
class TimingSpec:
    """When read data is sampled, and the timescale of RTL files without a `timescale directive.

    ``sample`` is in ns after the rising edge that begins the cycle in which the read data is due;
    ``None`` samples just before that port clock's next rising edge (the default).
    """

    sample: float | None = None
    timescale: str = DEFAULT_TIMESCALE

    @property
    def precision_ns(self) -> Fraction:
        return timescale_ns(self.timescale)[1]


def timescale_ns(text: str) -> tuple[Fraction, Fraction]:
    """(unit, precision) of a timescale such as ``"1ns/1ps"``, in ns; ValueError if malformed."""
    m = _TIMESCALE.match(text)
    if not m:
        raise ValueError(text)
    unit = int(m.group(1)) * _UNITS_NS[m.group(2)]
    precision = int(m.group(3)) * _UNITS_NS[m.group(4)]
    if precision > unit:
        raise ValueError(text)
    return unit, precision


@dataclass(frozen=True)
class Tick:
    """One instant at which at least one clock has a rising edge."""

    index: int
    time: Fraction
    clocks: frozenset[str]


def ticks(clocks: Sequence[ClockSpec]) -> Iterator[Tick]:
    """Every rising edge of ``clocks``, merged in time order (endless). Clocks with the same name
    count once; edges at the same instant form one tick."""
    by_name = {c.name: c for c in clocks}
    if not by_name:
        return
    period = {n: c.period_ns for n, c in by_name.items()}
    upcoming = {n: c.phase_ns for n, c in by_name.items()}
    index = 0
    while True:
        now = min(upcoming.values())
        edging = frozenset(n for n, t in upcoming.items() if t == now)
        yield Tick(index, now, edging)
        for n in edging:
            upcoming[n] = now + period[n]
        index += 1


def timeline(clocks: Sequence[ClockSpec], *, count: int | None = None, until: Fraction | None = None) -> list[Tick]:
    """The first ``count`` ticks, or every tick at or before ``until`` ns (one of the two)."""
    if (count is None) == (until is None):
        raise ValueError("give exactly one of count and until")
    out: list[Tick] = []
    for t in ticks(clocks):
        if (count is not None and len(out) >= count) or (until is not None and t.time > until):
            break
        out.append(t)
    return out


# -- loading -----------------------------------------------------------------------------


def build_clocks(raw: Any, port_clocks: Sequence[str], source: str) -> tuple[ClockSpec, ...]:
    """The ``[[clock]]`` tables: each names a port clock once, with a period and phase."""
    if raw is None:
        return ()
    if not isinstance(raw, list) or not all(isinstance(c, dict) for c in raw):
        raise ContractError(f"{source}: 'clock' must be an array of tables written as [[clock]].")
    out: list[ClockSpec] = []
    for i, tbl in enumerate(raw):
        spec = _build_clock(tbl, i, port_clocks, source)
        if any(c.name == spec.name for c in out):
            raise ContractError(f"{source}: two [[clock]] tables name {spec.name!r}; name each clock once.")
        out.append(spec)
    return tuple(out)


def _build_clock(tbl: Mapping[str, Any], index: int, port_clocks: Sequence[str], source: str) -> ClockSpec:
    s = f"clock #{index + 1}"
    reject_unknown(tbl, CLOCK_KEYS, source, s)
    name = tbl.get("name")
    if not isinstance(name, str) or name not in port_clocks:
        raise ContractError(
            f"{source}: [{s}] name = {name!r} is not a clock any [[port]] uses."
            f"{did_you_mean(str(name), list(port_clocks))} Allowed: {', '.join(repr(c) for c in port_clocks)}."
        )
    s = f"clock {name!r}"
    period = get_float(tbl, "period", source, s, allowed="a number of ns > 0", default=DEFAULT_PERIOD)
    assert period is not None
    if period <= 0:
        raise ContractError(f"{source}: [{s}] period = {period}; allowed: a number of ns > 0.")
    phase = get_float(tbl, "phase", source, s, allowed=f"a number of ns, 0 <= phase < {period}", default=0.0)
    assert phase is not None
    if not 0 <= phase < period:
        raise ContractError(f"{source}: [{s}] phase = {phase}; allowed: a number of ns, 0 <= phase < {period}.")
    return ClockSpec(name, period, phase)


def build_timing(data: Mapping[str, Any], source: str) -> TimingSpec:
    tbl = table(data, "timing", source, required=False)
    if tbl is None:
        return TimingSpec()
    reject_unknown(tbl, TIMING_KEYS, source, "timing")
    scale = tbl.get("timescale", DEFAULT_TIMESCALE)
    allowed = 'a Verilog timescale such as "1ns/1ps": 1, 10 or 100 of s, ms, us, ns, ps or fs, unit/precision'
    try:
        if not isinstance(scale, str):
            raise ValueError(scale)
        timescale_ns(scale)
    except ValueError:
        raise ContractError(f"{source}: [timing] timescale = {scale!r}; allowed: {allowed}.") from None
    sample = get_float(tbl, "sample", source, "timing", allowed="a number of ns after the rising edge")
    return TimingSpec(sample=sample, timescale=scale)


def check_timing(timing: TimingSpec, clocks: Sequence[ClockSpec], reading_clocks: Sequence[str], source: str) -> None:
    """``sample`` inside every reading port's clock period; every period, phase and the sample point
    whole multiples of the timescale's precision (so the simulator has exactly those edges)."""
    prec = timing.precision_ns
    for c in clocks:
        for key, value in (("period", c.period), ("phase", c.phase)):
            if (exact_ns(value) / prec).denominator != 1:
                raise ContractError(
                    f"{source}: [clock {c.name!r}] {key} = {value} ns is not a whole number of the timescale's "
                    f"precision ({timing.timescale}); allowed: a multiple of {float(prec)} ns, or a finer "
                    "[timing] timescale."
                )
    if timing.sample is None:
        return
    for c in clocks:
        if c.name in reading_clocks and not 0 < timing.sample < c.period:
            raise ContractError(
                f"{source}: [timing] sample = {timing.sample} is not inside the clock period of {c.name!r} "
                f"({c.period} ns); allowed: a number of ns with 0 < sample < {c.period}."
            )
    if (exact_ns(timing.sample) / prec).denominator != 1:
        raise ContractError(
            f"{source}: {where('timing', 'sample')} = {timing.sample} ns is not a whole number of the timescale's "
            f"precision ({timing.timescale}); allowed: a multiple of {float(prec)} ns."
        )
