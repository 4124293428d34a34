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
* examples of escapes are searched in blocks of rows, stopping when every wanted key is found,
  and simulated on their compact memory.

The tables are equal (same keys, same counts) to :func:`~memcheck.faults.universe.pair_table_neighbours`,
:func:`~memcheck.faults.universe.word_pair_table`, :func:`~memcheck.faults.universe.cell_table` and
:func:`~memcheck.faults.universe.sof_contexts` on the fully resolved memory, and the examples are the
same instances (tests/test_faults_neighbours.py checks both, and the counts against instance-by-
instance simulation).
"""

from __future__ import annotations

from collections.abc import Callable, Iterator, Sequence
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
    _first_by_key,
    _pack,
    _unpack,
    require_layout,
)
from memcheck.march.backgrounds import resolve_backgrounds
from memcheck.march.notation import MarchTest
from memcheck.march.orders import AddressOrder

IntArray = npt.NDArray[np.int64]

_Batches = Callable[[int, int], Iterator[tuple["IntArray", "IntArray", "IntArray"]]]

#: Addresses per block of the stuck-open context count and cells per block of the example search.
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

    def pair_table(self) -> PairTable:
        codes = self.plan.rs.class_codes()
        ncode = 1 << self.plan.rs.nbg
        keys: list[IntArray] = []
        counts: list[IntArray] = []
        for dr, dc in CELL_OFFSETS:
            for band, ba, bv in cell_bands(self.rows, self.cols, self.setup.width, dr, dc):
                if band.size == 0 or ba.size == 0:
                    continue
                step = band.dr * self.cols + band.dc
                scope = 0 if step == 0 else (1 if step < 0 else 2)
                n = self.bands.counts(band)
                for first, pq in zip(*np.nonzero(n), strict=True):
                    rel = 1 if step == 0 else (2 if first else 3)
                    ca = codes[self.pq_class[pq ^ band.delta], ba]
                    cv = codes[self.pq_class[pq], bv]
                    u, c = count_keys(_pack(np.full(ca.size, rel), np.full(ca.size, scope), ca, cv, ncode))
                    keys.append(u)
                    counts.append(scaled(c, int(n[first, pq])))
        uk, uc = merge_counts(keys, counts)
        return _unpack(uk, uc, ncode)

    def word_pair_table(self) -> WordPairTable:
        nwc = self.plan.rs.wpar.shape[0]
        keys: list[IntArray] = []
        counts: list[IntArray] = []
        for dr, dc in WORD_OFFSETS:
            band = word_band(self.rows, self.cols, dr, dc)
            n = self.bands.counts(band) if band.size else np.zeros((2, 4), np.int64)
            for first, pq in zip(*np.nonzero(n), strict=True):
                relation = 2 if first else 1  # y (the shifted word) first: YX
                key = (relation * nwc + self.pq_class[pq]) * nwc + self.pq_class[pq ^ band.delta]
                keys.append(np.array([key], np.int64))
                counts.append(np.array([n[first, pq]], np.int64))
        u, c = merge_counts(keys, counts)
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

    def _row_blocks(self, per_row: int) -> Iterator[tuple[int, int]]:
        step = max(1, BLOCK // max(1, per_row))
        for r0 in range(0, self.rows, step):
            yield r0, min(self.rows, r0 + step)

    def _cell_pairs(self, r0: int, r1: int) -> Iterator[tuple[IntArray, IntArray, IntArray]]:
        """(key, victim cell, aggressor cell) of every neighbour pair whose victim is in rows r0..r1-1."""
        width = self.setup.width
        pcols = width * self.cols
        codes = self.plan.rs.class_codes()
        for dr, dc in CELL_OFFSETS:
            rv = np.arange(max(r0, -dr), min(r1, self.rows - dr), dtype=np.int64)
            pv = np.arange(max(0, -dc), pcols - max(0, dc), dtype=np.int64)
            if rv.size == 0 or pv.size == 0:
                continue
            rv, pv = np.repeat(rv, pv.size), np.tile(pv, rv.size)
            ra, pa = rv + dr, pv + dc
            wa, ba = ra * self.cols + pa % self.cols, pa // self.cols
            wv, bv = rv * self.cols + pv % self.cols, pv // self.cols
            rel = np.where(wa == wv, 1, np.where(self.walk.pos(wa) < self.walk.pos(wv), 2, 3))
            scope = np.where(wa == wv, 0, np.where(wa < wv, 1, 2))
            ca, cv = codes[self._classes_of(wa), ba], codes[self._classes_of(wv), bv]
            yield _pack(rel, scope, ca, cv, 1 << self.plan.rs.nbg), wv * width + bv, wa * width + ba

    def _first_in_blocks(self, per_row: int, batches_of: _Batches, wanted: IntArray) -> dict[int, tuple[int, int]]:
        """The first instance of each wanted key, rows block by block, until every key is found."""
        best: dict[int, tuple[int, int]] = {}
        for r0, r1 in self._row_blocks(per_row):
            found = _first_by_key(batches_of(r0, r1), wanted)
            for k, v in found.items():
                if k not in best or v < best[k]:
                    best[k] = v
            if len(best) == len(wanted):
                break
        return best

    def find_pairs(self, keys: list[int]) -> dict[int, tuple[Cell, Cell]]:
        """Like :func:`memcheck.faults.universe.find_pairs` for the neighbours universe."""
        width = self.setup.width
        wanted = np.array(sorted(set(keys)), np.int64)
        if wanted.size == 0:
            return {}
        best = self._first_in_blocks(8 * width * self.cols, self._cell_pairs, wanted)
        return {k: (Cell(*divmod(a, width)), Cell(*divmod(v, width))) for k, (v, a) in best.items()}

    def _word_pairs(self, r0: int, r1: int) -> Iterator[tuple[IntArray, IntArray, IntArray]]:
        nwc = int(self.plan.rs.wpar.shape[0])
        for dr, dc in WORD_OFFSETS:
            band = word_band(self.rows, self.cols, dr, dc)
            r = np.arange(max(r0, band.r0), min(r1, band.r1), dtype=np.int64)
            c = np.arange(band.c0, band.c1, dtype=np.int64)
            if r.size == 0 or c.size == 0:
                continue
            x = (r[:, None] * self.cols + c[None, :]).reshape(-1)
            y = x + dr * self.cols + dc
            rel = np.where(self.walk.pos(x) < self.walk.pos(y), 1, 2)
            yield (rel * nwc + self._classes_of(x)) * nwc + self._classes_of(y), x, y

    def find_word_pairs(self, keys: list[int]) -> dict[int, tuple[int, int]]:
        """Like :func:`memcheck.faults.universe.find_word_pairs` for the neighbours universe."""
        wanted = np.array(sorted(set(keys)), np.int64)
        if wanted.size == 0:
            return {}
        return self._first_in_blocks(4 * self.cols, self._word_pairs, wanted)

    def simulate(self, faults: Sequence[FaultInstance]) -> list[FaultResult]:
        return simulate_sparse(self.plan.test, faults, self.setup)
