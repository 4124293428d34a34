"""Diagnosis: which single faults explain a fail log, ranked.

Every candidate (:mod:`memcheck.diagnose.candidates`) is simulated from each of its power-up states
(:mod:`memcheck.diagnose.predict`). Its predicted failing reads are compared with the observed ones:
an *exact* match (the same set of failing reads, with the same read values, from some power-up
state) ranks first, then the Jaccard similarity |P ∩ O| / |P ∪ O| (best power-up state). Candidates
whose predicted fail logs are the same from every power-up state form one *group*: this test cannot
tell them apart, whatever the log. Groups with equal scores share a rank: this log cannot tell them
apart. Verdicts cover the modelled single-fault behaviour only; a real defect may be none of these.
"""

from __future__ import annotations

import time
from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np

from memcheck.diagnose.candidates import WHOLE_MEMORY_LIMIT, candidates, word_pool
from memcheck.diagnose.faillog import FailRow
from memcheck.diagnose.predict import Ev, Events, collect, fault_words, predict
from memcheck.errors import FailLogError
from memcheck.faults.geometry import Arrangement, Resolved, check_consistent
from memcheck.faults.instances import Cell, CouplingFault, FaultInstance
from memcheck.faults.replay import power_up_states
from memcheck.faults.universe import CLASSES
from memcheck.march.notation import MarchElement, MarchTest

DISCLAIMER = (
    "Diagnosis covers the modelled single-fault behaviour and fault models only (static and dynamic classes), not "
    "sign-off: a real defect may behave like none of them or like several faults at once."
)


@dataclass(frozen=True)
class Group:
    """Candidates with the same predicted fail logs from every power-up state."""

    members: tuple[FaultInstance, ...]
    exact: bool
    similarity: float
    power_up: tuple[tuple[str, int], ...]  # of the first member, for its best-matching prediction
    predicted: tuple[FailRow, ...]
    rank: int = 0

    def to_json(self) -> dict[str, Any]:
        return {
            "rank": self.rank,
            "exact": self.exact,
            "similarity": round(self.similarity, 6),
            "power_up": {k: v for k, v in self.power_up},
            "classes": sorted({m.cls for m in self.members}),
            "instances": [m.describe() for m in self.members],
            "predicted": [r.csv() for r in self.predicted],
        }


@dataclass(frozen=True)
class Diagnosis:
    test: MarchTest
    setup: Arrangement
    observed: tuple[FailRow, ...]
    first_fail: bool
    failing_cells: tuple[Cell, ...]
    groups: tuple[Group, ...]
    candidates: int
    whole_memory: bool
    seconds: float

    @property
    def top(self) -> tuple[Group, ...]:
        return tuple(g for g in self.groups if g.rank == 1)

    def rank_of(self, fault: FaultInstance) -> int | None:
        """The rank of the group holding ``fault`` (None: not a candidate or explains nothing)."""
        return next((g.rank for g in self.groups if fault in g.members), None)

    def to_json(self) -> dict[str, Any]:
        s = self.setup
        return {
            "test": self.test.name or self.test.to_unicode(),
            "memory": {"words": s.words, "width": s.width, "layout": s.layout, "order": s.order, "seed": s.seed},
            "first_fail": self.first_fail,
            "failing_reads": [r.csv() for r in self.observed],
            "failing_cells": [{"word": c.word, "bit": c.bit} for c in self.failing_cells],
            "candidates": self.candidates,
            "aggressors_from": "whole memory" if self.whole_memory else "failing words and their neighbours",
            "groups": [g.to_json() for g in self.groups],
            "disclaimer": DISCLAIMER,
        }


def failing_cells(rows: Sequence[FailRow], width: int) -> tuple[Cell, ...]:
    """Cells (word, bit) whose bit differs in some failing read."""
    return tuple(sorted({Cell(r.address, b) for r in rows for b in range(width) if r.diff >> b & 1}))


def _check_rows(test: MarchTest, setup: Arrangement, nbg: int, rows: Sequence[FailRow]) -> None:
    """FailLogError for a row naming an operation the test does not have, or not a failure."""
    limit = 1 << setup.width
    for r in rows:
        where = f"fail log line {r.line}: " if r.line else "fail log row: "
        el = test.elements[r.element] if r.element < len(test.elements) else None
        problem = None
        if r.background >= nbg:
            problem = f"background {r.background}, but the test runs {nbg} background(s) (0..{nbg - 1})"
        elif not isinstance(el, MarchElement):
            problem = f"element {r.element}: the test has no such March element (it has {len(test.elements)})"
        elif r.op >= len(el.ops) or el.ops[r.op].kind != "r":
            problem = f"operation {r.op} of element {r.element} {el.to_unicode()} is not a read (ops count from 0)"
        elif r.address >= setup.words:
            problem = f"address {r.address} is outside the memory (0..{setup.words - 1})"
        elif r.expected >= limit or r.actual >= limit:
            problem = f"a value wider than {setup.width} bits"
        elif r.expected == r.actual:
            problem = "expected equals actual: that read did not fail"
        if problem:
            raise FailLogError(where + problem)


