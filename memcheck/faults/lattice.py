"""Word pairs of the neighbour universe counted from the layout, without per-word arrays.

Every neighbour pair of the neighbours universe (:mod:`memcheck.faults.universe`) is a pair of
words a fixed step apart on the ``rows x cols`` word grid, repeated over a rectangle of base words
(a :class:`Band`): a cell and its neighbour one physical column to the right are in words one mux
column apart (the same bit), or, at the last mux column, in the first mux column's word of the next
bit. What the fast engine needs from such a pair is

* whether the shifted word comes first in the ⇑ walk (the pair's relation),
* the two words' classes (how each background flips them), and a word's class depends only on the
  parity of its row and of its mux column (:func:`memcheck.march.backgrounds.parity`).

So :meth:`BandCounter.counts` counts the pairs of a band by (shifted word first?, row parity,
column parity of the base word), with the first such pair. For walks where the step alone decides
which word comes first (``linear``, ``col-fast``, ``row-fast``) that is a product of parity counts,
O(1) whatever the size; a Gray walk on a power-of-two layout splits into a row term XOR a column
term (:func:`gray_separable`, O(rows + cols)); for the other walks the band is streamed in blocks of
rows with numpy (bounded memory), positions from the walk's closed form, or from the walk built
once (``lfsr``, ``gray`` on a word count that is not a power of two). A band and its reverse
(every pair swapped) are the same pairs, so each is counted once.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace

import numpy as np
import numpy.typing as npt

from memcheck.faults.sparse import addresses_at, closed_form, positions_of
from memcheck.march.orders import AddressOrder

IntArray = npt.NDArray[np.int64]

#: Word pairs per streamed block: bounds the memory of a streamed band (about 100 bytes a pair).
BLOCK_PAIRS = 1 << 21
#: Walks where the step between two words alone decides which comes first.
STEP_ORDERS = ("linear", "col-fast", "row-fast")


@dataclass(frozen=True)
class Band:
    """Word pairs (base ``(r, c)``, shifted ``(r + dr, c + dc)``) for rows ``r0 <= r < r1`` and
    mux columns ``c0 <= c < c1`` of the base word."""

    dr: int
    dc: int
    r0: int
    r1: int
    c0: int
    c1: int

    @property
    def size(self) -> int:
        return max(0, self.r1 - self.r0) * max(0, self.c1 - self.c0)

    @property
    def delta(self) -> int:
        """Parity class of the shifted word = parity class of the base word XOR this."""
        return ((self.dr & 1) << 1) | (self.dc & 1)

    def step(self, cols: int) -> int:
        """Address of the shifted word minus address of the base word."""
        return self.dr * cols + self.dc

    def reverse(self) -> Band:
        """The same pairs, base and shifted swapped."""
        return Band(-self.dr, -self.dc, self.r0 + self.dr, self.r1 + self.dr, self.c0 + self.dc, self.c1 + self.dc)


def parity_counts(lo: int, hi: int) -> tuple[int, int]:
    """How many integers of ``[lo, hi)`` are even and odd."""
    if hi <= lo:
        return 0, 0
    odd = hi // 2 - lo // 2
    return hi - lo - odd, odd


@dataclass(eq=False)
class Walk:
    """Positions in the ⇑ walk of any addresses, and addresses at any positions, without building
    the walk when it has a closed form (else built once: 16 bytes a word)."""

    order: AddressOrder
    _built: list[tuple[IntArray, IntArray]] = field(default_factory=list)

    @property
    def materialised(self) -> bool:
        return not closed_form(self.order)

    def _arrays(self) -> tuple[IntArray, IntArray]:
        if not self._built:
            o = self.order  # a fresh copy builds the walk, so its cache is freed with it
            up = AddressOrder(o.kind, o.words, o.layout, o.seed).up()
            pos = np.empty(self.order.words, dtype=np.int64)
            pos[up] = np.arange(self.order.words, dtype=np.int64)
            self._built.append((up, pos))
        return self._built[0]

    def pos(self, addresses: IntArray) -> IntArray:
        if self.materialised:
            out: IntArray = self._arrays()[1][addresses]
            return out
        return positions_of(self.order, addresses)

    def addr(self, positions: IntArray) -> IntArray:
        if self.materialised:
            out: IntArray = self._arrays()[0][positions]
            return out
        return addresses_at(self.order, positions)


def _step_first(order: AddressOrder, band: Band, cols: int) -> bool:
    """Whether the shifted word comes first, for a walk decided by the step alone."""
    if order.kind == "row-fast":
        return band.dc < 0 or (band.dc == 0 and band.dr < 0)
    return band.dr * cols + band.dc < 0


@dataclass(frozen=True, eq=False)
class BandCount:
    """``count[first, pq]``: pairs of a band by whether the shifted word comes first in the ⇑ walk
    and the base word's parity class ``pq = (row & 1) * 2 + (col & 1)``; ``base[first, pq]`` the
    smallest base address of such a pair (-1: none)."""

    count: IntArray
    base: IntArray

    def __eq__(self, other: object) -> bool:
        return (
            isinstance(other, BandCount)
            and np.array_equal(self.count, other.count)
            and np.array_equal(self.base, other.base)
        )

    __hash__ = None  # type: ignore[assignment]


def _empty() -> BandCount:
    return BandCount(np.zeros((2, 4), np.int64), np.full((2, 4), -1, np.int64))


def _closed_counts(band: Band, first: bool, cols: int) -> BandCount:
    out = _empty()
    rp = parity_counts(band.r0, band.r1)
    cp = parity_counts(band.c0, band.c1)
    for pq in range(4):
        x, y = pq >> 1, pq & 1
        out.count[int(first), pq] = rp[x] * cp[y]
        if rp[x] and cp[y]:  # the first row and column of these parities
            out.base[int(first), pq] = (band.r0 + ((band.r0 ^ x) & 1)) * cols + band.c0 + ((band.c0 ^ y) & 1)
    return out


def _streamed_counts(walk: Walk, band: Band, cols: int, block_pairs: int) -> BandCount:
    out = _empty()
    count = out.count.reshape(-1)
    base_of = out.base.reshape(-1)
    c = np.arange(band.c0, band.c1, dtype=np.int64)
    step = max(1, block_pairs // max(1, c.size))
    col_par = c & 1
    for start in range(band.r0, band.r1, step):
        r = np.arange(start, min(band.r1, start + step), dtype=np.int64)
        base = (r[:, None] * cols + c[None, :]).reshape(-1)
        first = walk.pos(base + (band.dr * cols + band.dc)) < walk.pos(base)
        idx = first * 4 + ((r[:, None] & 1) << 1 | col_par[None, :]).reshape(-1)
        here = np.bincount(idx, minlength=8)
        for v in np.flatnonzero((here > 0) & (base_of < 0)).tolist():
            base_of[v] = base[int(np.argmax(idx == v))]
        count += here
    return out


def gray_separable(order: AddressOrder, cols: int) -> bool:
    """Gray walk on a power-of-two memory with power-of-two mux columns: the position of ``(r, c)``
    is ``ginv(r) * cols + (ginv(c) XOR (cols - 1 if r has odd parity else 0))`` (``ginv`` the inverse
    Gray code: bit k of it is the parity of the bits k and above), so which of two words comes first
    is a row term XOR a column term."""
    n = order.words
    return order.kind == "gray" and n & (n - 1) == 0 and cols & (cols - 1) == 0


def _ginv(x: IntArray) -> IntArray:
    out = x.copy()
    shift = 1
    while shift < 64:
        out ^= out >> shift
        shift <<= 1
    return out


def _split(idx: IntArray, flag: npt.NDArray[np.bool_]) -> tuple[IntArray, IntArray]:
    """``(count[parity, flag], smallest[parity, flag])`` of indices ``idx`` (-1: none)."""
    count = np.zeros((2, 2), np.int64)
    smallest = np.full((2, 2), -1, np.int64)
    for x in (0, 1):
        for f in (0, 1):
            sel = np.flatnonzero(((idx & 1) == x) & (flag == bool(f)))
            count[x, f] = sel.size
            if sel.size:
                smallest[x, f] = idx[sel[0]]
    return count, smallest


def _gray_counts(band: Band, cols: int) -> BandCount:
    """A band under a separable Gray walk (:func:`gray_separable`): O(rows + cols)."""
    r = np.arange(band.r0, band.r1, dtype=np.int64)
    c = np.arange(band.c0, band.c1, dtype=np.int64)
    if band.dr != 0:  # the rows differ: the row term decides
        row_flag, col_flag = _ginv(r + band.dr) < _ginv(r), np.zeros(c.size, bool)
    else:  # same row: the column term, reversed on rows of odd parity
        row_flag, col_flag = (_ginv(r) & 1) == 1, _ginv(c + band.dc) < _ginv(c)
    rc, rmin = _split(r, row_flag)
    cc, cmin = _split(c, col_flag)
    out = _empty()
    for pq in range(4):
        x, y = pq >> 1, pq & 1
        for a in (0, 1):
            for b in (0, 1):
                out.count[a ^ b, pq] += rc[x, a] * cc[y, b]
                if rc[x, a] and cc[y, b]:
                    base = int(rmin[x, a] * cols + cmin[y, b])
                    have = int(out.base[a ^ b, pq])
                    out.base[a ^ b, pq] = base if have < 0 else min(have, base)
    return out


def _merged(parts: list[BandCount]) -> BandCount:
    out = _empty()
    for p in parts:
        out.count[:] += p.count
        keep = (p.base >= 0) & ((out.base < 0) | (p.base < out.base))
        out.base[keep] = p.base[keep]
    return out


def _complement_counts(walk: Walk, band: Band, cols: int, block_pairs: int) -> BandCount:
    """A band under the complement walk: positions rise through the lower half of the addresses and
    fall through the upper half, so rows whose pairs lie in one half are step-decided; only the rows
    that straddle the middle are streamed."""
    half = (walk.order.words + 1) // 2
    step = band.step(cols)
    lo_end = min(band.r1, max(band.r0, -(-(half - (band.c1 - 1) - max(0, step)) // cols)))
    hi_start = max(lo_end, min(band.r1, -(-(half - band.c0 - min(0, step)) // cols)))
    parts = [
        _closed_counts(replace(band, r1=lo_end), step < 0, cols),
        _closed_counts(replace(band, r0=hi_start), step > 0, cols),
    ]
    if hi_start > lo_end:
        parts.append(_streamed_counts(walk, replace(band, r0=lo_end, r1=hi_start), cols, block_pairs))
    return _merged(parts)


@dataclass(eq=False)
class BandCounter:
    """:meth:`counts` of bands, with a cache shared by a band and its reverse."""

    walk: Walk
    cols: int
    block_pairs: int = BLOCK_PAIRS
    _cache: dict[Band, BandCount] = field(default_factory=dict)

    def counts(self, band: Band) -> BandCount:
        """The pairs of ``band`` counted by relation and parity class (see :class:`BandCount`): O(1)
        for step-decided walks, streamed in blocks of rows otherwise."""
        if band in self._cache:
            return self._cache[band]
        rev = band.reverse()
        if rev in self._cache:  # swapped pairs: the other word first, the other word's parity class
            r = self._cache[rev]
            out = _empty()
            for pq in range(4):
                out.count[:, pq ^ band.delta] = r.count[::-1, pq]
                out.base[:, pq ^ band.delta] = np.where(
                    r.base[::-1, pq] < 0, -1, r.base[::-1, pq] + rev.step(self.cols)
                )
        elif band.size == 0:
            out = _empty()
        elif band.step(self.cols) == 0:  # one word: neither comes first
            out = _closed_counts(band, False, self.cols)
        elif self.walk.order.kind in STEP_ORDERS:
            out = _closed_counts(band, _step_first(self.walk.order, band, self.cols), self.cols)
        elif gray_separable(self.walk.order, self.cols):
            out = _gray_counts(band, self.cols)
        elif self.walk.order.kind == "complement":
            out = _complement_counts(self.walk, band, self.cols, self.block_pairs)
        else:
            out = _streamed_counts(self.walk, band, self.cols, self.block_pairs)
        self._cache[band] = out
        return out


def cell_bands(rows: int, cols: int, width: int, dr: int, dc: int) -> list[tuple[Band, IntArray, IntArray]]:
    """The cell pairs (aggressor = victim + (dr, dc) physical rows/columns) as bands of victim words
    with their (aggressor bit, victim bit) lists."""
    r0, r1 = max(0, -dr), rows - max(0, dr)
    bits = np.arange(width, dtype=np.int64)
    if dc == 0:
        return [(Band(dr, 0, r0, r1, 0, cols), bits, bits)]
    if dc > 0:  # the last mux column's right neighbour is the next bit's first mux column
        return [
            (Band(dr, 1, r0, r1, 0, cols - 1), bits, bits),
            (Band(dr, -(cols - 1), r0, r1, cols - 1, cols), bits[:-1] + 1, bits[:-1]),
        ]
    return [
        (Band(dr, -1, r0, r1, 1, cols), bits, bits),
        (Band(dr, cols - 1, r0, r1, 0, 1), bits[1:] - 1, bits[1:]),
    ]


def word_band(rows: int, cols: int, dr: int, dc: int) -> Band:
    """Word pairs (x, y = x + (dr, dc) on the word grid) with both words inside the grid."""
    return Band(dr, dc, max(0, -dr), rows - max(0, dr), max(0, -dc), cols - max(0, dc))
