"""Cycle-accurate reference model of a memory contract, with per-bit known masks.

The model answers one question per tick: which read data must each port show just before the
rising edge that ends its cycle, and which of those bits are promised at all. Contents are held as
numpy arrays of 64-bit limbs (value and known), so a word of any width up to 1024 bits is tracked
bit by bit.

Timing convention (shared with the simulator side): cycle k's inputs are applied just after rising
edge k-1 and sampled by rising edge k. :meth:`Model.step` returns what a synchronous consumer
samples at edge k: for read latency 0 the combinational result of cycle k's own read; for latency L
the result of the read issued L cycles earlier, or, when that cycle issued no read, the held or
unknown value that ``idle_read_data`` promises.

With several clocks a step is one *tick* of :func:`memcheck.contract.ticks` (every rising edge of
every port clock, in time order; edges at one instant form one tick). Each port steps on its own
clock's edges: at a tick without its edge its operation is :data:`memcheck.ops.NO_EDGE` and it shows
nothing, and its read latency counts its own edges. Power states (:class:`memcheck.ops.Power`) are
sampled at every tick; see :mod:`memcheck.model_ports` for what they do to read data.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from fractions import Fraction

import numpy as np

from memcheck.contract import Contract, MemorySpec, PortSpec, ticks
from memcheck.contract.clocks import exact_ns
from memcheck.errors import InvalidOperation
from memcheck.model_ports import (
    HOLD,
    HOLDING,
    NO_READ,
    RESULT,
    UNKNOWN_RESULT,
    Entry,
    PortState,
    Window,
    shown_while_powered_down,
    validate_power,
)
from memcheck.ops import UNKNOWN, Cycle, Expected, OpKind, PortOp, Power

#: The writes that take effect at one tick, per word: (port index, data, bit mask).
Writes = dict[int, list[tuple[int, int, int]]]


class Model:
    """Executable, cycle-accurate model of one contract.

    Create one per simulation; call :meth:`reset` after a reset sequence, :meth:`forget` to start
    from a state where nothing is known, and :meth:`step` once per tick (once per clock cycle for a
    single-clock contract). ``reset`` and ``forget`` do not move time: the next step is the next
    tick of the timeline.
    """

    def __init__(self, contract: Contract) -> None:
        self.contract = contract
        self.memory: MemorySpec = contract.memory
        m = self.memory
        self._limbs = (m.width + 63) // 64
        self._value = np.zeros((m.words, self._limbs), dtype=np.uint64)
        self._known = np.zeros((m.words, self._limbs), dtype=np.uint64)
        self._word_mask = m.word_mask
        self._addr_limit = m.address_limit
        self._lane_bits = [m.lane_bits(x) for x in range(1 << m.lanes)] if 0 < m.lanes <= 8 else None
        self._lockstep = contract.lockstep
        # Several clocks: the merged edges, one tick ahead. One clock (or identical ones): every tick
        # is an edge of every port, and its time is computed only when asked for.
        self._ticks = None if self._lockstep else ticks(contract.port_clocks)
        self._tick = None if self._ticks is None else next(self._ticks)
        self._quiet = self._lockstep and contract.power is None  # nothing to track between ticks
        self._window = Window(
            exact_ns(m.collision_window),
            max(c.period_ns for c in contract.port_clocks),
            tuple(p.clock for p in contract.ports),
        )
        self._ports: list[PortState] = [PortState() for _ in contract.ports]
        self._clear_read_state()
        if contract.reset is None:
            self._fill_initial()
        self.cycle = 0

    # -- state changes ------------------------------------------------------------------

    def reset(self) -> None:
        """Apply the contract's reset sequence: contents per ``initial``, read data unknown."""
        self._fill_initial()
        self._clear_read_state()

    def forget(self) -> None:
        """Make every stored bit and every pending read unknown (start of an independent example)."""
        self._known[:] = 0
        self._value[:] = 0
        self._clear_read_state()

    def _fill_initial(self) -> None:
        self._value[:] = 0
        if self.memory.initial == "zero":
            self._known[:] = np.uint64(0xFFFF_FFFF_FFFF_FFFF)
            self._known[:, -1] = np.uint64((1 << (self.memory.width - 64 * (self._limbs - 1))) - 1)
        else:
            self._known[:] = 0

    def _clear_read_state(self) -> None:
        """Read pipelines, held data, power history and recent writes: all forgotten."""
        lat = self.memory.read_latency
        for ps in self._ports:
            ps.restart(lat)
        self._window.clear()

    # -- contents access ----------------------------------------------------------------

    def peek(self, address: int) -> Expected:
        """Stored contents of one word (value, known bits); out-of-range addresses are unknown."""
        if not 0 <= address < self.memory.words:
            return UNKNOWN
        if self._limbs == 1:
            return Expected(int(self._value[address, 0]), int(self._known[address, 0]))
        return Expected(
            int.from_bytes(self._value[address].tobytes(), "little"),
            int.from_bytes(self._known[address].tobytes(), "little"),
        )

    def poke(self, address: int, value: int, known: int | None = None) -> None:
        """Set stored contents directly (for users' testbenches that preload a memory)."""
        if not 0 <= address < self.memory.words:
            raise InvalidOperation(f"poke address {address} is outside 0..{self.memory.words - 1}")
        self._store(
            address, Expected(value & self._word_mask, self._word_mask if known is None else known & self._word_mask)
        )

    def _store(self, address: int, e: Expected) -> None:
        if self._limbs == 1:
            self._value[address, 0] = e.value & e.known
            self._known[address, 0] = e.known
            return
        n = 8 * self._limbs
        self._value[address] = np.frombuffer((e.value & e.known).to_bytes(n, "little"), dtype="<u8")
        self._known[address] = np.frombuffer(e.known.to_bytes(n, "little"), dtype="<u8")

    # -- checking operations ------------------------------------------------------------

    @property
    def tick_time(self) -> Fraction:
        """Time (ns) of the tick the next :meth:`step` stands for."""
        if self._tick is not None:
            return self._tick.time
        clock = self.contract.port_clocks[0]
        return clock.phase_ns + self.cycle * clock.period_ns

    def edges(self) -> tuple[bool, ...]:
        """Per port: does its clock have a rising edge at the next tick?"""
        if self._tick is None:
            return (True,) * len(self.contract.ports)
        return tuple(p.clock in self._tick.clocks for p in self.contract.ports)

    def validate(self, cycle: Sequence[PortOp], power: Power = Power.ON) -> None:
        """Raise :class:`InvalidOperation` if a port cannot perform its operation at the next tick."""
        ports = self.contract.ports
        if len(cycle) != len(ports):
            raise InvalidOperation(f"a cycle needs one operation per port ({len(ports)}), got {len(cycle)}")
        validate_power(self.contract.power, power)
        for port, op, edge in zip(ports, cycle, self.edges(), strict=True):
            if (op.kind == OpKind.NO_EDGE) == edge:
                raise InvalidOperation(
                    f"port {port.name!r}: at tick {self.cycle} ({float(self.tick_time)} ns) its clock "
                    f"{port.clock!r} {'has' if edge else 'has no'} rising edge, so its operation "
                    f"{'cannot' if edge else 'must'} be 'no edge'"
                )
            if edge:
                self._validate_op(port, op)

    def _validate_op(self, port: PortSpec, op: PortOp) -> None:
        m = self.memory
        if op.kind == OpKind.READ and not port.can_read:
            raise InvalidOperation(f"port {port.name!r} is a {port.role} port and cannot read")
        if op.kind == OpKind.WRITE and not port.can_write:
            raise InvalidOperation(f"port {port.name!r} is a {port.role} port and cannot write")
        if op.kind == OpKind.IDLE and not port.can_idle:
            raise InvalidOperation(
                f"port {port.name!r} has no enable pin, so it cannot be idle: it "
                + ("reads every cycle" if port.role == "read" else "reads whenever it does not write")
            )
        if op.kind == OpKind.WRITE and port.any_lane_write and op.lanes == 0:
            raise InvalidOperation(
                f"port {port.name!r} has no write_enable: an access with no lane enabled is a read, not a write"
            )
        if not 0 <= op.address < self._addr_limit:
            bits = self._addr_limit.bit_length() - 1
            raise InvalidOperation(f"port {port.name!r}: address {op.address} does not fit {bits} address bits")
        if not 0 <= op.data <= self._word_mask:
            raise InvalidOperation(f"port {port.name!r}: data {op.data:#x} does not fit {m.width} bits")
        if op.lanes is not None and not 0 <= op.lanes <= m.all_lanes:
            raise InvalidOperation(
                f"port {port.name!r}: lane enables {op.lanes:#x} do not fit {max(m.lanes, 1)} lane bit(s)"
            )

    # -- one tick -----------------------------------------------------------------------

    def step(self, cycle: Sequence[PortOp], power: Power = Power.ON) -> tuple[Expected, ...]:
        """Advance one tick; return per port the read data sampled at its closing edge (UNKNOWN for a
        port without an edge at this tick, or without read data)."""
        self.validate(cycle, power)
        edges = self.edges()
        asleep = power != Power.ON
        # An edge makes an access unless it samples a power pin asserted or is a wake-up edge.
        active = [e and not asleep and self._ports[i].wake_left == 0 for i, e in enumerate(edges)]
        writes = self._writes(cycle, active)
        after = self._after(writes)
        entries = [self._entry(i, op, writes, after) if active[i] else UNKNOWN_RESULT for i, op in enumerate(cycle)]
        if self._tick is not None:
            self._window.blur_pending(self._ports, writes, self._tick.time)
        out = tuple(self._show(i, e, entries[i], power) for i, e in enumerate(edges))
        for addr, e in after.items():
            self._store(addr, e)
        self._after_tick(writes, edges, power)
        return out

    def run(self, cycles: Iterable[Sequence[PortOp]], power: Iterable[Power] = ()) -> list[tuple[Expected, ...]]:
        """Step through many ticks (with their power states, if given); one result tuple per tick."""
        states = list(power)
        return [self.step(c, states[k] if states else Power.ON) for k, c in enumerate(cycles)]

    def _writes(self, cycle: Sequence[PortOp], active: list[bool]) -> Writes:
        """The writes that take effect at this tick, per word."""
        m = self.memory
        writes: Writes = {}
        for i, op in enumerate(cycle):
            if not (active[i] and op.kind == OpKind.WRITE):
                continue
            word = m.word_of(op.address)
            bits = self._bits(op.lanes)
            if word is not None and bits:
                writes.setdefault(word, []).append((i, op.data, bits))
        return writes

    def _after(self, writes: Writes) -> dict[int, Expected]:
        """Contents after this tick, for every written word (old is still in the arrays)."""
        after: dict[int, Expected] = {}
        for addr, ws in writes.items():
            old = self.peek(addr)
            value, known = old.value, old.known
            if len(ws) == 1 or self.memory.write_collision == "first":
                # Apply in reverse contract order so the earliest-listed port wins on shared bits.
                for _, data, bits in reversed(ws):
                    value = (value & ~bits) | (data & bits)
                    known |= bits
            else:
                # Unknown write collision: every bit driven by any colliding write is unknown.
                for _, _, bits in ws:
                    known &= ~bits
            if self._tick is not None:
                known &= ~self._window.write_blur(addr, ws, self._tick.time)
            after[addr] = Expected(value & known, known)
        return after

    def _bits(self, lanes: int | None) -> int:
        if lanes is None:
            return self._word_mask
        if self._lane_bits is not None:
            return self._lane_bits[lanes]
        return self.memory.lane_bits(lanes)

    def _entry(self, index: int, op: PortOp, writes: Writes, after: dict[int, Expected]) -> Entry:
        """The read result port ``index`` produces at this tick."""
        port = self.contract.ports[index]
        if not port.can_read or op.kind in (OpKind.IDLE, OpKind.NO_EDGE):
            return NO_READ
        m = self.memory
        word = m.word_of(op.address)
        if op.kind == OpKind.WRITE:
            # A readwrite port that writes: its read data follows read_during_write.
            rdw = m.read_during_write
            if rdw == "keep":
                return HOLDING
            if rdw == "unknown" or word is None:
                return UNKNOWN_RESULT
            e = self.peek(word) if rdw == "old" else after.get(word, self.peek(word))
            return Entry(RESULT, e.value, e.known)
        if word is None:
            return UNKNOWN_RESULT
        e = self._read(index, word, writes, after)
        if self._tick is None:
            return Entry(RESULT, e.value, e.known)
        now = self._tick.time
        blur = self._window.read_blur(index, word, now, self._ports[index].prev_edge, m.read_latency)
        return Entry(RESULT, e.value & ~blur, e.known & ~blur, now, word)

    def _read(self, index: int, word: int, writes: Writes, after: dict[int, Expected]) -> Expected:
        """A read of ``word``, with the collision rule for other ports writing it at this tick."""
        old = self.peek(word)
        others = [w for w in writes.get(word, ()) if w[0] != index]
        collision = self.memory.collision
        if not others or collision == "old":
            return old
        if collision == "new":
            return after[word]
        driven = 0
        for _, _, bits in others:
            driven |= bits
        known = old.known & ~driven
        return Expected(old.value & known, known)

    def _show(self, index: int, edge: bool, entry: Entry, power: Power) -> Expected:
        """What port ``index`` shows at this tick (pipeline advanced on its own edges only)."""
        port = self.contract.ports[index]
        if not edge or not port.can_read:
            return UNKNOWN
        ps = self._ports[index]
        due = entry if self.memory.read_latency == 0 else ps.advance(entry)
        held = shown_while_powered_down(self.contract, ps, power)
        shown = held if held is not None else self._resolve(ps, due)
        ps.shown = shown
        return shown

    def _resolve(self, ps: PortState, due: Entry) -> Expected:
        if due.kind == RESULT:
            e = Expected(due.value & due.known, due.known)
            ps.last = e
            return e
        if due.kind == HOLD or self.memory.idle_read_data == "keep":
            return ps.last
        ps.last = UNKNOWN
        return UNKNOWN

    def _after_tick(self, writes: Writes, edges: tuple[bool, ...], power: Power) -> None:
        """Power effects of this tick, the per-port power history, recent writes; then the next tick."""
        self.cycle += 1
        if self._quiet:
            return
        if power == Power.SHUTDOWN:
            self._known[:] = 0
            self._value[:] = 0
        wake = self.contract.power.wake_cycles if self.contract.power is not None else 0
        now = self._tick.time if self._tick is not None else Fraction(0)
        for i, ps in enumerate(self._ports):
            ps.after_tick(edges[i], power, wake, self.memory.read_latency, now)
        if self._ticks is not None:
            self._window.record(writes, now)
            self._tick = next(self._ticks)


def expected_reads(contract: Contract, cycles: Iterable[Cycle], *, reset: bool = False) -> list[tuple[Expected, ...]]:
    """Convenience: run a fresh model over ``cycles`` (after a reset when asked)."""
    model = Model(contract)
    if reset:
        model.reset()
    return model.run(cycles)
