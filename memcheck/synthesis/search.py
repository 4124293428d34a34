"""Shortest-first search over row states (uniform-cost search with exact state merging).

A *state* is the row model's state vector after a prefix of whole elements plus the fault-free
value every word holds (the last value written). The continuation of a test depends on its prefix
only through this state, so two prefixes reaching the same state are interchangeable, and a state
reached with fewer operations makes every longer way to it useless. Level ``K`` holds the states
first reached with exactly ``K`` operations: those built from a level-``k`` state by an element of
``K - k`` operations (all ``k < K``), plus, when delays are allowed, the same after a delay element
(free: delays do not count in the length). The first level holding a state that detects every
instance gives a shortest test; every lower level has been generated completely, which is the
proof. Nothing is scored heuristically, so nothing is lost.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field

import numpy as np
import numpy.typing as npt

from memcheck.synthesis.elements import UP, ElementSet, ElementTrie
from memcheck.synthesis.keys import keep_new
from memcheck.synthesis.rows import UNWRITTEN, RowModel

U8 = npt.NDArray[np.uint8]
IntArray = npt.NDArray[np.int64]

DELAY = -1  # element length code of a delay element
CHUNK_BYTES = 1 << 25
CUT_TIME = "time limit"
CUT_MEMORY = "memory limit"
_KEY_OVERHEAD = 64  # bytes a state costs beyond its rows: the seen-set key's object header and hash slot


@dataclass(frozen=True)
class Step:
    """One element of a found test: op indices (into rows.OPS) and direction, or a delay (ops None)."""

    ops: tuple[int, ...] | None
    direction: int = UP


@dataclass(frozen=True)
class SearchStats:
    """What the search did: distinct states first reached per length, elements tried per length."""

    states_per_length: tuple[int, ...]
    seconds: float


@dataclass(frozen=True)
class SearchOutcome:
    """``steps`` of a shortest test (None when none was found); ``complete_below``: every length
    below it was searched exhaustively without a test; ``exhausted``: no state is left to extend,
    so no test of any length exists in the space; ``cut_by``: what stopped the search before it
    finished (:data:`CUT_TIME` or :data:`CUT_MEMORY`; None: it finished)."""

    steps: tuple[Step, ...] | None
    complete_below: int
    exhausted: bool
    cut_by: str | None
    stats: SearchStats

    @property
    def timed_out(self) -> bool:
        return self.cut_by == CUT_TIME


@dataclass
class Level:
    """The states first reached with one length (parts appended, then frozen into one array each)."""

    states: list[U8] = field(default_factory=list)
    g: list[U8] = field(default_factory=list)
    parent_level: list[IntArray] = field(default_factory=list)
    parent_index: list[IntArray] = field(default_factory=list)
    ref: list[IntArray] = field(default_factory=list)  # (g_in, length or DELAY, element index)

    def add(self, states: U8, g: U8, plevel: int, pindex: IntArray, ref: IntArray) -> None:
        if len(states):
            self.states.append(states)
            self.g.append(g)
            self.parent_level.append(np.full(len(states), plevel, np.int64))
            self.parent_index.append(pindex)
            self.ref.append(ref)

    def freeze(self) -> None:
        for name in ("states", "g", "parent_level", "parent_index", "ref"):
            parts = getattr(self, name)
            if len(parts) > 1:
                setattr(self, name, [np.concatenate(parts)])

    def __len__(self) -> int:
        return sum(len(s) for s in self.states)


class SearchCut(Exception):
    """Raised inside a search when its time or memory limit is reached; ``reason`` names which."""

    def __init__(self, reason: str) -> None:
        super().__init__(reason)
        self.reason = reason


@dataclass(eq=False)
class Search:
    """One search over a row model. ``first_writes``: values the first write may take (``(0,)`` by
    0/1 symmetry); ``first_directions``: directions of the first element (``(UP,)`` by mirror
    symmetry)."""

    model: RowModel
    allow_delay: bool = False
    first_writes: tuple[int, ...] = (0, 1)
    first_directions: tuple[int, ...] = (0, 1)
    deadline: float | None = None
    memory_limit: int | None = None
    levels: list[Level] = field(default_factory=list)
    seen: set[bytes] = field(default_factory=set)
    held_bytes: int = 0

    def __post_init__(self) -> None:
        m = self.model
        self.ridx = np.arange(m.rows)
        self.tries = {
            0: ElementTrie(m, 0),
            1: ElementTrie(m, 1),
            UNWRITTEN: ElementTrie(m, UNWRITTEN, self.first_writes, self.first_directions),
        }
        start = Level()
        init = m.init[None, :].copy()
        g0 = np.array([UNWRITTEN], np.uint8)
        start.add(init, g0, -1, np.zeros(1, np.int64), np.zeros((1, 3), np.int64))
        keep_new(init, g0, self.seen)
        self.levels.append(start)

    # -- generation ---------------------------------------------------------------------------
    def _check_time(self) -> None:
        if self.deadline is not None and time.monotonic() > self.deadline:
            raise SearchCut(CUT_TIME)

    def _hold(self, states: int) -> None:
        """Count ``states`` new states (level arrays and seen-set keys) against the memory limit."""
        self.held_bytes += states * (2 * self.model.rows + _KEY_OVERHEAD)
        if self.memory_limit is not None and self.held_bytes > self.memory_limit:
            raise SearchCut(CUT_MEMORY)

    def _keep_new(self, states: U8, g: U8) -> IntArray:
        return keep_new(states, g, self.seen)

    def _extend(self, level: Level, k: int, sel: IntArray, g_in: int, es: ElementSet, length: int) -> None:
        src = self.levels[k].states[0][sel]
        per = max(1, CHUNK_BYTES // max(1, len(src) * self.model.rows))
        for e0 in range(0, len(es), per):
            self._check_time()
            tab = es.table[e0 : e0 + per]
            out = tab[np.arange(len(tab))[:, None, None], self.ridx[None, None, :], src[None, :, :]]
            flat = out.reshape(-1, self.model.rows)
            g = np.repeat(es.g_out[e0 : e0 + per], len(src))
            keep = self._keep_new(flat, g)
            if keep.size == 0:
                continue
            e_idx, s_idx = np.divmod(keep, len(src))
            ref = np.stack([np.full(keep.size, g_in), np.full(keep.size, length), e_idx + e0], axis=1)
            level.add(flat[keep], g[keep], k, sel[s_idx], ref)
            self._hold(keep.size)

    def _delays(self, level: Level, K: int) -> None:
        level.freeze()
        if not len(level):
            return
        states, g = level.states[0], level.g[0]
        paused = self.model.pause[self.ridx[None, :], states]
        keep = self._keep_new(paused, g)
        if keep.size:
            ref = np.stack([g[keep].astype(np.int64), np.full(keep.size, DELAY), np.zeros(keep.size, np.int64)], 1)
            level.add(paused[keep], g[keep], K, keep, ref)
            level.freeze()
            self._hold(keep.size)

    def _prefix_lengths(self, K: int) -> range:
        """Lengths of the prefixes a level-``K`` state is built from (all shorter ones here)."""
        return range(K)

    def _trim(self, level: Level) -> None:
        """Hook for searches that keep only part of a level (nothing here: the search is exact)."""

    def build_level(self, K: int) -> Level:
        level = Level()
        for k in self._prefix_lengths(K):
            prev = self.levels[k]
            if not len(prev):
                continue
            g_all = prev.g[0]
            for g_in in np.unique(g_all).tolist():
                es = self.tries[int(g_in)].elements(K - k)
                if es is None or not len(es):
                    continue
                self._extend(level, k, np.flatnonzero(g_all == g_in), int(g_in), es, K - k)
        level.freeze()
        self._trim(level)  # before the delays: a delayed state's parent is its level's own index
        if self.allow_delay:
            self._delays(level, K)
        return level

    def exhausted(self, K: int) -> bool:
        """No level can grow any more: every trie is finished and the recent levels are empty."""
        if any(t.exhausted_at is None for t in self.tries.values()):
            return False
        span = max(t.exhausted_at or 0 for t in self.tries.values())
        return all(not len(lv) for lv in self.levels[max(0, K - span + 1) : K + 1])

    # -- results --------------------------------------------------------------------------------
    def path(self, K: int, index: int) -> tuple[Step, ...]:
        steps: list[Step] = []
        k, i = K, index
        while k > 0:
            lv = self.levels[k]
            g_in, length, e = (int(x) for x in lv.ref[0][i])
            pk, pi = int(lv.parent_level[0][i]), int(lv.parent_index[0][i])
            if length == DELAY:
                steps.append(Step(None))
            else:
                es = self.tries[g_in].elements(length)
                assert es is not None
                steps.append(Step(es.ops[e], es.direction[e]))
            k, i = pk, pi
        return tuple(reversed(steps))

    def run(self, max_length: int) -> SearchOutcome:
        t0 = time.monotonic()
        counts: list[int] = []
        n = 1
        try:
            while n <= max_length:
                level = self.build_level(n)
                self.levels.append(level)
                counts.append(len(level))
                if len(level):
                    done = np.flatnonzero(self.model.complete(level.states[0]))
                    if done.size:
                        stats = SearchStats(tuple(counts), time.monotonic() - t0)
                        return SearchOutcome(self.path(n, int(done[0])), n, False, None, stats)
                if self.exhausted(n):
                    return SearchOutcome(None, n + 1, True, None, SearchStats(tuple(counts), time.monotonic() - t0))
                n += 1
        except SearchCut as cut:
            return SearchOutcome(None, n, False, cut.reason, SearchStats(tuple(counts), time.monotonic() - t0))
        return SearchOutcome(None, n, False, None, SearchStats(tuple(counts), time.monotonic() - t0))
