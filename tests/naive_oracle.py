"""A deliberately naive second model of the contract semantics, written separately from
memcheck.model to cross-check it.

It differs in structure on purpose: contents are a dict of per-bit lists (0, 1 or None for
unknown), and read data is derived from the *history* of every tick (which ports had an edge, the
power state, each port's operation and what it read or wrote), looking back over that history
rather than keeping pipelines, flags or counters. One branch per rule of the contract semantics.
Tick times come from a brute-force edge list (every k * period + phase below a horizon, sorted),
not from the library's timeline.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction

from memcheck.contract import Contract
from memcheck.ops import Expected, OpKind, PortOp, Power

Bits = list[int | None]
_Write = tuple[int, int, Bits, list[bool]]  # port index, address, data bits, bit enables


def _ns(x: float) -> Fraction:
    return Fraction(str(x))


def brute_force_ticks(contract: Contract, count: int) -> list[tuple[Fraction, set[str]]]:
    """The first ``count`` instants at which some port clock rises, with the clocks rising then."""
    clocks = {p.clock: contract.clock_spec(p.clock) for p in contract.ports}
    fastest = min(_ns(c.period) for c in clocks.values())
    horizon = max(_ns(c.phase) for c in clocks.values()) + fastest * (count + 1)
    edges: dict[Fraction, set[str]] = {}
    for name, c in clocks.items():
        k = 0
        while _ns(c.phase) + k * _ns(c.period) <= horizon:
            edges.setdefault(_ns(c.phase) + k * _ns(c.period), set()).add(name)
            k += 1
    return sorted(edges.items())[:count]


@dataclass
class _Tick:
    time: Fraction
    edge: list[bool]
    power: Power
    ops: list[PortOp]
    # (port, word, bits list of the written value, mask list) of the writes that took effect
    writes: list[tuple[int, int, Bits, list[bool]]] = field(default_factory=list)
    # per port: ("none" | "hold" | "result", bits or None, read word or None) for an access made
    results: list[tuple[str, Bits | None, int | None]] = field(default_factory=list)
    shown: list[Expected] = field(default_factory=list)
    override: list[bool] = field(default_factory=list)  # shown decided by power, not by a read


class NaiveOracle:
    def __init__(self, contract: Contract) -> None:
        self.c = contract
        self.m = contract.memory
        self.mem: dict[int, Bits] = {}
        self.log: list[_Tick] = []
        self.start = 0  # ticks before this index are forgotten (reset or forget)
        self.times = brute_force_ticks(contract, 64)
        self.fill(known_zero=(contract.reset is None and self.m.initial == "zero"))

    # -- state --------------------------------------------------------------------------

    def fill(self, known_zero: bool) -> None:
        for a in range(self.m.words):
            self.mem[a] = [0] * self.m.width if known_zero else [None] * self.m.width

    def reset(self) -> None:
        self.fill(known_zero=self.m.initial == "zero")
        self.start = len(self.log)

    def forget(self) -> None:
        self.fill(known_zero=False)
        self.start = len(self.log)

    def bits_of(self, value: int) -> Bits:
        return [(value >> b) & 1 for b in range(self.m.width)]

    def lane_mask_bits(self, lanes: int | None) -> list[bool]:
        w = self.m.width
        if lanes is None:
            return [True] * w
        if self.m.bit_mask:
            return [bool(lanes >> b & 1) for b in range(w)]
        if self.m.lane_map is not None:
            owner = [lane for lane, size in enumerate(self.m.lane_map) for _ in range(size)]
            return [bool(lanes >> owner[b] & 1) for b in range(w)]
        if self.m.lane_width:
            return [bool(lanes >> (b // self.m.lane_width) & 1) for b in range(w)]
        return [bool(lanes & 1)] * w

    def word(self, address: int) -> int | None:
        if self.m.out_of_range == "wrap":
            return address % self.m.words
        return address if address < self.m.words else None

    def clock(self, port: int) -> str:
        return self.c.ports[port].clock

    # -- history questions ----------------------------------------------------------------

    def own_edges(self, port: int, upto: int) -> list[int]:
        """Tick indices (all of history) at which ``port`` had an edge, up to and including ``upto``."""
        return [k for k in range(upto + 1) if self.log[k].edge[port]]

    def asserted(self, k: int) -> bool:
        return k >= self.start and self.log[k].power != Power.ON

    def is_wake_edge(self, port: int, k: int) -> bool:
        if self.c.power is None or self.asserted(k):
            return False
        last_sleep = max((j for j in range(self.start, k) if self.asserted(j)), default=None)
        if last_sleep is None:
            return False
        on_edges = [j for j in range(last_sleep + 1, k + 1) if self.log[j].edge[port]]
        return len(on_edges) <= self.c.power.wake_cycles

    def accesses(self, port: int, k: int) -> bool:
        return self.log[k].edge[port] and not self.asserted(k) and not self.is_wake_edge(port, k)

    def power_view(self, port: int, k: int) -> str:
        """ "normal", "sleep" (show sleep_read_data) or "unknown" for port's edge at tick k."""
        pw = self.c.power
        if pw is None:
            return "normal"
        if self.is_wake_edge(port, k):
            return "unknown"
        before = [j for j in self.own_edges(port, k - 1) if j >= self.start]
        prev = before[-1] if before else None
        began_asleep = prev is not None and self.asserted(prev)
        inside = range((prev + 1) if prev is not None else self.start, k)
        some_inside = any(self.asserted(j) for j in inside)
        all_inside = all(self.asserted(j) for j in inside)
        ends_asleep = self.asserted(k)
        if pw.effect == "immediate":
            if began_asleep and all_inside and ends_asleep:
                return "sleep"
            return "unknown" if (began_asleep or some_inside or ends_asleep) else "normal"
        if began_asleep and all_inside:
            return "sleep"
        return "unknown" if (began_asleep or some_inside) else "normal"

    def cross_writes(self, port: int, word: int, ticks: range) -> list[list[bool]]:
        """Masks of writes to ``word`` by ports on other clocks than ``port``, at the given ticks."""
        out = []
        for j in ticks:
            if j < self.start:
                continue
            for q, a, _, mask in self.log[j].writes:
                if a == word and self.clock(q) != self.clock(port):
                    out.append(mask)
        return out

    def in_window(self, a: int, b: int) -> bool:
        return abs(self.log[a].time - self.log[b].time) < _ns(self.m.collision_window)

    # -- one tick -------------------------------------------------------------------------

    def step(self, cycle: tuple[PortOp, ...], power: Power = Power.ON) -> tuple[Expected, ...]:
        k = len(self.log)
        if k >= len(self.times):
            self.times = brute_force_ticks(self.c, 2 * k + 64)
        time, rising = self.times[k]
        tick = _Tick(time, [p.clock in rising for p in self.c.ports], power, list(cycle))
        self.log.append(tick)
        self.apply_writes(k)
        tick.results = [self.result(i, k) for i in range(len(cycle))]
        for i in range(len(cycle)):
            shown, override = self.show(i, k)
            tick.shown.append(shown)
            tick.override.append(override)
        if self.asserted(k) and power == Power.SHUTDOWN:
            self.fill(known_zero=False)
        return tuple(tick.shown)

    def apply_writes(self, k: int) -> None:
        tick = self.log[k]
        self.before = {a: list(bits) for a, bits in self.mem.items()}
        for i, op in enumerate(tick.ops):
            if op.kind == OpKind.WRITE and self.accesses(i, k):
                a = self.word(op.address)
                mask = self.lane_mask_bits(op.lanes)
                if a is not None and any(mask):
                    tick.writes.append((i, a, self.bits_of(op.data), mask))
        for a in {w[1] for w in tick.writes}:
            mine = [x for x in tick.writes if x[1] == a]
            new = list(self.mem[a])
            for b in range(self.m.width):
                drivers = [x for x in mine if x[3][b]]
                if not drivers:
                    continue
                if len(mine) == 1 or self.m.write_collision == "first":
                    new[b] = drivers[0][2][b]  # writes are in contract port order
                else:
                    new[b] = None
            # writes on other clocks to this word a moment earlier: both writes' bits unknown
            for i, _, _, mask in mine:
                for j in range(self.start, k):
                    if not self.in_window(j, k):
                        continue
                    for q, a2, _, m2 in self.log[j].writes:
                        if a2 == a and self.clock(q) != self.clock(i):
                            new = [None if (mask[b] or m2[b]) else new[b] for b in range(self.m.width)]
            self.mem[a] = new

    def result(self, i: int, k: int) -> tuple[str, Bits | None, int | None]:
        """What port i's access at tick k reads (before the tick's writes: self.before)."""
        port = self.c.ports[i]
        op = self.log[k].ops[i]
        w = self.m.width
        if not port.can_read or not self.log[k].edge[i]:
            return ("none", None, None)
        if not self.accesses(i, k):
            return ("result", [None] * w, None)
        if op.kind == OpKind.IDLE:
            return ("none", None, None)
        a = self.word(op.address)
        if op.kind == OpKind.WRITE:
            rule = self.m.read_during_write
            if rule == "keep":
                return ("hold", None, None)
            if rule == "unknown" or a is None:
                return ("result", [None] * w, None)
            return ("result", list(self.before[a] if rule == "old" else self.mem[a]), None)
        if a is None:
            return ("result", [None] * w, None)
        others = [x for x in self.log[k].writes if x[1] == a and x[0] != i]
        if not others or self.m.collision == "old":
            got = list(self.before[a])
        elif self.m.collision == "new":
            got = list(self.mem[a])
        else:
            got = [None if any(x[3][b] for x in others) else self.before[a][b] for b in range(w)]
        # writes on another clock just before: inside the collision window, or inside a
        # combinational read's own cycle
        earlier = self.own_edges(i, k - 1)
        cycle_start = earlier[-1] if earlier else -1
        for j in range(self.start, k):
            inside = self.m.read_latency == 0 and j > cycle_start
            if inside or self.in_window(j, k):
                for mask in self.cross_writes(i, a, range(j, j + 1)):
                    got = [None if mask[b] else got[b] for b in range(w)]
        return ("result", got, a)

    def show(self, i: int, k: int) -> tuple[Expected, bool]:
        """Read data port i shows at tick k, and whether power decided it."""
        port = self.c.ports[i]
        if not port.can_read or not self.log[k].edge[i]:
            return Expected(0, 0), False
        view = self.power_view(i, k)
        if view == "unknown":
            return Expected(0, 0), True
        if view == "sleep":
            return self.sleep_data(i, k), True
        return self.due(i, k), False

    def sleep_data(self, i: int, k: int) -> Expected:
        assert self.c.power is not None
        rule = self.c.power.sleep_read_data
        if rule == "zero":
            return Expected(0, self.m.word_mask)
        if rule == "unknown":
            return Expected(0, 0)
        before = [j for j in self.own_edges(i, k - 1) if j >= self.start]
        return self.log[before[-1]].shown[i] if before else Expected(0, 0)

    def due(self, i: int, k: int) -> Expected:
        """The result of port i's own edge read_latency edges back, looking further back for held data."""
        edges = self.own_edges(i, k)
        lat = self.m.read_latency
        if len(edges) <= lat or edges[-1 - lat] < self.start:
            return Expected(0, 0)
        d = edges[-1 - lat]
        if any(self.asserted(j) for j in range(d, k)):
            return Expected(0, 0)  # lost in the pipeline by a power episode
        kind, bits, word = self.log[d].results[i]
        if kind == "result":
            assert bits is not None
            if lat and word is not None:
                bits = self.blur_later(i, d, k, word, bits)
            return to_expected(bits)
        if kind == "none" and self.m.idle_read_data == "unknown":
            return Expected(0, 0)
        return self.held(i, k)

    def blur_later(self, i: int, d: int, k: int, word: int, bits: Bits) -> Bits:
        """Writes on other clocks less than the window after the read at d (before it is shown)."""
        out = list(bits)
        for j in range(d + 1, k + 1):
            if self.in_window(d, j):
                for mask in self.cross_writes(i, word, range(j, j + 1)):
                    out = [None if mask[b] else out[b] for b in range(self.m.width)]
        return out

    def held(self, i: int, k: int) -> Expected:
        """The latest read result before port i's edge at k, unless a power episode or a reset lost it."""
        before = self.own_edges(i, k - 1)
        if not before or before[-1] < self.start:
            return Expected(0, 0)
        prev = before[-1]
        if any(self.asserted(j) for j in range(prev, k)) or self.log[prev].override[i]:
            return Expected(0, 0)
        return self.last_value(i, prev)

    def last_value(self, i: int, k: int) -> Expected:
        """The latest read result as it stood after port i's edge at k."""
        edges = self.own_edges(i, k)
        lat = self.m.read_latency
        if len(edges) <= lat or edges[-1 - lat] < self.start:
            return Expected(0, 0)
        if any(self.asserted(j) for j in range(edges[-1 - lat], k)):
            return Expected(0, 0)
        kind, _, _ = self.log[edges[-1 - lat]].results[i]
        if kind == "result":
            return self.log[k].shown[i]
        if kind == "none" and self.m.idle_read_data == "unknown":
            return Expected(0, 0)
        return self.held(i, k)


def to_expected(bits: Bits) -> Expected:
    value = sum(1 << b for b, v in enumerate(bits) if v == 1)
    known = sum(1 << b for b, v in enumerate(bits) if v is not None)
    return Expected(value, known)
