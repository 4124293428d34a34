"""Directed examples: for a cover point, a short trace that exercises it.

The property phase runs one of these, checked like any independent example, for each point the
random examples left unhit (``memcheck/sim/checking/holes.py``). Each trace ends with ``read_latency``
quiet cycles so every read's data shows inside it; every word written is read back first, so a
directed example checks what it wrote. Points that need more than operations on the
pins (a reset in mid-run, power episodes) and contracts whose ports step on different clock edges
get no trace here (None).
"""

from __future__ import annotations

from collections.abc import Callable

from memcheck.contract import Contract, PortSpec
from memcheck.cover.points import CoverPoint
from memcheck.ops import Cycle, OpKind, PortOp

_PATTERN = 0x5A5A_5A5A_5A5A_5A5A


def _data(contract: Contract, salt: int) -> int:
    """Alternating bits; the complement for odd ``salt`` (so two writes differ in every lane)."""
    m = contract.memory
    word = 0
    for k in range(0, m.width, 64):
        word |= _PATTERN << k
    return (word if salt % 2 == 0 else ~word) & m.word_mask


def _quiet(contract: Contract) -> list[PortOp]:
    return [PortOp(OpKind.IDLE) if p.can_idle else PortOp(OpKind.READ, 0) for p in contract.ports]


class _Builder:
    """Cycles under construction: quiet everywhere except the operations placed."""

    def __init__(self, contract: Contract) -> None:
        self.contract = contract
        self.cycles: list[list[PortOp]] = []
        self.written: dict[int, None] = {}  # addresses written, in order (read back at the end)

    def at(self, k: int) -> list[PortOp]:
        while len(self.cycles) <= k:
            self.cycles.append(_quiet(self.contract))
        return self.cycles[k]

    def op(self, k: int, port: int, kind: str, address: int, lanes: int | None = None, salt: int | None = None) -> None:
        p = self.contract.ports[port]
        if kind == "read":
            self.at(k)[port] = PortOp(OpKind.READ, address)
        elif kind == "write":
            given = lanes if p.lane_enable is not None else None
            self.at(k)[port] = PortOp(
                OpKind.WRITE, address, _data(self.contract, k + port if salt is None else salt), given
            )
            self.written[address] = None
        else:
            self.at(k)[port] = PortOp(OpKind.IDLE)

    def done(self) -> list[Cycle]:
        """The cycles placed, a read-back of every word written (by the first port that reads), and
        ``read_latency`` quiet cycles."""
        c = self.contract
        reader = next((i for i, p in enumerate(c.ports) if p.can_read), None)
        if reader is not None:
            for a in self.written:
                if a < c.memory.words:
                    self.op(len(self.cycles), reader, "read", a)
        tail = len(self.cycles) + self.contract.memory.read_latency
        self.at(tail - 1)
        return [tuple(c) for c in self.cycles]


def _access(port: PortSpec) -> str:
    return "read" if port.can_read else "write"


def _address_bits(b: _Builder, p: int, port: PortSpec) -> None:
    top = b.contract.memory.words - 1
    addresses = [0, top] + [1 << k for k in range(top.bit_length()) if not top >> k & 1]
    for k, a in enumerate(addresses):
        b.op(k, p, _access(port), a)


def _lanes(b: _Builder, p: int, what: str) -> None:
    """Writes with the lane class asked for, after a full write of the word (so the lanes a write
    leaves alone hold known data the read-back checks)."""
    m = b.contract.memory
    b.op(0, p, "write", 0, m.all_lanes, salt=0)
    if what == "each":
        for k in range(max(m.lanes, 1)):
            b.op(k + 1, p, "write", 0, 1 << k, salt=1)
        return
    value = {"all": m.all_lanes, "none": 0, "single": 1, "partial": 3}[what]
    b.op(1, p, "write", 0, value, salt=1)


def _port_point(b: _Builder, p: int, kind: str) -> bool:
    """Place the operations of a per-port point; False when there is no directed trace for it."""
    c = b.contract
    port = c.ports[p]
    m = c.memory
    head, _, rest = kind.partition(".")
    if head == "op":
        b.op(0, p, rest, 0)
    elif head == "lanes":
        _lanes(b, p, rest)
    elif kind == "address.bits":
        _address_bits(b, p, port)
    elif kind in ("address.first", "address.last"):
        b.op(0, p, _access(port), 0 if rest == "first" else m.words - 1)
    elif head == "address":  # beyond.read / beyond.write
        b.op(0, p, rest.split(".")[1], m.words)
    elif head == "read_during_write":
        b.op(0, p, "write", 0)
    elif head == "after_write":
        b.op(0, p, "write", 0)
        b.op(int(rest), p, "read", 0)
    elif head == "back_to_back":
        first, second = rest.split("_")
        b.op(0, p, first, 0)
        b.op(1, p, second, 0)
    else:
        return False
    return True


def _pair_point(b: _Builder, scope: str, kind: str) -> bool:
    names = [q.name for q in b.contract.ports]
    sep = "->" if "->" in scope else "+"
    i, j = (names.index(n) for n in scope.split(sep))
    m = b.contract.memory
    partial = kind.endswith(".partial")
    lanes = 1 if partial else m.all_lanes
    # A partial collision comes after a full write of the word, so the lanes left alone are known.
    at = 1 if partial else 0
    if partial:
        b.op(0, i, "write", 0, m.all_lanes, salt=0)
    if kind.startswith("collision.read_write"):
        b.op(at, i, "write", 0, lanes, salt=1)
        b.op(at, j, "read", 0)
    elif kind.startswith("collision.write_write"):
        first_partial = partial and b.contract.ports[i].lane_enable is not None
        b.op(at, i, "write", 0, 1 if first_partial else m.all_lanes, salt=1)
        b.op(at, j, "write", 0, 1 if partial and not first_partial else m.all_lanes, salt=1)
    elif kind.startswith("after_write."):
        b.op(0, i, "write", 0)
        b.op(int(kind.split(".")[1]), j, "read", 0)
    else:
        return False
    return True


def directed_cycles(contract: Contract, point: CoverPoint) -> list[Cycle] | None:
    """A short trace that hits ``point`` on ``contract``, or None when none is built for it."""
    if not contract.lockstep or contract.power is not None:
        return None
    b = _Builder(contract)
    names = [q.name for q in contract.ports]
    place: Callable[[], bool]
    if point.scope in names:
        p = names.index(point.scope)

        def place() -> bool:
            return _port_point(b, p, point.kind)
    elif "->" in point.scope or "+" in point.scope:

        def place() -> bool:
            return _pair_point(b, point.scope, point.kind)
    else:
        return None
    return b.done() if place() else None
