"""The neighbours universe counted exactly at any size, in memory that does not grow with the memory
(except for walks without a closed form, built once: 16 bytes a word).

:meth:`Arrangement.resolve` builds per-word arrays (about 130 bytes a word: 17 GB for 128 Mwords)
and the pair tables of :mod:`memcheck.faults.universe` look at every one of the 8 x cells neighbour
pairs. Here the same tables come from the structure of the layout instead:

* a word's class (its cells' signature codes) depends only on its row and mux-column parities, so
  the classes, their codes and how many words each has are computed from at most four words;
* every neighbour pair belongs to a :class:`~memcheck.faults.lattice.Band` (word pairs a fixed step
  apart, with a fixed list of bit pairs), and a band's pairs are counted by the relation and the
  parity classes of their words (:mod:`memcheck.faults.lattice`): O(1) for step-decided walks,
  streamed in bounded blocks otherwise; the bit pairs multiply the word-pair counts;
* a stuck-open cell's context (the classes of its word and of the words before and after it in
  the walk, and the walk's two ends) is counted in blocks of addresses; its verdict comes from
  the compact memory of one representative word per context (:mod:`memcheck.faults.sparse`);
* the example of an escape is the first pair of its key: each band records the first base word of
  every (relation, parity class), and the example is simulated on its compact memory.

The tables are equal (same keys, same counts) to :func:`~memcheck.faults.universe.pair_table_neighbours`,
:func:`~memcheck.faults.universe.word_pair_table`, :func:`~memcheck.faults.universe.cell_table` and
:func:`~memcheck.faults.universe.sof_contexts` on the fully resolved memory, and the examples are the
same instances (tests/test_faults_neighbours.py checks both, and the counts against instance-by-
instance simulation).
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from dataclasses import dataclass

import numpy as np
import numpy.typing as npt

from memcheck.faults.counts import count_keys, merge_counts, scaled
from memcheck.faults.fast import sof_detection
from memcheck.faults.fast_stream import Plan
from memcheck.faults.geometry import Arrangement, Resolved, schedule, word_classes
from memcheck.faults.instances import Cell, FaultInstance, FaultResult, StuckOpenFault
from memcheck.faults.lattice import STEP_ORDERS, BandCounter, Walk, cell_bands, parity_counts, word_band
from memcheck.faults.sparse import compact, simulate_sparse
from memcheck.faults.universe import (
    CELL_OFFSETS,
    WORD_OFFSETS,
    CellTable,
    PairTable,
    WordPairTable,
    _pack,
    _unpack,
    require_layout,
)
from memcheck.march.backgrounds import resolve_backgrounds
from memcheck.march.notation import MarchTest
from memcheck.march.orders import AddressOrder

IntArray = npt.NDArray[np.int64]

#: Addresses per block of the stuck-open context count (walks that are not step-decided).
BLOCK = 1 << 21


def axis_types(size: int) -> list[tuple[int, int]]:
    """Rows (or mux columns) ``0..size-1`` grouped by type: the first two and the last two one each,
    the others by parity. Returns (smallest member, members) per type."""
    out = [(i, 1) for i in sorted({i for i in (0, 1, size - 2, size - 1) if 0 <= i < size})]
    mid = parity_counts(2, size - 2)
    out += [(2 + x, mid[x]) for x in (0, 1) if mid[x]]
    return out


@dataclass(eq=False)
class NeighbourCounts:
    """The count source of the neighbours universe (the interface of :class:`WholeCounts`)."""

    plan: Plan  # class codes only: its resolved arrays cover the representative words, not the memory
    rows: int
    cols: int
    pq_class: IntArray  # word class of each parity class (row & 1) * 2 + (col & 1); -1 when absent
    walk: Walk
    bands: BandCounter

    @classmethod
    def build(cls, test: MarchTest, setup: Arrangement) -> NeighbourCounts:
        rows, cols = require_layout(setup)
        bgs = resolve_backgrounds(setup.background_spec, setup.width, setup.layout)
        present = [pq for pq in range(4) if (pq >> 1) < rows and (pq & 1) < cols]
        reps = np.array([(pq >> 1) * cols + (pq & 1) for pq in present], np.int64)
        wclass, wpar = word_classes(bgs, reps, setup.layout)
        pq_class = np.full(4, -1, np.int64)
        pq_class[present] = wclass
        base = np.array([[(bg.base >> b) & 1 for b in range(setup.width)] for bg in bgs], dtype=np.uint8)
        ids = np.arange(len(reps), dtype=np.int64)
        rs = Resolved(setup, bgs, ids, ids.copy(), base, wclass, wpar)
        plan = Plan(test, setup, rs, schedule(test, len(bgs), setup.any_order))
        walk = Walk(AddressOrder(setup.order, setup.words, setup.layout, setup.seed))
        return cls(plan, rows, cols, pq_class, walk, BandCounter(walk, cols))

    @property
    def setup(self) -> Arrangement:
        return self.plan.setup

    def _classes_of(self, addresses: IntArray) -> IntArray:
        cols = self.cols
        row_odd = (addresses >> (cols.bit_length() - 1) if cols & (cols - 1) == 0 else addresses // cols) & 1
        col_odd = addresses & 1 if cols % 2 == 0 else (addresses % cols) & 1
        out: IntArray = self.pq_class[row_odd << 1 | col_odd]
        return out

    # -- tables -------------------------------------------------------------------------------------

    def words_per_class(self) -> IntArray:
        out = np.zeros(self.plan.rs.wpar.shape[0], np.int64)
        rp, cp = parity_counts(0, self.rows), parity_counts(0, self.cols)
        for pq in range(4):
            if self.pq_class[pq] >= 0:
                out[self.pq_class[pq]] += rp[pq >> 1] * cp[pq & 1]
        return out

    def cell_table(self) -> CellTable:
        codes = self.plan.rs.class_codes()
        u, c = merge_counts([codes.reshape(-1)], [np.repeat(self.words_per_class(), codes.shape[1])])
        return CellTable(u, c)

    def _cell_rows(self) -> Iterator[tuple[IntArray, int, int, int, IntArray, IntArray]]:
        """Per cell band and (relation, parity class) that occurs: the key of each of its bit pairs,
        the word-pair count, the first victim word and the step to its aggressor word, the bit pairs."""
        codes = self.plan.rs.class_codes()
        for dr, dc in CELL_OFFSETS:
            for band, ba, bv in cell_bands(self.rows, self.cols, self.setup.width, dr, dc):
                if band.size == 0 or ba.size == 0:
                    continue
                step = band.step(self.cols)
                scope = 0 if step == 0 else (1 if step < 0 else 2)
                n = self.bands.counts(band)
                for first, pq in zip(*np.nonzero(n.count), strict=True):
                    rel = 1 if step == 0 else (2 if first else 3)
                    ca = codes[self.pq_class[pq ^ band.delta], ba]
                    cv = codes[self.pq_class[pq], bv]
                    keys = _pack(np.full(ca.size, rel), np.full(ca.size, scope), ca, cv, 1 << self.plan.rs.nbg)
                    yield keys, int(n.count[first, pq]), int(n.base[first, pq]), step, ba, bv

    def pair_table(self) -> PairTable:
        keys: list[IntArray] = []
        counts: list[IntArray] = []
        for k, n, _, _, _, _ in self._cell_rows():
            u, c = count_keys(k)
            keys.append(u)
            counts.append(scaled(c, n))
        uk, uc = merge_counts(keys, counts)
        return _unpack(uk, uc, 1 << self.plan.rs.nbg)

    def _word_rows(self) -> Iterator[tuple[int, int, int, int]]:
        """Per word band and (relation, parity class) that occurs: key, count, first x, first y."""
        nwc = int(self.plan.rs.wpar.shape[0])
        for dr, dc in WORD_OFFSETS:
            band = word_band(self.rows, self.cols, dr, dc)
            if band.size == 0:
                continue
            n = self.bands.counts(band)
            for first, pq in zip(*np.nonzero(n.count), strict=True):
                relation = 2 if first else 1  # y (the shifted word) first: YX
                key = (relation * nwc + int(self.pq_class[pq])) * nwc + int(self.pq_class[pq ^ band.delta])
                x = int(n.base[first, pq])
                yield key, int(n.count[first, pq]), x, x + band.step(self.cols)

    def word_pair_table(self) -> WordPairTable:
        nwc = self.plan.rs.wpar.shape[0]
        rows = list(self._word_rows())
        u, c = merge_counts([np.array([r[0]], np.int64) for r in rows], [np.array([r[1]], np.int64) for r in rows])
        return WordPairTable(u // (nwc * nwc), (u // nwc) % nwc, u % nwc, c)

    # -- stuck-open cells ---------------------------------------------------------------------------

    def sof_contexts(self) -> tuple[IntArray, IntArray]:
        """Like :func:`memcheck.faults.universe.sof_contexts`: the smallest address of each context
        and how many words share it.

        For a step-decided walk a word's walk neighbours are the next or previous mux column or row
        (or the wrap to the next row or column), so its context depends only on the type of its row
        and of its mux column (:func:`axis_types`): one representative word per pair of types. Other
        walks are counted in blocks of addresses."""
        nwc = int(self.plan.rs.wpar.shape[0])
        nkeys = 5 * (nwc + 1) * (nwc + 1) * nwc
        total = np.zeros(nkeys, np.int64)
        first = np.full(nkeys, -1, np.int64)
        if self.walk.order.kind in STEP_ORDERS:
            rt, ct = axis_types(self.rows), axis_types(self.cols)
            a = np.array([r * self.cols + c for r, _ in rt for c, _ in ct], np.int64)
            weight = np.array([nr * nc for _, nr in rt for _, nc in ct], np.int64)
            key = self._context_keys(a)
            np.add.at(total, key, weight)
            for k, w in sorted(zip(key.tolist(), a.tolist(), strict=True), reverse=True):
                first[k] = w  # the smallest address of each key is written last
        else:
            for lo in range(0, self.setup.words, BLOCK):
                a = np.arange(lo, min(self.setup.words, lo + BLOCK), dtype=np.int64)
                key = self._context_keys(a)
                total += np.bincount(key, minlength=nkeys)
                new = np.flatnonzero(first[key] < 0)
                if new.size:
                    u, fi = np.unique(key[new], return_index=True)
                    first[u] = a[new[fi]]
        keep = np.flatnonzero(total)
        return first[keep], total[keep]

    def _context_keys(self, a: IntArray) -> IntArray:
        """Stuck-open context of each address: its walk ends (0 elsewhere), the classes of the words
        before and after it in the walk (``nwc`` for none) and its own class."""
        n = self.setup.words
        nwc = int(self.plan.rs.wpar.shape[0])
        p = self.walk.pos(a)
        prev = np.full(a.size, nwc, np.int64)
        has = p > 0
        prev[has] = self._classes_of(self.walk.addr(p[has] - 1))
        nxt = np.full(a.size, nwc, np.int64)
        has = p < n - 1
        nxt[has] = self._classes_of(self.walk.addr(p[has] + 1))
        special = np.where(p < 2, p + 1, np.where(p > n - 3, p - n + 5, 0))
        out: IntArray = ((special * (nwc + 1) + prev) * (nwc + 1) + nxt) * nwc + self._classes_of(a)
        return out

    def sof_detection(self, words: IntArray, bits: IntArray) -> tuple[npt.NDArray[np.bool_], npt.NDArray[np.bool_]]:
        """:func:`memcheck.faults.fast.sof_detection` of these cells, on their compact memory."""
        faults = [StuckOpenFault(Cell(int(w), int(b))) for w, b in zip(words, bits, strict=True)]
        plan, _, real = compact(self.plan.test, self.setup, faults)
        order = np.argsort(real)
        local = order[np.searchsorted(real[order], words)]
        return sof_detection(plan, local, bits)

    # -- examples -----------------------------------------------------------------------------------

    def first_word_of_class(self, c: int) -> int:
        return min((pq >> 1) * self.cols + (pq & 1) for pq in range(4) if self.pq_class[pq] == c)

    def find_cells(self, codes_wanted: list[int]) -> dict[int, Cell]:
        codes = self.plan.rs.class_codes()
        out: dict[int, Cell] = {}
        for code in codes_wanted:
            cands = [
                (self.first_word_of_class(c), int(np.flatnonzero(codes[c] == code)[0]))
                for c in range(codes.shape[0])
                if (codes[c] == code).any()
            ]
            if cands:
                out[code] = Cell(*min(cands))
        return out

    def find_pairs(self, keys: list[int]) -> dict[int, tuple[Cell, Cell]]:
        """Like :func:`memcheck.faults.universe.find_pairs` for the neighbours universe: the first
        instance (by victim cell, then aggressor cell) of each key, from each band's first pair."""
        width = self.setup.width
        wanted = set(keys)
        best: dict[int, tuple[int, int]] = {}
        for k, _, wv, step, ba, bv in self._cell_rows():
            for i in np.flatnonzero(np.isin(k, list(wanted))).tolist():
                cand = (wv * width + int(bv[i]), (wv + step) * width + int(ba[i]))
                key = int(k[i])
                if key not in best or cand < best[key]:
                    best[key] = cand
        return {k: (Cell(*divmod(a, width)), Cell(*divmod(v, width))) for k, (v, a) in best.items()}

    def find_word_pairs(self, keys: list[int]) -> dict[int, tuple[int, int]]:
        """Like :func:`memcheck.faults.universe.find_word_pairs` for the neighbours universe."""
        wanted = set(keys)
        best: dict[int, tuple[int, int]] = {}
        for key, _, x, y in self._word_rows():
            if key in wanted and (key not in best or (x, y) < best[key]):
                best[key] = (x, y)
        return best

    def simulate(self, faults: Sequence[FaultInstance]) -> list[FaultResult]:
        return simulate_sparse(self.plan.test, faults, self.setup)
