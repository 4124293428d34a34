"""Address orders: which word a March element visits at each step.

An order is a permutation of ``range(words)``; ``⇑`` walks it forwards and ``⇓`` walks the exact
reverse, so every March test stays a March test whichever order is chosen (van de Goor's rule that
up and down only need to be inverses of each other).

Kinds
-----
``linear``      0, 1, 2, ... (binary counting).
``gray``        reflected Gray code ``i ^ (i >> 1)``; for a word count that is not a power of two
                the codes >= ``words`` are skipped (order kept, still a permutation).
``complement``  address complement: 0, N-1, 1, N-2, ...; for N a power of two each address is
                followed by its bitwise complement (000, 111, 001, 110, ...).
``lfsr``        pseudo-random: address 0 first, then the states of a maximal-length Galois LFSR
                over ``k = max(2, ceil(log2 words))`` bits starting from a non-zero state chosen by
                ``seed`` (default 1); states >= ``words`` are skipped.
``col-fast``    with a layout of ``rows x cols`` (column multiplexing): the column (mux select)
                changes fastest. Addresses map as ``address = row * cols + col`` (the low address
                bits drive the column multiplexer, common practice), so this equals ``linear``.
``row-fast``    with a layout: the row changes fastest: (r0,c0), (r1,c0), ... (rR-1,c0), (r0,c1), ...

Orders are computed in slices so a linear or closed-form order never materialises the whole
permutation; ``gray`` (non power of two) and ``lfsr`` are materialised once (8 bytes per word).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Literal

import numpy as np
import numpy.typing as npt

from memcheck.errors import UsageError

OrderKind = Literal["linear", "gray", "complement", "lfsr", "row-fast", "col-fast"]
ORDER_KINDS: tuple[str, ...] = ("linear", "gray", "complement", "lfsr", "row-fast", "col-fast")

MAX_WORDS = 1 << 32

IntArray = npt.NDArray[np.int64]

# Maximal-length LFSR taps (exponents of the feedback polynomial besides x^0), from
# P. Alfke, "Efficient Shift Registers, LFSR Counters, and Long Pseudo-Random Sequence Generators",
# Xilinx XAPP052, 1996 (table values from memory; tests prove each polynomial primitive).
LFSR_TAPS: dict[int, tuple[int, ...]] = {
    2: (2, 1),
    3: (3, 2),
    4: (4, 3),
    5: (5, 3),
    6: (6, 5),
    7: (7, 6),
    8: (8, 6, 5, 4),
    9: (9, 5),
    10: (10, 7),
    11: (11, 9),
    12: (12, 6, 4, 1),
    13: (13, 4, 3, 1),
    14: (14, 5, 3, 1),
    15: (15, 14),
    16: (16, 15, 13, 4),
    17: (17, 14),
    18: (18, 11),
    19: (19, 6, 2, 1),
    20: (20, 17),
    21: (21, 19),
    22: (22, 21),
    23: (23, 18),
    24: (24, 23, 22, 17),
    25: (25, 22),
    26: (26, 6, 2, 1),
    27: (27, 5, 2, 1),
    28: (28, 25),
    29: (29, 27),
    30: (30, 6, 4, 1),
    31: (31, 28),
    32: (32, 22, 2, 1),
}


def address_bits(words: int) -> int:
    """Bits needed to address ``words`` words (at least 1)."""
    return max(1, (words - 1).bit_length())


def parse_layout(text: str) -> tuple[int, int]:
    """Parse ``ROWSxCOLS`` (e.g. ``256x4``) into ``(rows, cols)``."""
    parts = text.lower().replace("*", "x").split("x")
    if len(parts) != 2 or not all(p.strip().isdigit() for p in parts):
        raise UsageError(f"a layout is ROWSxCOLS such as 256x4, not {text!r}")
    rows, cols = int(parts[0]), int(parts[1])
    if rows < 1 or cols < 1:
        raise UsageError(f"layout {text!r}: rows and columns must be at least 1")
    return rows, cols


def check_geometry(words: int, layout: tuple[int, int] | None) -> None:
    """Reject word counts and layouts no order can serve, with the reason."""
    if isinstance(words, bool) or not isinstance(words, int | np.integer) or not 1 <= words <= MAX_WORDS:
        raise UsageError(f"words must be an integer from 1 to 2**32, not {words!r}")
    if layout is not None:
        if len(layout) != 2 or not all(isinstance(v, int | np.integer) and v >= 1 for v in layout):
            raise UsageError(f"a layout is (rows, cols) with both at least 1, not {layout!r}")
        rows, cols = int(layout[0]), int(layout[1])
        if rows * cols != words:
            raise UsageError(
                f"layout {rows}x{cols} holds {rows * cols} words but the memory has {words}; "
                "rows x cols (column multiplexing) must equal the word count"
            )


def lfsr_sequence(bits: int, start: int = 1) -> IntArray:
    """All ``2**bits - 1`` states of the maximal-length Galois LFSR for ``bits``, from ``start``.

    Vectorised by doubling: the step map is linear over GF(2), so the next block of ``m`` states is
    the image of the previous block under the map raised to the ``m``-th power, applied column by
    column (``bits`` numpy passes per doubling).
    """
    if bits not in LFSR_TAPS:
        raise UsageError(f"no LFSR polynomial for {bits} address bits (supported: 2 to 32)")
    period = (1 << bits) - 1
    if not 1 <= start <= period:
        raise UsageError(f"an LFSR start state must be 1..{period}, not {start}")
    mask = 0
    for t in LFSR_TAPS[bits]:
        mask |= 1 << (t - 1)

    def step(s: int) -> int:
        return (s >> 1) ^ (mask if s & 1 else 0)

    # columns[i] = image of the unit vector e_i under map^filled; starts as the map itself
    columns = [step(1 << i) for i in range(bits)]
    out = np.empty(period, dtype=np.int64)
    out[0] = start
    filled = 1
    while filled < period:
        take = min(filled, period - filled)
        src = out[:take]
        nxt = np.zeros(take, dtype=np.int64)
        for i, col in enumerate(columns):
            nxt ^= ((src >> i) & 1) * col
        out[filled : filled + take] = nxt
        filled += take
        columns = [_apply(columns, c) for c in columns]  # map^filled -> map^(2*filled)
    return out


def _apply(columns: list[int], v: int) -> int:
    """Image of bit vector ``v`` under the GF(2) linear map with the given columns."""
    r = 0
    i = 0
    while v:
        if v & 1:
            r ^= columns[i]
        v >>= 1
        i += 1
    return r


@dataclass(frozen=True)
class AddressOrder:
    """One address order for one memory; ``up(start, stop)`` and ``down(start, stop)`` give slices
    of the ⇑ and ⇓ walks without building the whole permutation when a closed form exists."""

    kind: str
    words: int
    layout: tuple[int, int] | None = None
    seed: int | None = None
    _full: list[IntArray] = field(default_factory=list, init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        if self.kind not in ORDER_KINDS:
            raise UsageError(f"unknown address order {self.kind!r}; choose one of {', '.join(ORDER_KINDS)}")
        check_geometry(self.words, self.layout)
        if self.kind in ("row-fast", "col-fast") and self.layout is None:
            raise UsageError(f"address order {self.kind!r} needs a layout (ROWSxCOLS, e.g. --layout 256x4)")
        if self.seed is not None and (isinstance(self.seed, bool) or not isinstance(self.seed, int)):
            raise UsageError(f"an LFSR seed is an integer, not {self.seed!r}")

    @property
    def lfsr_bits(self) -> int:
        return max(2, address_bits(self.words))

    @property
    def lfsr_start(self) -> int:
        """The LFSR's first non-zero state: ``seed mod (2**k - 1) + 1`` (seed None means state 1)."""
        period = (1 << self.lfsr_bits) - 1
        return 1 if self.seed is None else self.seed % period + 1

    def _materialised(self) -> IntArray:
        if not self._full:
            n = self.words
            if self.kind == "gray":
                g = np.arange(1 << address_bits(n), dtype=np.int64)
                g ^= g >> 1
                full = g[g < n]
            else:  # lfsr
                seq = lfsr_sequence(self.lfsr_bits, self.lfsr_start)
                full = np.concatenate([np.zeros(1, dtype=np.int64), seq[seq < n]])
            full.setflags(write=False)
            self._full.append(full)
        return self._full[0]

    def up(self, start: int = 0, stop: int | None = None) -> IntArray:
        """Addresses at positions ``start..stop-1`` of the ⇑ walk."""
        n = self.words
        stop = n if stop is None else stop
        if not 0 <= start <= stop <= n:
            raise ValueError(f"order slice {start}:{stop} outside 0:{n}")
        i = np.arange(start, stop, dtype=np.int64)
        k = self.kind
        if k in ("linear", "col-fast"):
            return i
        if k == "complement":
            half = i >> 1
            return np.where(i & 1, n - 1 - half, half)
        if k == "row-fast":
            assert self.layout is not None
            rows, cols = self.layout
            return (i % rows) * cols + i // rows
        if k == "gray" and n & (n - 1) == 0:
            return i ^ (i >> 1)
        return self._materialised()[start:stop].copy()

    def down(self, start: int = 0, stop: int | None = None) -> IntArray:
        """Addresses at positions ``start..stop-1`` of the ⇓ walk: the exact reverse of ⇑."""
        n = self.words
        stop = n if stop is None else stop
        if not 0 <= start <= stop <= n:
            raise ValueError(f"order slice {start}:{stop} outside 0:{n}")
        return self.up(n - stop, n - start)[::-1].copy()

    def walk(self, direction: str, start: int = 0, stop: int | None = None) -> IntArray:
        """``up`` or ``down`` by name."""
        if direction == "up":
            return self.up(start, stop)
        if direction == "down":
            return self.down(start, stop)
        raise ValueError(f"direction must be up or down, not {direction!r}")


def address_order(kind: str, words: int, *, layout: tuple[int, int] | None = None, seed: int | None = None) -> IntArray:
    """The ⇑ order of ``kind`` for ``words`` words as an int64 permutation; ⇓ is its reverse."""
    return AddressOrder(kind, words, layout, seed).up()


def address_to_row_col(addresses: IntArray, layout: tuple[int, int] | None) -> tuple[IntArray, IntArray]:
    """Physical (row, mux column) of each address: ``row = a // cols``, ``col = a % cols``.

    Without a layout every word is its own row (column 0).
    """
    if layout is None:
        return addresses, np.zeros_like(addresses)
    cols = int(layout[1])
    return addresses // cols, addresses % cols
