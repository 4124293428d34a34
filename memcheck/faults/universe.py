"""Fault universes: which fault instances a coverage figure is over.

``all``         every cell for single-cell faults, every ordered pair of distinct cells for two-cell
                faults, every address (pair) for decoder faults;
``neighbours``  single-cell faults on every cell; two-cell faults between each cell and its eight
                physical neighbours (layout needed); decoder faults between each word and the four
                words next to it in the rows x columns word grid (adjacent word lines or mux
                selects);
``sample:K``    K instances per fault class drawn without replacement, uniformly from the ``all``
                universe, with a seeded generator; coverage then carries a Wilson 95% interval;
``sample:K:neighbours``  the same drawn from the ``neighbours`` universe
                (:mod:`memcheck.faults.sampling` builds only the drawn instances).

For ``all`` and ``neighbours`` nothing is enumerated one instance at a time: the fast engine only needs
how many instances share a relation and cell signatures (see :mod:`memcheck.faults.fast`), and those
multiplicities are counted here with numpy (pair counts by address and ⇑ position use an inversion
count, O(words log words)).

Physical cell positions follow :mod:`memcheck.march.backgrounds`: word ``w`` sits at row
``w // cols`` and mux column ``w % cols``; its bit ``b`` at physical column ``b * cols + w % cols``.
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Iterator
from dataclasses import dataclass
from typing import Literal

import numpy as np
import numpy.typing as npt

from memcheck.errors import FaultModelError
from memcheck.faults.counts import count_keys, merge_counts, scaled
from memcheck.faults.fast import af_relation, cell_relation
from memcheck.faults.geometry import Arrangement, Resolved
from memcheck.faults.instances import (
    Cell,
)
from memcheck.march.library import FAULT_CLASSES

IntArray = npt.NDArray[np.int64]

#: Every fault class, in the order of the one list (:data:`memcheck.march.library.FAULT_CLASSES`).
CLASSES: tuple[str, ...] = tuple(FAULT_CLASSES)
TWO_CELL_CLASSES: tuple[str, ...] = tuple(c for c in CLASSES if c.startswith(("CF", "dCF")))
SINGLE_CLASSES: tuple[str, ...] = tuple(c for c in CLASSES if c not in (*TWO_CELL_CLASSES, "SOF", "AF"))
STATIC_CLASSES: tuple[str, ...] = CLASSES[: CLASSES.index("AF") + 1]
DYNAMIC_CLASSES: tuple[str, ...] = CLASSES[CLASSES.index("AF") + 1 :]
SCOPES: tuple[str, ...] = ("intra-word", "aggressor below", "aggressor above")

DEFAULT_SEED = 1
CELL_OFFSETS = ((-1, -1), (-1, 0), (-1, 1), (0, -1), (0, 1), (1, -1), (1, 0), (1, 1))
WORD_OFFSETS = ((-1, 0), (1, 0), (0, -1), (0, 1))


@dataclass(frozen=True)
class Universe:
    kind: Literal["all", "neighbours", "sample"]
    size: int | None = None
    seed: int = DEFAULT_SEED
    base: Literal["all", "neighbours"] = "all"

    @property
    def label(self) -> str:
        if self.kind != "sample":
            return self.kind
        return f"sample:{self.size}" + (":neighbours" if self.base == "neighbours" else "")


def parse_universe(text: str | Universe, seed: int | None = None) -> Universe:
    """``all``, ``neighbours`` (or ``neighbors``), ``sample:K`` or ``sample:K:neighbours``; K may carry a
    K/M suffix (``sample:100K``)."""
    if isinstance(text, Universe):
        return text
    t = text.strip().lower()
    s = DEFAULT_SEED if seed is None else seed
    if t == "all":
        return Universe("all", seed=s)
    if t in ("neighbours", "neighbors"):
        return Universe("neighbours", seed=s)
    parts = t.split(":")
    if parts[0] == "sample" and len(parts) in (2, 3):
        size = _sample_size(parts[1])
        base = parts[2] if len(parts) == 3 else "all"
        if size is not None and base in ("all", "neighbours", "neighbors"):
            return Universe("sample", size, s, "all" if base == "all" else "neighbours")
    raise FaultModelError(
        f"unknown fault universe {text!r}: use all, neighbours, sample:K or sample:K:neighbours "
        "(K a positive count, e.g. 2000 or 100K)"
    )


def _sample_size(text: str) -> int | None:
    mult = {"k": 1 << 10, "m": 1 << 20}.get(text[-1:], 1)
    digits = text[:-1] if mult > 1 else text
    return int(digits) * mult if digits.isdigit() and int(digits) > 0 else None


def class_named(name: str) -> str:
    """The class called ``name``: exact spelling first, else ignoring case when that is unambiguous
    (``drdf`` is ambiguous: DRDF and dRDF differ only in case)."""
    if name in CLASSES:
        return name
    matches = [c for c in CLASSES if c.lower() == name.lower()]
    if len(matches) == 1:
        return matches[0]
    if matches:
        raise FaultModelError(f"fault class {name!r} is ambiguous: write {' or '.join(matches)} exactly")
    raise FaultModelError(f"unknown fault class {name!r}; choose from {', '.join(CLASSES)}")


def parse_classes(spec: str | tuple[str, ...] | list[str] | None) -> tuple[str, ...]:
    """Fault class abbreviations (comma-separated or a sequence), in the canonical order."""
    if spec is None:
        return CLASSES
    names = [s.strip() for s in (spec.split(",") if isinstance(spec, str) else spec) if s.strip()]
    out = []
    for n in names:
        if n.lower() == "all":
            return CLASSES
        out.append(class_named(n))
    if not out:
        raise FaultModelError("no fault class given")
    return tuple(c for c in CLASSES if c in out)


def require_layout(setup: Arrangement) -> tuple[int, int]:
    if setup.layout is None:
        raise FaultModelError(
            "the neighbours universe needs the physical layout: give --layout ROWSxCOLS "
            "(rows x column-mux words, rows*cols = words)"
        )
    return setup.layout


# ---------------------------------------------------------------------------------------------------
# Counting helpers
# ---------------------------------------------------------------------------------------------------


def _onehot_cumsum(cls: IntArray, mask: npt.NDArray[np.bool_], ncls: int) -> IntArray:
    """Exclusive running count, per class, of the entries where ``mask`` holds."""
    h = np.zeros((len(cls), ncls), np.int64)
    h[np.arange(len(cls)), cls] = mask
    c = np.cumsum(h, axis=0)
    return c - h


def inversions_by_class(seq: IntArray, cls_of: IntArray, ncls: int) -> IntArray:
    """``I[c_lo, c_hi]``: pairs of positions p < q with ``seq[p] > seq[q]``, where ``c_lo`` is the class
    of the smaller value ``seq[q]`` and ``c_hi`` of ``seq[p]``. One pass per address bit: a pair is
    counted at the highest bit where the two values differ."""
    out = np.zeros((ncls, ncls), np.int64)
    n = len(seq)
    if n < 2 or bool(np.all(np.diff(seq) > 0)):
        return out
    nbits = int(seq.max()).bit_length()
    for level in range(nbits):
        key = seq >> (level + 1)
        idx = np.argsort(key, kind="stable")
        ks = key[idx]
        bit = (seq[idx] >> level) & 1
        cs = cls_of[seq[idx]]
        cum = _onehot_cumsum(cs, bit == 1, ncls)
        start = np.r_[0, np.flatnonzero(np.diff(ks)) + 1]
        group_start = np.repeat(start, np.diff(np.r_[start, n]))
        before = cum - cum[group_start]
        zero = bit == 0
        for c in range(ncls):
            sel = zero & (cs == c)
            if sel.any():
                out[c] += before[sel].sum(axis=0)
    return out


def word_pair_counts(rs: Resolved) -> IntArray:
    """``N[posrel, addrrel, c1, c2]``: ordered word pairs (a, b), a != b, with classes c1, c2;
    posrel 0 when a comes first in the ⇑ order, addrrel 0 when a < b."""
    n = rs.setup.words
    nwc = rs.wpar.shape[0]
    wc = rs.wclass
    # T[c1, c2] = #{a < b}
    cum = _onehot_cumsum(wc, np.ones(n, bool), nwc)
    t_lt = np.zeros((nwc, nwc), np.int64)
    for c2 in range(nwc):
        t_lt[:, c2] = cum[wc == c2].sum(axis=0)
    inv = inversions_by_class(rs.up, wc, nwc)  # [c_lo, c_hi]: lo address visited later
    out = np.zeros((2, 2, nwc, nwc), np.int64)
    out[0, 0] = t_lt - inv  # a below b, a first
    out[1, 0] = inv  # a below b, b first
    out[0, 1] = inv.T  # a above b, a first
    out[1, 1] = t_lt.T - inv.T  # a above b, b first
    return out


# ---------------------------------------------------------------------------------------------------
# Multiplicity tables
# ---------------------------------------------------------------------------------------------------


@dataclass(frozen=True, eq=False)
class CellTable:
    """Distinct signature codes of single cells and how many cells have each."""

    code: IntArray
    count: IntArray


@dataclass(frozen=True, eq=False)
class PairTable:
    """Distinct (relation, scope, aggressor code, victim code) rows of cell pairs with counts;
    ``relation`` indexes engine.CELL_RELATIONS, ``scope`` indexes SCOPES."""

    relation: IntArray
    scope: IntArray
    code_a: IntArray
    code_v: IntArray
    count: IntArray


@dataclass(frozen=True, eq=False)
class WordPairTable:
    """Decoder-fault rows: (relation index into engine.AF_RELATIONS, class of x, class of y, count)."""

    relation: IntArray
    class_x: IntArray
    class_y: IntArray
    count: IntArray


def cell_table(rs: Resolved) -> CellTable:
    codes = rs.class_codes()  # (nwc, width)
    per_class = np.bincount(rs.wclass, minlength=codes.shape[0])
    u, c = merge_counts([codes.reshape(-1)], [np.repeat(per_class, codes.shape[1])])
    return CellTable(u, c)


def _pack(rel: IntArray, scope: IntArray, ca: IntArray, cv: IntArray, ncode: int) -> IntArray:
    return ((rel * 3 + scope) * ncode + ca) * ncode + cv


def _unpack(keys: IntArray, counts: IntArray, ncode: int) -> PairTable:
    cv = keys % ncode
    ca = (keys // ncode) % ncode
    rs_ = keys // (ncode * ncode)
    return PairTable(rs_ // 3, rs_ % 3, ca, cv, counts)


def pair_table_all(rs: Resolved) -> PairTable:
    """Every ordered pair of distinct cells."""
    codes = rs.class_codes()
    nwc, width = codes.shape
    ncode = 1 << rs.nbg
    n_words = np.bincount(rs.wclass, minlength=nwc)
    keys: list[IntArray] = []
    counts: list[IntArray] = []
    ba, bv = np.meshgrid(np.arange(width), np.arange(width), indexing="ij")
    off = ba != bv
    for c in range(nwc):  # intra-word
        if n_words[c] and width > 1:
            k = _pack(
                np.ones(off.sum(), np.int64), np.zeros(off.sum(), np.int64), codes[c, ba[off]], codes[c, bv[off]], ncode
            )
            u, cnt = count_keys(k)
            keys.append(u)
            counts.append(scaled(cnt, int(n_words[c])))
    n = word_pair_counts(rs)
    for posrel in (0, 1):
        for addrrel in (0, 1):
            for c1 in range(nwc):
                for c2 in range(nwc):
                    mult = int(n[posrel, addrrel, c1, c2])
                    if mult == 0:
                        continue
                    ca = np.repeat(codes[c1], width)
                    cv = np.tile(codes[c2], width)
                    k = _pack(np.full(ca.size, 2 + posrel), np.full(ca.size, 1 + addrrel), ca, cv, ncode)
                    u, cnt = count_keys(k)
                    keys.append(u)
                    counts.append(scaled(cnt, mult))
    uk, uc = merge_counts(keys, counts)
    return _unpack(uk, uc, ncode)


#: Cells per batch of neighbour pairs: bounds the memory of the neighbour universe at any size.
BLOCK_CELLS = 1 << 22


def _offset_grid(
    rows: int, cols: int, dr: int, dc: int, block_cells: int = BLOCK_CELLS
) -> Iterator[tuple[IntArray, IntArray]]:
    """Row and column of every grid point whose neighbour at (dr, dc) is inside the grid, row-major,
    in blocks of whole rows of about ``block_cells`` points."""
    r0, r1 = max(0, -dr), rows - max(0, dr)
    c = np.arange(max(0, -dc), cols - max(0, dc), dtype=np.int64)
    if r1 <= r0 or c.size == 0:
        return
    step = max(1, block_cells // c.size)
    for start in range(r0, r1, step):
        r = np.arange(start, min(r1, start + step), dtype=np.int64)
        yield np.repeat(r, c.size), np.tile(c, r.size)


def neighbour_pairs(setup: Arrangement) -> Iterator[tuple[IntArray, IntArray, IntArray, IntArray]]:
    """(aggressor word, aggressor bit, victim word, victim bit) arrays in batches, per neighbour
    offset, victims in physical row-major order."""
    rows, cols = require_layout(setup)
    pcols = setup.width * cols
    for dr, dc in CELL_OFFSETS:
        for rv, pv in _offset_grid(rows, pcols, dr, dc):
            ra, pa = rv + dr, pv + dc
            yield ra * cols + pa % cols, pa // cols, rv * cols + pv % cols, pv // cols


def _pair_keys(rs: Resolved, wa: IntArray, ba: IntArray, wv: IntArray, bv: IntArray) -> IntArray:
    rel = cell_relation(rs.pos, wa, wv)
    scope = np.where(wa == wv, 0, np.where(wa < wv, 1, 2))
    return _pack(rel, scope, rs.cell_code(wa, ba), rs.cell_code(wv, bv), 1 << rs.nbg)


def pair_table_neighbours(rs: Resolved) -> PairTable:
    keys: list[IntArray] = []
    counts: list[IntArray] = []
    for wa, ba, wv, bv in neighbour_pairs(rs.setup):
        u, c = count_keys(_pair_keys(rs, wa, ba, wv, bv))
        keys.append(u)
        counts.append(c)
        if len(keys) > 64:
            merged = merge_counts(keys, counts)
            keys, counts = [merged[0]], [merged[1]]
    u, c = merge_counts(keys, counts)
    return _unpack(u, c, 1 << rs.nbg)


def word_neighbours(setup: Arrangement) -> Iterator[tuple[IntArray, IntArray]]:
    rows, cols = require_layout(setup)
    for dr, dc in WORD_OFFSETS:
        for rx, cx in _offset_grid(rows, cols, dr, dc):
            yield rx * cols + cx, (rx + dr) * cols + cx + dc


def word_pair_table(rs: Resolved, kind: str) -> WordPairTable:
    """Ordered word pairs (x, y) for decoder faults: all distinct pairs or grid neighbours."""
    nwc = rs.wpar.shape[0]
    if kind == "all":
        n = word_pair_counts(rs).sum(axis=1)  # [posrel, c1, c2]
        rel, c1, c2 = np.nonzero(n)
        return WordPairTable(rel + 1, c1, c2, n[rel, c1, c2])
    keys: list[IntArray] = []
    counts: list[IntArray] = []
    for x, y in word_neighbours(rs.setup):
        k = (af_relation(rs.pos, x, y) * nwc + rs.wclass[x]) * nwc + rs.wclass[y]
        u, c = count_keys(k)
        keys.append(u)
        counts.append(c)
    u, c = merge_counts(keys, counts)
    return WordPairTable(u // (nwc * nwc), (u // nwc) % nwc, u % nwc, c)


# ---------------------------------------------------------------------------------------------------
# Finding an instance for a table row (examples of escapes)
# ---------------------------------------------------------------------------------------------------


def find_cells(rs: Resolved, codes_wanted: list[int]) -> dict[int, Cell]:
    """For each signature code, the first cell (by word, then bit) that has it."""
    codes = rs.class_codes()
    first_word = {int(c): int(np.flatnonzero(rs.wclass == c)[0]) for c in np.unique(rs.wclass)}
    out: dict[int, Cell] = {}
    for code in codes_wanted:
        cands = [
            (first_word[c], int(np.flatnonzero(codes[c] == code)[0])) for c in first_word if (codes[c] == code).any()
        ]
        if cands:
            out[code] = Cell(*min(cands))
    return out


def _first_by_key(
    batches: Iterable[tuple[IntArray, IntArray, IntArray]], wanted: IntArray, stop_when_all: bool = False
) -> dict[int, tuple[int, int]]:
    """For each wanted key, the smallest (primary, secondary) over batches of (keys, primary, secondary)."""
    best: dict[int, tuple[int, int]] = {}
    for k, primary, secondary in batches:
        hit = np.flatnonzero(np.isin(k, wanted))
        if hit.size:
            order = hit[np.lexsort((secondary[hit], primary[hit]))]
            uk, first = np.unique(k[order], return_index=True)
            for key, i in zip(uk.tolist(), order[first].tolist(), strict=True):
                cand = (int(primary[i]), int(secondary[i]))
                if key not in best or cand < best[key]:
                    best[key] = cand
        if stop_when_all and len(best) == len(wanted):
            break
    return best


def _scan(n: int, budget: int, keys_of: Callable[[int], IntArray]) -> Iterator[tuple[IntArray, IntArray, IntArray]]:
    """Batches for every first item in order (second items all at once), itself excluded."""
    everything = np.arange(n, dtype=np.int64)
    for first in range(min(n, max(1, budget // max(n, 1)))):
        k = keys_of(first)
        k[first] = -1
        yield k, np.full(n, first, np.int64), everything


def find_pairs(rs: Resolved, kind: str, keys: list[int], budget: int = 1 << 26) -> dict[int, tuple[Cell, Cell]]:
    """For each packed pair key, the first (by victim, then aggressor, in address order) instance."""
    width = rs.setup.width
    wanted = np.array(sorted(set(keys)), np.int64)
    if kind == "neighbours":
        batches: Iterator[tuple[IntArray, IntArray, IntArray]] = (
            (_pair_keys(rs, wa, ba, wv, bv), wv * width + bv, wa * width + ba)
            for wa, ba, wv, bv in neighbour_pairs(rs.setup)
        )
        best = _first_by_key(batches, wanted)
    else:
        cells = np.arange(rs.setup.cells, dtype=np.int64)
        wa, ba = cells // width, cells % width

        def keys_of(victim: int) -> IntArray:
            return _pair_keys(rs, wa, ba, np.full(cells.size, victim // width), np.full(cells.size, victim % width))

        best = _first_by_key(_scan(cells.size, budget, keys_of), wanted, stop_when_all=True)
    return {k: (Cell(*divmod(a, width)), Cell(*divmod(v, width))) for k, (v, a) in best.items()}


def word_pair_key(rs: Resolved, relation: int, cx: int, cy: int) -> int:
    nwc = int(rs.wpar.shape[0])
    return (relation * nwc + cx) * nwc + cy


def find_word_pairs(rs: Resolved, kind: str, keys: list[int], budget: int = 1 << 26) -> dict[int, tuple[int, int]]:
    """For each word-pair key (:func:`word_pair_key`), the first (x, then y) pair that has it."""
    nwc = rs.wpar.shape[0]
    wanted = np.array(sorted(set(keys)), np.int64)

    def pair_keys(x: IntArray, y: IntArray) -> IntArray:
        out: IntArray = (af_relation(rs.pos, x, y) * nwc + rs.wclass[x]) * nwc + rs.wclass[y]
        return out

    if kind == "neighbours":
        return _first_by_key(((pair_keys(x, y), x, y) for x, y in word_neighbours(rs.setup)), wanted)
    n = rs.setup.words
    ys = np.arange(n, dtype=np.int64)
    return _first_by_key(_scan(n, budget, lambda x: pair_keys(np.full(n, x), ys)), wanted, stop_when_all=True)


def sof_contexts(rs: Resolved) -> tuple[IntArray, IntArray]:
    """Words that stand for every stuck-open context, and how many words each stands for.

    A stuck-open cell's verdict depends on its word's class, the classes of the words just before
    and after it in the ⇑ order, and, for the two words at each end of the order, on which word it is.
    """
    n = rs.setup.words
    nwc = rs.wpar.shape[0]
    p = rs.pos
    prev = np.where(p > 0, rs.wclass[rs.up[np.maximum(p - 1, 0)]], nwc)
    nxt = np.where(p < n - 1, rs.wclass[rs.up[np.minimum(p + 1, n - 1)]], nwc)
    special = np.where((p < 2) | (p > n - 3), p, -1) + 1
    key = ((special * (nwc + 1) + prev) * (nwc + 1) + nxt) * nwc + rs.wclass
    _, first, counts = np.unique(key, return_index=True, return_counts=True)
    return first.astype(np.int64), counts.astype(np.int64)