def _check_expected(rows: Sequence[FailRow], events: Events) -> None:
    """FailLogError for a row whose expected value is not what the test expects from that read."""
    exp = {
        (e.background, e.element, e.op, e.word): e.data
        for w in {r.address for r in rows}
        for e in events.by_word.get(w, [])
        if e.kind == "r"
    }
    for r in rows:
        want = exp.get((r.background, r.element, r.op, r.address))
        if want is not None and want != r.expected:
            where = f"fail log line {r.line}: " if r.line else "fail log row: "
            raise FailLogError(
                f"{where}expected {r.expected:#x}, but the test expects {want:#x} from that read at address "
                f"{r.address}: check --width, --backgrounds, --order and --layout"
            )


def _same_behaviour(f: FaultInstance, resolved: Resolved) -> tuple[object, ...]:
    """Candidates with equal keys have equal fail logs: a coupling fault's aggressor acts only
    through the values its bit is written, which its signature code (the bit each background writes
    there) fixes, so aggressor bits of one word with the same code behave alike."""
    if isinstance(f, CouplingFault):
        a = f.aggressor
        code = int(resolved.cell_code(np.array([a.word]), np.array([a.bit]))[0])
        return (f.model.name, f.victim, a.word, code, a.word == f.victim.word and a.bit < f.victim.bit)
    return (f,)


def _jaccard(p: frozenset[FailRow], o: frozenset[FailRow]) -> float:
    union = len(p | o)
    return len(p & o) / union if union else 1.0


def _rank(groups: list[Group]) -> tuple[Group, ...]:
    groups.sort(key=lambda g: (not g.exact, -g.similarity))
    out: list[Group] = []
    rank, last = 0, None
    for g in groups:
        key = (g.exact, g.similarity)
        if key != last:
            rank, last = rank + 1, key
        out.append(Group(g.members, g.exact, g.similarity, g.power_up, g.predicted, rank))
    return tuple(out)


def diagnose(
    test: MarchTest,
    setup: Arrangement,
    rows: Sequence[FailRow],
    *,
    first_fail: bool = False,
    classes: Sequence[str] = CLASSES,
    first_reads: int | None = None,
) -> Diagnosis:
    """Rank the single fault instances consistent with the failing reads ``rows`` of ``test`` on
    ``setup`` (``first_fail``: ``rows`` is only the first failing read, as a first-fail BIST reports).
    ``classes``: the fault classes candidates come from (default every class, static and dynamic).
    ``first_reads``: ``rows`` is only the first that many failing reads (a capped log, as
    ``march run --fail-log-limit`` writes it); ``first_fail`` is ``first_reads=1``.

    Raises FailLogError for rows that do not name a read of the test with its expected value.
    """
    t0 = time.perf_counter()
    nbg = len(setup.resolve().backgrounds)
    check_consistent(test, nbg)
    _check_rows(test, setup, nbg, rows)
    observed = frozenset(rows)
    prefix = 1 if first_fail else first_reads  # None: the whole log
    cells = failing_cells(rows, setup.width)
    cands = candidates(setup, cells, classes) if cells else []
    pool = word_pool(setup, sorted({c.word for c in cells})) if cells else []
    sof = sorted({c.word for c in cells})
    events = collect(test, setup, pool, sof)
    _check_expected(rows, events)
    by_key: dict[frozenset[frozenset[FailRow]], list[tuple[FaultInstance, list[frozenset[FailRow]]]]] = {}
    streams: dict[tuple[int, ...], list[Ev]] = {}
    memo: dict[tuple[object, ...], list[frozenset[FailRow]]] = {}
    resolved = setup.resolve()
    for f in cands:
        key = _same_behaviour(f, resolved)
        if key not in memo:
            ws = fault_words(f)
            if ws not in streams:
                streams[ws] = events.of(ws)
            memo[key] = [frozenset(p[:prefix]) for p in predict(f, streams[ws], setup.width)]
        sigs = memo[key]
        by_key.setdefault(frozenset(sigs), []).append((f, sigs))
    groups: list[Group] = []
    for members in by_key.values():
        f, sigs = members[0]
        scores = [(s == observed, _jaccard(s, observed)) for s in sigs]
        best = max(range(len(sigs)), key=lambda i: scores[i])
        if scores[best][1] == 0.0:
            continue  # explains none of the failing reads
        labels = f.power_up_labels()
        state = power_up_states(len(labels))[best]
        groups.append(
            Group(
                tuple(m for m, _ in members),
                scores[best][0],
                scores[best][1],
                tuple(zip(labels, state, strict=True)),
                tuple(sorted(sigs[best])),
            )
        )
    return Diagnosis(
        test,
        setup,
        tuple(rows),
        first_fail,
        cells,
        _rank(groups),
        len(cands),
        setup.cells <= WHOLE_MEMORY_LIMIT,
        time.perf_counter() - t0,
    )
