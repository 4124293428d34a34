"""Explicit fault instances: class sizes, instance number ``i`` of a class, whole small universes and
seeded samples of any universe.

Both universes are enumerated in a fixed order without building them: instance ``i`` is computed
from ``i`` alone (Python integers, so a class of 2^72 instances is no problem), which lets
``sample:K`` draw K distinct numbers and build only those K instances — memory bounded by the
sample, not the universe.

``all`` order: models outer, then (aggressor, victim) cells; decoder faults: every word's no-cell
fault, then per variant every ordered word pair. ``neighbours`` order: models outer, then the eight
neighbour offsets in :data:`~memcheck.faults.universe.CELL_OFFSETS` order, victims row-major inside
each; decoder faults: no-cell per word, then per variant the four word offsets.
"""

from __future__ import annotations

import random

import numpy as np

from memcheck.faults.fast import AF_VARIANTS
from memcheck.faults.geometry import Arrangement
from memcheck.faults.instances import Cell, CellFault, CouplingFault, DecoderFault, FaultInstance, StuckOpenFault
from memcheck.faults.primitives import models_of
from memcheck.faults.universe import CELL_OFFSETS, CLASSES, WORD_OFFSETS, require_layout

#: Below this population numpy draws the sample (kept for seeds recorded before); above, Python's
#: arbitrary-precision ``random.Random.sample``.
_NUMPY_LIMIT = 1 << 62


def _blocks(rows: int, cols: int, offsets: tuple[tuple[int, int], ...]) -> list[tuple[int, int, int, int]]:
    """(dr, dc, grid rows, grid cols) per offset with at least one pair, in offset order."""
    out = []
    for dr, dc in offsets:
        nr, nc = rows - abs(dr), cols - abs(dc)
        if nr > 0 and nc > 0:
            out.append((dr, dc, nr, nc))
    return out


def _grid_pair(blocks: list[tuple[int, int, int, int]], k: int) -> tuple[int, int, int, int]:
    """Pair number ``k`` over the blocks: (victim row, victim col, aggressor row, aggressor col)."""
    for dr, dc, nr, nc in blocks:
        if k < nr * nc:
            r, c = divmod(k, nc)
            rv, cv = r + max(0, -dr), c + max(0, -dc)
            return rv, cv, rv + dr, cv + dc
        k -= nr * nc
    raise IndexError("pair number beyond the universe")


def _pair_count(blocks: list[tuple[int, int, int, int]]) -> int:
    return sum(nr * nc for _, _, nr, nc in blocks)


def class_size(cls: str, setup: Arrangement, kind: str = "all") -> int:
    """Instances of ``cls`` in the ``all`` (default) or ``neighbours`` universe."""
    n, w = setup.cells, setup.words
    if cls == "SOF":
        return n
    if kind == "neighbours":
        rows, cols = require_layout(setup)
        if cls == "AF":
            return w + (len(AF_VARIANTS) - 1) * _pair_count(_blocks(rows, cols, WORD_OFFSETS))
        models = models_of(cls)
        if not models[0].two_cell:
            return len(models) * n
        return len(models) * _pair_count(_blocks(rows, cols * setup.width, CELL_OFFSETS))
    if cls == "AF":
        return w + (len(AF_VARIANTS) - 1) * w * (w - 1)
    models = models_of(cls)
    return len(models) * (n * (n - 1) if models[0].two_cell else n)


def _neighbour_instance(cls: str, setup: Arrangement, i: int) -> FaultInstance:
    rows, cols = require_layout(setup)
    if cls == "AF":
        if i < setup.words:
            return DecoderFault("no-cell", i)
        blocks = _blocks(rows, cols, WORD_OFFSETS)
        variant, k = divmod(i - setup.words, _pair_count(blocks))
        kind, wired = AF_VARIANTS[1 + variant]
        rx, cx, ry, cy = _grid_pair(blocks, k)
        return DecoderFault(kind, rx * cols + cx, ry * cols + cy, wired)
    models = models_of(cls)
    blocks = _blocks(rows, cols * setup.width, CELL_OFFSETS)
    m, k = divmod(i, _pair_count(blocks))
    rv, pv, ra, pa = _grid_pair(blocks, k)
    victim = Cell(rv * cols + pv % cols, pv // cols)
    return CouplingFault(models[m], Cell(ra * cols + pa % cols, pa // cols), victim)


def instance_at(cls: str, setup: Arrangement, i: int, kind: str = "all") -> FaultInstance:
    """Instance number ``i`` of ``cls`` in the ``all`` or ``neighbours`` universe (fixed order above)."""
    n, width, words = setup.cells, setup.width, setup.words
    if cls == "SOF":
        return StuckOpenFault(Cell(*divmod(i, width)))
    single = cls != "AF" and not models_of(cls)[0].two_cell
    if single:
        m, c = divmod(i, n)
        return CellFault(models_of(cls)[m], Cell(*divmod(c, width)))
    if kind == "neighbours":
        return _neighbour_instance(cls, setup, i)
    if cls == "AF":
        if i < words:
            return DecoderFault("no-cell", i)
        variant, j = divmod(i - words, words * (words - 1))
        af_kind, wired = AF_VARIANTS[1 + variant]
        x, r = divmod(j, words - 1)
        return DecoderFault(af_kind, x, r + (r >= x), wired)
    m, j = divmod(i, n * (n - 1))
    a, r = divmod(j, n - 1)
    v = r + (r >= a)
    return CouplingFault(models_of(cls)[m], Cell(*divmod(a, width)), Cell(*divmod(v, width)))


def enumerate_class(cls: str, setup: Arrangement, kind: str = "all") -> list[FaultInstance]:
    """Every instance of ``cls`` in the ``all`` or ``neighbours`` universe (small memories only)."""
    return [instance_at(cls, setup, i, kind) for i in range(class_size(cls, setup, kind))]


def sample_numbers(total: int, size: int, seed: int, stream: int) -> list[int]:
    """``min(size, total)`` distinct numbers below ``total``, sorted, drawn uniformly with a generator
    seeded by ``(seed, stream)``; exact for any ``total`` (no fixed-width integers)."""
    if size >= total:
        return list(range(total))
    if total < _NUMPY_LIMIT:
        rng = np.random.default_rng([seed, stream])
        return [int(i) for i in np.sort(rng.choice(total, size=size, replace=False))]
    bits = random.Random(f"memcheck-sample:{seed}:{stream}").getrandbits
    k = total.bit_length()
    picks: set[int] = set()
    while len(picks) < size:  # rejection of repeats: uniform over subsets, and size << total here
        r = bits(k)  # the draws of randrange(total): k random bits, retried while not below total
        if r < total:
            picks.add(r)
    return sorted(picks)


def sample_class(cls: str, setup: Arrangement, size: int, seed: int, kind: str = "all") -> list[FaultInstance]:
    """``size`` distinct instances of ``cls`` drawn uniformly from the ``kind`` universe (all of them
    when there are fewer)."""
    total = class_size(cls, setup, kind)
    return [instance_at(cls, setup, i, kind) for i in sample_numbers(total, size, seed, CLASSES.index(cls))]
