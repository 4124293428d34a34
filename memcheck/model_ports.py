"""Per-port state of the reference model across ticks: read pipelines, power history, and the
cross-clock collision window. Used by :mod:`memcheck.model` only.

Power rules (docs/contract.md, "Power"), for a port whose cycle runs from its edge e' to its edge e:

* at a tick that samples sleep or shutdown asserted, every port's pending reads and held read data
  are lost, and its next ``wake_cycles`` own edges that sample both pins deasserted make no access
  and show nothing promised; shutdown also makes every stored bit unknown;
* effect "edge": when e' sampled a power pin asserted and every other tick inside the cycle did
  too, the port shows ``sleep_read_data``; when only some did, nothing is promised;
* effect "immediate": the same, except that the cycle must also end asleep to show
  ``sleep_read_data``, and a cycle in which the pins change shows nothing promised.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction

from memcheck.contract import Contract, PowerSpec
from memcheck.errors import InvalidOperation
from memcheck.ops import UNKNOWN, Expected, Power

# Pipeline entry kinds: what a read-data register shows when its cycle comes due.
RESULT = 0  # a read result (value, known)
NONE = 1  # no read issued: held or unknown per idle_read_data
HOLD = 2  # read_during_write = "keep": hold the previous result whatever idle_read_data says


@dataclass(frozen=True, slots=True)
class Entry:
    """One pipeline entry; a read result remembers when (ns) and which word it read, so a write on
    another clock inside the collision window can still blur it before it is shown."""

    kind: int
    value: int = 0
    known: int = 0
    time: Fraction | None = None
    word: int = -1


NO_READ = Entry(NONE)
HOLDING = Entry(HOLD)
UNKNOWN_RESULT = Entry(RESULT, 0, 0)


@dataclass(slots=True)
class PortState:
    """Read pipeline, held data and power history of one port."""

    pipe: list[Entry] = field(default_factory=list)
    last: Expected = UNKNOWN  # latest read result (for idle_read_data = "keep")
    shown: Expected = UNKNOWN  # what the port showed at its previous edge (sleep_read_data = "keep")
    wake_left: int = 0  # own edges still to pass before accesses count again
    asleep_at_prev_edge: bool = False  # did the edge that began this port's cycle sample a pin asserted?
    inner_any: bool = False  # did any other tick inside this cycle sample a pin asserted?
    inner_all: bool = True  # did every other tick inside this cycle?
    prev_edge: Fraction | None = None  # time of the edge that began this port's cycle

    def restart(self, latency: int) -> None:
        """After reset or forget: nothing pending, nothing held, no power history."""
        self.pipe = [UNKNOWN_RESULT] * latency
        self.last = UNKNOWN
        self.shown = UNKNOWN
        self.wake_left = 0
        self.asleep_at_prev_edge = False
        self.inner_any = False
        self.inner_all = True

    def advance(self, entry: Entry) -> Entry:
        """Push this edge's result, pop the one due now."""
        due = self.pipe.pop(0)
        self.pipe.append(entry)
        return due

    def after_tick(self, edge: bool, power: Power, wake: int, latency: int, now: Fraction) -> None:
        asleep = power != Power.ON
        if asleep:
            self.pipe = [UNKNOWN_RESULT] * latency
            self.last = UNKNOWN
            self.wake_left = wake
        elif edge and self.wake_left:
            self.wake_left -= 1
        if edge:
            self.asleep_at_prev_edge = asleep
            self.inner_any = False
            self.inner_all = True
            self.prev_edge = now
        else:
            self.inner_any |= asleep
            self.inner_all &= asleep


def validate_power(spec: PowerSpec | None, power: Power) -> None:
    if power == Power.ON:
        return
    pin = None if spec is None else (spec.sleep if power == Power.SLEEP else spec.shutdown)
    if pin is None:
        raise InvalidOperation(
            f"power state {power.name.lower()} needs a [power] {power.name.lower()} pin, which the contract lacks"
        )


def shown_while_powered_down(contract: Contract, ps: PortState, power: Power) -> Expected | None:
    """What a port shows at its edge because of the power pins, or None when the pipeline decides.

    Called after the port's pipeline advanced but before :meth:`PortState.after_tick`.
    """
    spec = contract.power
    if spec is None:
        return None
    asleep = power != Power.ON
    if not asleep and ps.wake_left:
        return UNKNOWN  # a wake-up edge: nothing checked
    prev = ps.asleep_at_prev_edge
    if spec.effect == "immediate":
        if prev and ps.inner_all and asleep:
            return _sleep_data(contract, ps)
        return UNKNOWN if prev or ps.inner_any or asleep else None
    if prev and ps.inner_all:
        return _sleep_data(contract, ps)
    return UNKNOWN if prev or ps.inner_any else None


def _sleep_data(contract: Contract, ps: PortState) -> Expected:
    assert contract.power is not None
    rule = contract.power.sleep_read_data
    if rule == "zero":
        return Expected(0, contract.memory.word_mask)
    return ps.shown if rule == "keep" else UNKNOWN


@dataclass(frozen=True, slots=True)
class _Write:
    time: Fraction
    port: int
    word: int
    bits: int


@dataclass
class Window:
    """Recent writes, for the rules that look across clocks: the collision window (accesses to one
    word from ports on different clocks less than ``width`` ns apart collide) and a combinational
    read during which a port on another clock writes the word it reads."""

    width: Fraction
    horizon: Fraction  # the longest port clock period: how far back any rule looks
    clock_of: tuple[str, ...]  # per port
    recent: list[_Write] = field(default_factory=list)

    def clear(self) -> None:
        self.recent = []

    def record(self, writes: dict[int, list[tuple[int, int, int]]], now: Fraction) -> None:
        self.recent = [w for w in self.recent if now - w.time <= self.horizon]
        self.recent += [_Write(now, i, word, bits) for word, ws in writes.items() for i, _, bits in ws]

    def _near(self, w: _Write, port: int, now: Fraction) -> bool:
        return self.clock_of[w.port] != self.clock_of[port] and now - w.time < self.width

    def write_blur(self, word: int, ws: list[tuple[int, int, int]], now: Fraction) -> int:
        """Bits of ``word`` made unknown because an earlier write on another clock is inside the window."""
        blur = 0
        for w in self.recent:
            for i, _, bits in ws:
                if w.word == word and self._near(w, i, now):
                    blur |= w.bits | bits
        return blur

    def read_blur(self, port: int, word: int, now: Fraction, cycle_start: Fraction | None, latency: int) -> int:
        """Bits of a read of ``word`` made unknown by earlier writes on other clocks: inside the
        collision window, or (latency 0) inside the read's own cycle."""
        blur = 0
        for w in self.recent:
            if w.word != word or self.clock_of[w.port] == self.clock_of[port]:
                continue
            inside = latency == 0 and (cycle_start is None or w.time > cycle_start)
            if inside or now - w.time < self.width:
                blur |= w.bits
        return blur

    def blur_pending(
        self, ports: list[PortState], writes: dict[int, list[tuple[int, int, int]]], now: Fraction
    ) -> None:
        """A write now blurs reads on other clocks made less than the window earlier, still pending."""
        if not self.width or not writes:
            return
        for p, ps in enumerate(ports):
            for k, e in enumerate(ps.pipe):
                if e.kind != RESULT or e.time is None or e.word not in writes:
                    continue
                blur = 0
                for i, _, bits in writes[e.word]:
                    if self.clock_of[i] != self.clock_of[p] and now - e.time < self.width:
                        blur |= bits
                if blur:
                    ps.pipe[k] = Entry(RESULT, e.value & ~blur, e.known & ~blur, e.time, e.word)
