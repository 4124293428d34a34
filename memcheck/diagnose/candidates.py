"""Candidate fault instances for a set of failing cells: bounded by the failures, not the universe.

* single-cell classes (static and dynamic) and SOF: every model on every failing cell;
* two-cell classes (static CFs and the dynamic dCFs): every model with a failing cell as victim and
  an aggressor from the *pool*: on a small memory every other cell; otherwise every other bit of the
  victim's word and the victim's bit in the other pool words
  (the physically adjacent columns and rows under a column mux);
* decoder faults: ``no-cell`` at every failing word, and every two-word variant with one word failing
  and the other from the word pool (either role).

The pools are the whole memory when it is small (at most :data:`WHOLE_MEMORY_LIMIT` cells), else
the failing words and their neighbours: addresses ±1 and, with a layout, the words above and below
(±columns). An aggressor or decoder partner outside the pool is not considered; the report says so.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence

from memcheck.faults.fast import AF_VARIANTS
from memcheck.faults.geometry import Arrangement
from memcheck.faults.instances import Cell, CellFault, CouplingFault, DecoderFault, FaultInstance, StuckOpenFault
from memcheck.faults.primitives import models_of
from memcheck.faults.universe import CLASSES

#: Memories with at most this many cells take aggressors and decoder partners from every word.
WHOLE_MEMORY_LIMIT = 256


def word_pool(setup: Arrangement, failing_words: Sequence[int]) -> list[int]:
    """Words an aggressor or a decoder fault's second word is looked for in (see module doc)."""
    if setup.cells <= WHOLE_MEMORY_LIMIT:
        return list(range(setup.words))
    steps = [0, 1, -1]
    if setup.layout is not None:
        steps += [setup.layout[1], -setup.layout[1]]
    return sorted({w + d for w in failing_words for d in steps if 0 <= w + d < setup.words})


def _two_word(failing: Sequence[int], pool: Sequence[int]) -> Iterator[tuple[int, int]]:
    seen: set[tuple[int, int]] = set()
    for x in failing:
        for y in pool:
            for pair in ((x, y), (y, x)):
                if x != y and pair not in seen:
                    seen.add(pair)
                    yield pair


def candidates(setup: Arrangement, cells: Sequence[Cell], classes: Sequence[str] = CLASSES) -> list[FaultInstance]:
    """Instances of ``classes`` that could explain failures at ``cells`` (see module doc)."""
    words = sorted({c.word for c in cells})
    pool = word_pool(setup, words)
    whole = setup.cells <= WHOLE_MEMORY_LIMIT

    def aggressors(v: Cell) -> list[Cell]:
        if whole:
            return [Cell(w, b) for w in pool for b in range(setup.width) if Cell(w, b) != v]
        return [Cell(v.word, b) for b in range(setup.width) if b != v.bit] + [
            Cell(w, v.bit) for w in pool if w != v.word
        ]

    out: list[FaultInstance] = []
    for cls in classes:
        if cls == "SOF":
            out += [StuckOpenFault(c) for c in cells]
        elif cls == "AF":
            out += [DecoderFault("no-cell", w) for w in words]
            for kind, wired in AF_VARIANTS[1:]:
                out += [DecoderFault(kind, x, y, wired) for x, y in _two_word(words, pool)]
        else:
            for m in models_of(cls):
                if m.two_cell:
                    out += [CouplingFault(m, a, v) for v in cells for a in aggressors(v)]
                else:
                    out += [CellFault(m, c) for c in cells]
    return out
