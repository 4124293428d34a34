"""A deliberately naive second model of the contract semantics, written separately from
memcheck.model to cross-check it.

It differs in structure on purpose: contents are a dict of per-bit lists (0, 1 or None for
unknown), and read data is derived from the *history* of what each cycle's operation produced
(looking back read_latency cycles and then further back for held values), not from a pipeline
state machine. One branch per rule of the contract semantics.
"""

from __future__ import annotations

from memcheck.contract import Contract
from memcheck.ops import Expected, OpKind, PortOp

Bits = list[int | None]
_Write = tuple[int, int, Bits, list[bool]]  # port index, address, data bits, bit enables


class NaiveOracle:
    def __init__(self, contract: Contract) -> None:
        self.c = contract
        self.m = contract.memory
        self.mem: dict[int, Bits] = {}
        self.history: list[list[tuple[str, Bits | None]]] = [[] for _ in contract.ports]
        self.start = 0  # history index before which read data is unknown
        self.cycle = 0
        self.fill(known_zero=(contract.reset is None and self.m.initial == "zero"))

    def fill(self, known_zero: bool) -> None:
        w = self.m.width
        for a in range(self.m.words):
            self.mem[a] = [0] * w if known_zero else [None] * w

    def reset(self) -> None:
        self.fill(known_zero=self.m.initial == "zero")
        self.start = self.cycle

    def forget(self) -> None:
        self.fill(known_zero=False)
        self.start = self.cycle

    def bits_of(self, value: int) -> Bits:
        return [(value >> b) & 1 for b in range(self.m.width)]

    def lane_mask_bits(self, lanes: int | None) -> list[bool]:
        w = self.m.width
        if lanes is None:
            return [True] * w
        if self.m.bit_mask:
            return [bool(lanes >> b & 1) for b in range(w)]
        if self.m.lane_width:
            return [bool(lanes >> (b // self.m.lane_width) & 1) for b in range(w)]
        return [bool(lanes & 1)] * w

    def step(self, cycle: tuple[PortOp, ...]) -> tuple[Expected, ...]:
        m = self.m
        # writes to in-range addresses that enable at least one bit
        writes: list[_Write] = []
        for i, op in enumerate(cycle):
            if op.kind == OpKind.WRITE and op.address < m.words:
                mask = self.lane_mask_bits(op.lanes)
                if any(mask):
                    writes.append((i, op.address, self.bits_of(op.data), mask))
        new_mem = {addr: self.written(addr, [x for x in writes if x[1] == addr]) for addr in {x[1] for x in writes}}
        # each port's result for this cycle
        for i, (port, op) in enumerate(zip(self.c.ports, cycle, strict=True)):
            if not port.can_read or op.kind == OpKind.IDLE:
                self.history[i].append(("none", None))
            elif op.kind == OpKind.WRITE:
                self.history[i].append(self.read_while_writing(op.address, new_mem))
            else:
                self.history[i].append(("result", self.read(i, op.address, writes, new_mem)))
        # what each port shows before this edge
        out = []
        for i, port in enumerate(self.c.ports):
            if not port.can_read:
                out.append(Expected(0, 0))
                continue
            out.append(self.shown(i, self.cycle - m.read_latency))
        for a, bits in new_mem.items():
            self.mem[a] = bits
        self.cycle += 1
        return tuple(out)

    def written(self, addr: int, mine: list[_Write]) -> Bits:
        """The bits of ``addr`` after this edge's writes ``mine`` to it."""
        new = list(self.mem[addr])
        for b in range(self.m.width):
            drivers = [x for x in mine if x[3][b]]
            if not drivers:
                continue
            if len(mine) == 1 or self.m.write_collision == "first":
                new[b] = drivers[0][2][b]  # writes are in contract port order
            else:
                new[b] = None
        return new

    def read_while_writing(self, a: int, new_mem: dict[int, Bits]) -> tuple[str, Bits | None]:
        """The history entry of a readwrite port that writes ``a`` this cycle."""
        rule = self.m.read_during_write
        if rule == "keep":
            return ("hold", None)
        if rule == "unknown" or a >= self.m.words:
            return ("result", [None] * self.m.width)
        if rule == "old":
            return ("result", list(self.mem[a]))
        return ("result", list(new_mem.get(a, self.mem[a])))  # new

    def read(self, i: int, a: int, writes: list[_Write], new_mem: dict[int, Bits]) -> Bits:
        """The bits port ``i`` reads at ``a`` this cycle, given the other ports' writes."""
        if a >= self.m.words:
            return [None] * self.m.width
        others = [x for x in writes if x[1] == a and x[0] != i]
        if not others or self.m.collision == "old":
            return list(self.mem[a])
        if self.m.collision == "new":
            return list(new_mem[a])
        got = list(self.mem[a])
        for b in range(self.m.width):
            if any(x[3][b] for x in others):
                got[b] = None
        return got

    def shown(self, port: int, j: int) -> Expected:
        """Read data shown when the result of cycle j comes due, by looking back in history."""
        while True:
            if j < self.start:
                return Expected(0, 0)
            kind, bits = self.history[port][j]
            if kind == "result":
                assert bits is not None
                return to_expected(bits)
            if kind == "none" and self.m.idle_read_data == "unknown":
                return Expected(0, 0)
            j -= 1  # held: whatever was shown one cycle earlier


def to_expected(bits: Bits) -> Expected:
    value = sum(1 << b for b, v in enumerate(bits) if v == 1)
    known = sum(1 << b for b, v in enumerate(bits) if v is not None)
    return Expected(value, known)
