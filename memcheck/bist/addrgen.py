"""Address generators of the BIST engine: the walks of :mod:`memcheck.march.orders`, in hardware.

A generator is a state register ``ag`` with three pieces of combinational logic: the address of a
state, the next state of the ⇑ walk and the next state of the ⇓ walk (its exact reverse). The walk
of each kind is the Python expansion's, including word counts that are not a power of two:

``linear`` (and ``col-fast``)  state = position, address = position.
``complement``  state = position ``p``; address ``p >> 1`` for even ``p``, ``N-1-(p >> 1)`` for odd.
``row-fast``    state = position ``p = col * rows + row``; address ``row * cols + col``: a swap of the
                two bit fields (rows and cols must be powers of two).
``gray``        state = ``i``, address = ``i ^ (i >> 1)``. The codes below ``N`` form at most
                ``log2 N`` aligned blocks of ``i`` (the Gray map sends aligned blocks to aligned
                blocks), so the skips of the Python walk become jumps from the end of one block to
                the start of the next: a case over a few constants, one step per cycle.
``lfsr``        state = the Galois LFSR state (0 first, then the states from the seed's start,
                states ``>= N`` skipped). At most ``skip`` states in a row are ``>= N`` (measured
                over the whole period when the engine is generated), so the next valid state is one
                of the next ``skip + 1`` LFSR states, each a fixed XOR of the state bits: a short
                priority chain gives it in one cycle. ⇓ uses the inverse step the same way.

Everything here is decided when the engine is generated; :meth:`AddressGen.walk` replays the
generator in Python (for tests against :class:`memcheck.march.orders.AddressOrder`).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np
import numpy.typing as npt

from memcheck.errors import BistError
from memcheck.march.orders import LFSR_TAPS, AddressOrder, address_bits, lfsr_sequence

GenKind = Literal["linear", "complement", "gray", "lfsr", "row-fast"]
HW_ORDERS: tuple[str, ...] = ("linear", "complement", "gray", "lfsr", "col-fast", "row-fast")


def bits_for(count: int) -> int:
    """Bits of a counter holding ``0..count-1`` (at least 1)."""
    return max(1, (count - 1).bit_length())


def _pow2(n: int) -> bool:
    return n >= 1 and n & (n - 1) == 0


def gray_blocks(words: int) -> tuple[tuple[int, int], ...]:
    """Inclusive ranges of ``i`` whose Gray code ``i ^ (i >> 1)`` is below ``words``, ascending.

    ``[0, words)`` is a union of aligned blocks (one per set bit ``j`` of ``words``); the ``i`` of an
    aligned block of codes is the aligned block whose top bits are the inverse Gray code of the
    block's top bits.
    """
    out: list[tuple[int, int]] = []
    for j in range(words.bit_length()):
        if words >> j & 1:
            top = words >> (j + 1) << 1  # code bits above j, bit j = 0
            inv = top
            shift = 1
            while top >> shift:
                inv ^= top >> shift
                shift += 1
            start = inv << j
            out.append((start, start + (1 << j) - 1))
    out.sort()
    merged: list[tuple[int, int]] = []
    for lo, hi in out:
        if merged and merged[-1][1] + 1 == lo:
            merged[-1] = (merged[-1][0], hi)
        else:
            merged.append((lo, hi))
    return tuple(merged)


def _lfsr_mask(bits: int) -> int:
    mask = 0
    for t in LFSR_TAPS[bits]:
        mask |= 1 << (t - 1)
    return mask


def lfsr_step_columns(bits: int, steps: int, inverse: bool = False) -> tuple[int, ...]:
    """Columns of the GF(2) map "``steps`` LFSR steps" (forward or inverse): column ``i`` is the
    image of state bit ``i``."""
    mask = _lfsr_mask(bits)

    def fwd(s: int) -> int:
        return (s >> 1) ^ (mask if s & 1 else 0)

    def bwd(t: int) -> int:
        out_bit = t >> (bits - 1) & 1  # the bit shifted out, recovered from the top tap
        return ((t ^ (mask if out_bit else 0)) << 1 | out_bit) & ((1 << bits) - 1)

    one = bwd if inverse else fwd
    cols = []
    for i in range(bits):
        v = 1 << i
        for _ in range(steps):
            v = one(v)
        cols.append(v)
    return tuple(cols)


def _max_invalid_run(seq: npt.NDArray[np.int64], words: int) -> int:
    """Most consecutive states ``>= words`` in the LFSR cycle (cyclically)."""
    bad = np.concatenate([seq >= words, seq >= words]).astype(np.int8)
    edges = np.diff(np.concatenate([[0], bad, [0]]))
    starts, ends = np.flatnonzero(edges == 1), np.flatnonzero(edges == -1)
    return 0 if starts.size == 0 else min(int((ends - starts).max()), int(seq.size))


@dataclass(frozen=True)
class AddressGen:
    """One address generator, fully decided (see module docstring)."""

    kind: GenKind
    words: int
    addr_bits: int
    state_bits: int
    init_up: int
    last_up: int
    blocks: tuple[tuple[int, int], ...] = ()
    lfsr_mask: int = 0
    skip: int = 0
    row_bits: int = 0

    def first(self, down: bool) -> int:
        """State at the start of a walk."""
        return self.last_up if down else self.init_up

    def address(self, s: int) -> int:
        if self.kind == "complement":
            return self.words - 1 - (s >> 1) if s & 1 else s >> 1
        if self.kind == "gray":
            return s ^ (s >> 1)
        if self.kind == "row-fast":
            rb = self.row_bits
            return (s & ((1 << rb) - 1)) << (self.addr_bits - rb) | s >> rb
        return s

    def _lfsr_next(self, s: int, down: bool) -> int:
        if down and s == self.blocks[0][0]:
            return 0
        if not down and s == 0:
            return self.blocks[0][0]  # first valid state from the seed's start
        cols = lfsr_step_columns(self.state_bits, 1, inverse=down)
        for _ in range(self.skip + 1):
            s = _apply(cols, s)
            if s < self.words:
                return s
        raise AssertionError("LFSR skip depth too small")  # pragma: no cover

    def next(self, s: int, down: bool) -> int:
        """The state after ``s`` on the ⇑ (``down`` False) or ⇓ walk."""
        if self.kind == "lfsr":
            return self._lfsr_next(s, down)
        if self.kind == "gray":
            for b in range(len(self.blocks)):
                if not down and b + 1 < len(self.blocks) and s == self.blocks[b][1]:
                    return self.blocks[b + 1][0]
                if down and b > 0 and s == self.blocks[b][0]:
                    return self.blocks[b - 1][1]
        return s - 1 if down else s + 1

    def walk(self, down: bool = False) -> list[int]:
        """Every address of one walk, replayed state by state (tests and docs; small memories)."""
        s = self.first(down)
        out = [self.address(s)]
        for _ in range(self.words - 1):
            s = self.next(s, down)
            out.append(self.address(s))
        return out


def _apply(cols: tuple[int, ...], v: int) -> int:
    r = 0
    for i, c in enumerate(cols):
        if v >> i & 1:
            r ^= c
    return r


def build_address_gen(order: AddressOrder) -> AddressGen:
    """The generator for an order of :mod:`memcheck.march.orders` (raises BistError when the order
    has no hardware form here)."""
    n = order.words
    aw = address_bits(n)
    kind = order.kind
    if kind not in HW_ORDERS:
        raise BistError(f"address order {kind!r} has no hardware form; choose one of {', '.join(HW_ORDERS)}")
    if n == 1 or kind == "col-fast":
        kind = "linear"
    if kind == "row-fast":
        assert order.layout is not None
        rows, cols = order.layout
        if not (_pow2(rows) and _pow2(cols)):
            raise BistError(
                f"address order 'row-fast' in hardware needs a layout whose rows and columns are powers of two, "
                f"not {rows}x{cols}"
            )
        if rows == 1 or cols == 1:
            kind = "linear"
        else:
            return AddressGen("row-fast", n, aw, aw, 0, n - 1, row_bits=rows.bit_length() - 1)
    if kind in ("linear", "complement"):
        return AddressGen(kind, n, aw, aw, 0, n - 1)  # type: ignore[arg-type]
    if kind == "gray":
        blocks = gray_blocks(n)
        return AddressGen("gray", n, aw, aw, blocks[0][0], blocks[-1][1], blocks=blocks)
    k = order.lfsr_bits
    if n == 1 << k:  # every state is an address: no skips, no need to walk the period
        first = order.lfsr_start
        last = _apply(lfsr_step_columns(k, 1, inverse=True), first)
        return AddressGen("lfsr", n, aw, k, 0, last, blocks=((first, first),), lfsr_mask=_lfsr_mask(k), skip=0)
    seq = lfsr_sequence(k, order.lfsr_start)
    valid = seq[seq < n]
    first, last = int(valid[0]), int(valid[-1])
    # blocks[0][0] carries the first LFSR state after 0 (the walk's second state)
    return AddressGen(
        "lfsr", n, aw, k, 0, last, blocks=((first, first),), lfsr_mask=_lfsr_mask(k), skip=_max_invalid_run(seq, n)
    )


def _lit(bits: int, value: int) -> str:
    return f"{bits}'d{value}"


def _xor_expr(cols: tuple[int, ...], bits: int, src: str) -> str:
    """Verilog concatenation (MSB first) of the map with these columns applied to ``src``."""
    parts = []
    for o in reversed(range(bits)):
        terms = [f"{src}[{i}]" for i, c in enumerate(cols) if c >> o & 1]
        parts.append(" ^ ".join(terms) if terms else "1'b0")
    return "{" + ", ".join(parts) + "}"


def _lfsr_chain(g: AddressGen, down: bool) -> list[str]:
    sw, tag = g.state_bits, "dn" if down else "up"
    lines = []
    for j in range(1, g.skip + 2):
        expr = _xor_expr(lfsr_step_columns(sw, j, inverse=down), sw, "ag")
        lines.append(f"    wire [{sw - 1}:0] ag_{tag}{j} = {expr};")
    chain = f"ag_{tag}{g.skip + 1}"
    for j in reversed(range(1, g.skip + 1)):
        chain = f"(ag_{tag}{j} < {_lit(sw, g.words)}) ? ag_{tag}{j} : {chain}"
    if down:
        lines.append(f"    assign ag_dn = (ag == {_lit(sw, g.blocks[0][0])}) ? {_lit(sw, 0)} : {chain};")
    else:
        lines.append(f"    assign ag_up = (ag == {_lit(sw, 0)}) ? {_lit(sw, g.blocks[0][0])} : {chain};")
    return lines


def _gray_next(g: AddressGen, down: bool) -> str:
    sw = g.state_bits
    chain = f"ag - {_lit(sw, 1)}" if down else f"ag + {_lit(sw, 1)}"
    pairs = zip(g.blocks, g.blocks[1:], strict=False)
    for lo_blk, hi_blk in reversed(list(pairs)):
        if down:
            chain = f"(ag == {_lit(sw, hi_blk[0])}) ? {_lit(sw, lo_blk[1])} : {chain}"
        else:
            chain = f"(ag == {_lit(sw, lo_blk[1])}) ? {_lit(sw, hi_blk[0])} : {chain}"
    return f"    assign ag_{'dn' if down else 'up'} = {chain};"


def address_gen_verilog(g: AddressGen) -> str:
    """Declarations computing ``ag_addr``, ``ag_up`` and ``ag_dn`` from the state register ``ag``."""
    sw, aw = g.state_bits, g.addr_bits
    lines = [
        f"    // address generator: {g.kind}, {g.words} words, state {sw} bits",
        f"    wire [{aw - 1}:0] ag_addr;",
        f"    wire [{sw - 1}:0] ag_up;",
        f"    wire [{sw - 1}:0] ag_dn;",
    ]
    if g.kind == "lfsr":
        lines += _lfsr_chain(g, False) + _lfsr_chain(g, True)
        addr = "ag" if sw == aw else f"ag[{aw - 1}:0]"
        lines.append(f"    assign ag_addr = {addr};")
        return "\n".join(lines)
    if g.kind == "gray":
        lines += [_gray_next(g, False), _gray_next(g, True)]
    else:
        lines += [f"    assign ag_up = ag + {_lit(sw, 1)};", f"    assign ag_dn = ag - {_lit(sw, 1)};"]
    if g.kind == "gray":
        addr = f"ag ^ {{1'b0, ag[{sw - 1}:1]}}" if sw > 1 else "ag"
    elif g.kind == "complement":
        half = f"{{1'b0, ag[{sw - 1}:1]}}" if sw > 1 else _lit(1, 0)
        addr = f"ag[0] ? ({_lit(aw, g.words - 1)} - {half}) : {half}"
    elif g.kind == "row-fast":
        rb = g.row_bits
        addr = f"{{ag[{rb - 1}:0], ag[{aw - 1}:{rb}]}}"
    else:
        addr = "ag"
    lines.append(f"    assign ag_addr = {addr};")
    return "\n".join(lines)
