"""A beam search for a short test when the exact search cannot finish.

The exact search (:mod:`memcheck.synthesis.search`) keeps every distinct state of every length, so
its levels grow about sixfold per operation on large fault sets (all static faults: half a million
states at 8n). The beam search builds levels the same way but keeps only the ``width`` states of
each level that have detected the most rows (ties keep generation order, so the result is
deterministic), and builds a level only from the ``max_element`` levels below it (elements of at
most that many operations). It finds a test quickly, but it may miss shorter ones: its result is an
upper bound, never a proof. :func:`memcheck.synthesis.synthesize` runs it first and then lets the
exact search try every shorter length, so a beam result is called shortest only when the exact
search has ruled out every length below it.

References
----------
B. T. Lowerre, "The HARPY speech recognition system", PhD thesis, Carnegie-Mellon University, 1976
(beam search: a breadth-first search that keeps the best ``width`` nodes of each level).
"""

from __future__ import annotations

import time
from dataclasses import dataclass

import numpy as np

from memcheck.synthesis.search import CUT_TIME, Level, Search, SearchCut, Step

DEFAULT_BEAM_WIDTH = 200
DEFAULT_MAX_ELEMENT = 8  # longest element tried; the library's longest has 6 operations (March RAW)


@dataclass(frozen=True)
class BeamOutcome:
    """``steps`` of the test found (None: none up to the length bound, or cut by ``cut_by``)."""

    steps: tuple[Step, ...] | None
    length: int | None
    width: int
    max_element: int
    cut_by: str | None
    seconds: float


@dataclass(eq=False)
class BeamSearch(Search):
    """:class:`~memcheck.synthesis.search.Search` keeping ``width`` states per level, built from
    elements of at most ``max_element`` operations."""

    width: int = DEFAULT_BEAM_WIDTH
    max_element: int = DEFAULT_MAX_ELEMENT

    def _prefix_lengths(self, K: int) -> range:
        return range(max(0, K - self.max_element), K)

    def _trim(self, level: Level) -> None:
        if len(level) <= self.width:
            return
        score = self.model.score(level.states[0])
        keep = np.sort(np.argsort(-score, kind="stable")[: self.width])
        for name in ("states", "g", "parent_level", "parent_index", "ref"):
            setattr(level, name, [getattr(level, name)[0][keep]])


def beam_search(search: BeamSearch, max_length: int) -> BeamOutcome:
    """Run ``search`` level by level up to ``max_length`` operations; the first level holding a
    state that detects every instance gives the test."""
    t0 = time.monotonic()
    try:
        for n in range(1, max_length + 1):
            level = search.build_level(n)
            search.levels.append(level)
            if not len(level):
                continue
            done = np.flatnonzero(search.model.complete(level.states[0]))
            if done.size:
                steps = search.path(n, int(done[0]))
                return BeamOutcome(steps, n, search.width, search.max_element, None, time.monotonic() - t0)
    except SearchCut as cut:
        return BeamOutcome(None, None, search.width, search.max_element, cut.reason, time.monotonic() - t0)
    return BeamOutcome(None, None, search.width, search.max_element, None, time.monotonic() - t0)


__all__ = ["CUT_TIME", "DEFAULT_BEAM_WIDTH", "DEFAULT_MAX_ELEMENT", "BeamOutcome", "BeamSearch", "beam_search"]
