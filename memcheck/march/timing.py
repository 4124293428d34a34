"""Test time of a March test on one memory: operations, clock cycles and wall time at a clock.

A March test of length ``k`` (operations per word) on ``n`` words over ``B`` data backgrounds is
``k * n * B`` operations. With one operation per clock cycle (common practice for a BIST engine
that issues a read or write every cycle) and each delay element a pause of ``pause_ms``
milliseconds, the test takes ``k * n * B`` cycles plus ``D * B`` pauses (``D`` delay elements per
pass), i.e. ``k * n * B / f + D * B * pause`` seconds at clock ``f``; a pause is ``ceil(pause * f)``
quiet cycles, so the cycle count is ``k * n * B + D * B * ceil(pause * f)``. This is the time the test
takes on the memory, not the time memcheck needs to compute anything (that is labelled "computed in").
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from memcheck.march.notation import MarchTest

#: Clock of the test-time figure when none is given (MHz).
DEFAULT_CLOCK_MHZ = 100.0
#: Length of one delay element when none is given (ms); a common retention pause, value written from memory.
DEFAULT_PAUSE_MS = 100.0


@dataclass(frozen=True)
class MarchTime:
    """Operations, cycles and seconds of one test on one memory."""

    length: int
    words: int
    backgrounds: int
    delays: int
    clock_mhz: float = DEFAULT_CLOCK_MHZ
    pause_ms: float = DEFAULT_PAUSE_MS

    @property
    def operations(self) -> int:
        return self.length * self.words * self.backgrounds

    @property
    def operations_per_background(self) -> int:
        return self.length * self.words

    @property
    def pauses(self) -> int:
        return self.delays * self.backgrounds

    @property
    def cycles_per_pause(self) -> int:
        """Quiet cycles of one delay element at the clock (rounded up)."""
        return math.ceil(round(self.pause_ms * 1e3 * self.clock_mhz, 6))

    @property
    def cycles(self) -> int:
        """Clock cycles of the whole test: one per operation plus every pause's quiet cycles."""
        return self.operations + self.pauses * self.cycles_per_pause

    @property
    def seconds(self) -> float:
        return self.operations / (self.clock_mhz * 1e6) + self.pauses * self.pause_ms / 1e3

    def text(self) -> str:
        """e.g. ``369,098,752 operations (6 backgrounds x 61,516,800): test time 3.69 s at 100 MHz``; with
        delay elements also the cycles, pauses included."""
        per = f" ({self.backgrounds} backgrounds x {self.operations_per_background:,})" if self.backgrounds > 1 else ""
        pause = f" + {self.pauses} pause(s) of {self.pause_ms:g} ms = {self.cycles:,} cycles" if self.pauses else ""
        when = f"test time {format_seconds(self.seconds)} at {self.clock_mhz:g} MHz"
        return f"{self.operations:,} operations{per}{pause}: {when}"

    def to_json(self) -> dict[str, float | int]:
        """The figures as numbers (export headers, JSON reports)."""
        return {
            "operations": self.operations,
            "operations_per_background": self.operations_per_background,
            "pauses": self.pauses,
            "pause_ms": self.pause_ms,
            "cycles": self.cycles,
            "clock_mhz": self.clock_mhz,
            "seconds": self.seconds,
        }


def march_time(
    test: MarchTest,
    words: int,
    backgrounds: int = 1,
    clock_mhz: float = DEFAULT_CLOCK_MHZ,
    pause_ms: float = DEFAULT_PAUSE_MS,
) -> MarchTime:
    """The :class:`MarchTime` of ``test`` on ``words`` words over ``backgrounds`` data backgrounds."""
    return MarchTime(test.length, words, backgrounds, test.delays, clock_mhz, pause_ms)


def format_seconds(s: float) -> str:
    """Seconds in the unit a reader expects: ns, µs, ms, s, min or h."""
    for unit, scale in (("h", 3600.0), ("min", 60.0), ("s", 1.0), ("ms", 1e-3), ("µs", 1e-6)):
        if s >= scale:
            return f"{s / scale:.3g} {unit}"
    return f"{s / 1e-9:.3g} ns"
