"""Cycle-accurate reference model of a memory contract, with per-bit known masks.

The model answers one question per clock cycle: which read data must each port show just before
the rising edge that ends this cycle, and which of those bits are promised at all. Contents are
held as numpy arrays of 64-bit limbs (value and known), so a word of any width up to 1024 bits is
tracked bit by bit.

Timing convention (shared with the simulator side): cycle k's inputs are applied just after rising
edge k-1 and sampled by rising edge k. :meth:`Model.step` returns what a synchronous consumer
samples at edge k: for read latency 0 the combinational result of cycle k's own read; for latency L
the result of the read issued L cycles earlier, or, when that cycle issued no read, the held or
unknown value that ``idle_read_data`` promises.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass

import numpy as np

from memcheck.contract import Contract, MemorySpec, PortSpec
from memcheck.errors import InvalidOperation
from memcheck.ops import UNKNOWN, Cycle, Expected, OpKind, PortOp

# Pipeline entry kinds: what a read-data register shows when its cycle comes due.
_RESULT = 0  # a read result (value, known)
_NONE = 1  # no read issued: held or unknown per idle_read_data
_HOLD = 2  # read_during_write = "keep": hold the previous result whatever idle_read_data says


@dataclass(frozen=True, slots=True)
class _Entry:
    kind: int
    value: int = 0
    known: int = 0


_NO_READ = _Entry(_NONE)
_HOLDING = _Entry(_HOLD)
_UNKNOWN_RESULT = _Entry(_RESULT, 0, 0)


class Model:
    """Executable, cycle-accurate model of one contract.

    Create one per simulation; call :meth:`reset` after a reset sequence, :meth:`forget` to start
    from a state where nothing is known, and :meth:`step` once per clock cycle.
    """

    def __init__(self, contract: Contract) -> None:
        self.contract = contract
        self.memory: MemorySpec = contract.memory
        m = self.memory
        self._limbs = (m.width + 63) // 64
        self._value = np.zeros((m.words, self._limbs), dtype=np.uint64)
        self._known = np.zeros((m.words, self._limbs), dtype=np.uint64)
        self._word_mask = m.word_mask
        self._addr_limit = 1 << m.address_bits
        self._lane_bits = [m.lane_bits(x) for x in range(1 << m.lanes)] if 0 < m.lanes <= 8 else None
        self._pipes: list[list[_Entry]] = []
        self._last: list[Expected] = []
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
        lat = self.memory.read_latency
        self._pipes = [[_UNKNOWN_RESULT] * lat for _ in self.contract.ports]
        self._last = [UNKNOWN for _ in self.contract.ports]

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

    def validate(self, cycle: Sequence[PortOp]) -> None:
        """Raise :class:`InvalidOperation` if a port cannot perform its operation."""
        ports = self.contract.ports
        if len(cycle) != len(ports):
            raise InvalidOperation(f"a cycle needs one operation per port ({len(ports)}), got {len(cycle)}")
        for port, op in zip(ports, cycle, strict=True):
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
        if not 0 <= op.address < self._addr_limit:
            raise InvalidOperation(
                f"port {port.name!r}: address {op.address} does not fit {m.address_bits} address bits"
            )
        if not 0 <= op.data <= self._word_mask:
            raise InvalidOperation(f"port {port.name!r}: data {op.data:#x} does not fit {m.width} bits")
        if op.lanes is not None and not 0 <= op.lanes <= m.all_lanes:
            raise InvalidOperation(
                f"port {port.name!r}: lane enables {op.lanes:#x} do not fit {max(m.lanes, 1)} lane bit(s)"
            )

    # -- one clock cycle ----------------------------------------------------------------

    def step(self, cycle: Sequence[PortOp]) -> tuple[Expected, ...]:
        """Advance one clock cycle; return per port the read data sampled at its closing edge."""
        self.validate(cycle)
        m = self.memory
        words = m.words

        # 1. The writes that take effect at this edge, per address: (port index, data, bit mask).
        writes: dict[int, list[tuple[int, int, int]]] = {}
        for i, op in enumerate(cycle):
            if op.kind == OpKind.WRITE and op.address < words:
                bits = self._bits(op.lanes)
                if bits:
                    writes.setdefault(op.address, []).append((i, op.data, bits))

        # 2. Contents after the edge, for every written address (old is still in the arrays).
        after = {addr: self._after_writes(addr, ws) for addr, ws in writes.items()}

        # 3. The read result each port produces at this edge.
        entries: list[_Entry] = []
        for i, (port, op) in enumerate(zip(self.contract.ports, cycle, strict=True)):
            entries.append(self._read_entry(i, port, op, writes, after) if port.can_read else _NO_READ)

        # 4. What each port shows before this edge: this cycle's result (latency 0) or a pipelined one.
        out: list[Expected] = []
        for i, port in enumerate(self.contract.ports):
            if not port.can_read:
                out.append(UNKNOWN)
                continue
            if m.read_latency == 0:
                due = entries[i]
            else:
                pipe = self._pipes[i]
                due = pipe[0]
                pipe.pop(0)
                pipe.append(entries[i])
            out.append(self._resolve(i, due))

        # 5. Commit the edge.
        for addr, e in after.items():
            self._store(addr, e)
        self.cycle += 1
        return tuple(out)

    def _after_writes(self, addr: int, ws: list[tuple[int, int, int]]) -> Expected:
        """The word at ``addr`` after this edge's writes ``ws`` (port index, data, bit mask) to it."""
        old = self.peek(addr)
        value, known = old.value, old.known
        if len(ws) == 1 or self.memory.write_collision == "first":
            # Apply in reverse contract order so the earliest-listed port wins on shared bits.
            for _, data, bits in reversed(ws):
                value = (value & ~bits) | (data & bits)
                known |= bits
        else:
            # Unknown write collision: every bit driven by any colliding write is unknown.
            driven = 0
            for _, _, bits in ws:
                driven |= bits
            known &= ~driven
        return Expected(value & known, known)

    def run(self, cycles: Iterable[Sequence[PortOp]]) -> list[tuple[Expected, ...]]:
        """Step through many cycles; one result tuple per cycle."""
        return [self.step(c) for c in cycles]

    def _bits(self, lanes: int | None) -> int:
        if lanes is None:
            return self._word_mask
        if self._lane_bits is not None:
            return self._lane_bits[lanes]
        return self.memory.lane_bits(lanes)

    def _read_entry(
        self,
        index: int,
        port: PortSpec,
        op: PortOp,
        writes: dict[int, list[tuple[int, int, int]]],
        after: dict[int, Expected],
    ) -> _Entry:
        m = self.memory
        if op.kind == OpKind.IDLE:
            return _NO_READ
        addr = op.address
        if op.kind == OpKind.WRITE:
            # A readwrite port that writes: its read data follows read_during_write.
            rdw = m.read_during_write
            if rdw == "keep":
                return _HOLDING
            if rdw == "unknown" or addr >= m.words:
                return _UNKNOWN_RESULT
            e = self.peek(addr) if rdw == "old" else after.get(addr, self.peek(addr))
            return _Entry(_RESULT, e.value, e.known)
        # A read.
        if addr >= m.words:
            return _UNKNOWN_RESULT
        old = self.peek(addr)
        others = [w for w in writes.get(addr, ()) if w[0] != index]
        if not others:
            return _Entry(_RESULT, old.value, old.known)
        if m.collision == "old":
            return _Entry(_RESULT, old.value, old.known)
        if m.collision == "new":
            new = after[addr]
            return _Entry(_RESULT, new.value, new.known)
        driven = 0
        for _, _, bits in others:
            driven |= bits
        known = old.known & ~driven
        return _Entry(_RESULT, old.value & known, known)

    def _resolve(self, index: int, due: _Entry) -> Expected:
        if due.kind == _RESULT:
            e = Expected(due.value & due.known, due.known)
            self._last[index] = e
            return e
        if due.kind == _HOLD or self.memory.idle_read_data == "keep":
            return self._last[index]
        self._last[index] = UNKNOWN
        return UNKNOWN


def expected_reads(contract: Contract, cycles: Iterable[Cycle], *, reset: bool = False) -> list[tuple[Expected, ...]]:
    """Convenience: run a fresh model over ``cycles`` (after a reset when asked)."""
    model = Model(contract)
    if reset:
        model.reset()
    return model.run(cycles)
