"""Sampled instances as arrays: instance number ``i`` of a class decoded for a whole sample at once.

:func:`memcheck.faults.sampling.instance_at` builds one :class:`~memcheck.faults.instances.FaultInstance`
per number; :func:`decode` computes the same instances for every number of a sample with numpy,
as a :class:`Drawn` (one array per field), so a sample of 100,000 instances costs no Python per
instance. Numbers beyond 64-bit integers (two-cell classes of the ``all`` universe on memories of
2^32 cells and more) are split into their in-range parts with Python integers first. The order is
the one :mod:`memcheck.faults.sampling` documents; tests/test_faults_drawn.py holds the two equal.
"""

from __future__ import annotations

from bisect import bisect_left
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import numpy.typing as npt

from memcheck.faults.fast_stream import AF_VARIANTS
from memcheck.faults.geometry import Arrangement
from memcheck.faults.primitives import models_of
from memcheck.faults.sampling import _blocks, _pair_count
from memcheck.faults.universe import CELL_OFFSETS, WORD_OFFSETS, require_layout

IntArray = npt.NDArray[np.int64]

_INT64 = 1 << 63


@dataclass(frozen=True, eq=False)
class Drawn:
    """Instances ``numbers`` of class ``cls`` (universe ``kind``), field by field.

    ``model`` indexes ``models_of(cls)`` (decoder faults: :data:`AF_VARIANTS`; SOF: 0); ``word`` and
    ``bit`` are the cell (the victim of a coupling fault; a decoder fault's faulty address, bit 0);
    ``other_word`` and ``other_bit`` the aggressor (a decoder fault's second word), -1 when none.
    """

    cls: str
    kind: str
    numbers: tuple[int, ...]
    model: IntArray
    word: IntArray
    bit: IntArray
    other_word: IntArray
    other_bit: IntArray

    def __len__(self) -> int:
        return len(self.numbers)

    def part(self, lo: int, hi: int) -> Drawn:
        """Instances ``lo`` to ``hi`` (exclusive)."""
        s = slice(lo, hi)
        return Drawn(
            self.cls,
            self.kind,
            self.numbers[s],
            self.model[s],
            self.word[s],
            self.bit[s],
            self.other_word[s],
            self.other_bit[s],
        )


def _ints(values: Sequence[int]) -> IntArray:
    return np.array(values, dtype=np.int64).reshape(-1)


def _two_level(values: Sequence[int], d1: int, d2: int) -> tuple[IntArray, IntArray, IntArray]:
    """``(q1, q2, r)`` with ``v = q1 * d1 + q2 * d2 + r`` for each value (``q2 * d2 + r < d1``), exact
    for any size: numpy when everything fits 64 bits, Python integers otherwise."""
    if not values or (max(values) < _INT64 and d1 < _INT64):
        v = _ints(values)
        q1, j = np.divmod(v, d1)
        q2, r = np.divmod(j, d2)
        return q1, q2, r
    out = [(q, *divmod(j, d2)) for q, j in (divmod(x, d1) for x in values)]
    return _ints([o[0] for o in out]), _ints([o[1] for o in out]), _ints([o[2] for o in out])


def _grid_pairs(blocks: list[tuple[int, int, int, int]], k: IntArray) -> tuple[IntArray, IntArray, IntArray, IntArray]:
    """Pair numbers ``k`` over the blocks (see ``sampling._grid_pair``): victim row and column,
    aggressor row and column."""
    b = np.array(blocks, dtype=np.int64).reshape(-1, 4)
    dr, dc, nc = b[:, 0], b[:, 1], b[:, 3]
    sizes = b[:, 2] * nc
    ends = np.cumsum(sizes)
    which = np.searchsorted(ends, k, side="right")
    r, c = np.divmod(k - (ends - sizes)[which], nc[which])
    rv = r + np.maximum(0, -dr)[which]
    cv = c + np.maximum(0, -dc)[which]
    return rv, cv, rv + dr[which], cv + dc[which]


def _drawn(cls: str, kind: str, numbers: Sequence[int], *fields: IntArray) -> Drawn:
    model, word, bit, other_word, other_bit = fields
    return Drawn(cls, kind, tuple(numbers), model, word, bit, other_word, other_bit)


def _none(n: int) -> IntArray:
    return np.full(n, -1, dtype=np.int64)


def _decoder(setup: Arrangement, numbers: Sequence[int], kind: str) -> Drawn:
    words, n = setup.words, len(numbers)
    cut = bisect_left(numbers, words)  # numbers are sorted: the no-cell faults come first
    rest = [i - words for i in numbers[cut:]]
    if kind == "neighbours":
        rows, cols = require_layout(setup)
        blocks = _blocks(rows, cols, WORD_OFFSETS)
        variant, k = np.divmod(_ints(rest), max(1, _pair_count(blocks)))
        rx, cx, ry, cy = _grid_pairs(blocks, k)
        x, y = rx * cols + cx, ry * cols + cy
    else:
        variant, x, r = _two_level(rest, max(1, words * (words - 1)), max(1, words - 1))
        y = r + (r >= x)
    model = np.concatenate([np.zeros(cut, np.int64), variant + 1])
    word = np.concatenate([_ints(numbers[:cut]), x])
    other = np.concatenate([_none(cut), y])
    return _drawn("AF", kind, numbers, model, word, np.zeros(n, np.int64), other, _none(n))


def _coupling(cls: str, setup: Arrangement, numbers: Sequence[int], kind: str) -> Drawn:
    width = setup.width
    if kind == "neighbours":
        rows, cols = require_layout(setup)
        blocks = _blocks(rows, cols * width, CELL_OFFSETS)
        m, k = np.divmod(_ints(numbers), max(1, _pair_count(blocks)))
        rv, pv, ra, pa = _grid_pairs(blocks, k)
        return _drawn(cls, kind, numbers, m, rv * cols + pv % cols, pv // cols, ra * cols + pa % cols, pa // cols)
    n = setup.cells
    m, a, r = _two_level(numbers, max(1, n * (n - 1)), max(1, n - 1))
    v = r + (r >= a)
    return _drawn(cls, kind, numbers, m, v // width, v % width, a // width, a % width)


def decode(cls: str, setup: Arrangement, numbers: Sequence[int], kind: str = "all") -> Drawn:
    """Instances ``numbers`` (sorted, as :func:`~memcheck.faults.sampling.sample_numbers` draws them)
    of ``cls`` in the ``all`` or ``neighbours`` universe: the instances
    :func:`~memcheck.faults.sampling.instance_at` builds, as arrays."""
    n = len(numbers)
    if cls == "AF":
        return _decoder(setup, numbers, kind)
    if cls == "SOF" or not models_of(cls)[0].two_cell:
        m, word, bit = _two_level(numbers, setup.cells, setup.width)  # SOF: m is 0
        return _drawn(cls, kind, numbers, m, word, bit, _none(n), _none(n))
    return _coupling(cls, setup, numbers, kind)


__all__ = ["AF_VARIANTS", "Drawn", "decode"]
