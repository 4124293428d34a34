"""Shrinking a failure found by any phase to a 1-minimal trace, many candidates per simulator round trip.

Every candidate is run as an independent example: from the RTL's canonical state (the addresses the
previous candidate wrote written back with the fill pattern, then the flush; see
:mod:`memcheck.sim.checking.sequences`), checked by a model that knows nothing. The candidates of
one round are laid back to back, each with its own restore and flush, and run in one hand-over to the
backend (the harness plays them in batches of cycles without Python in between), so delta debugging
costs simulated cycles rather than round trips.

The steps (:func:`shrink_stretch`):

1. first candidates from the failing stretch: the operations on the addresses the failing read
   touched, wherever they are in the stretch, plus the last few cycles before the difference; and
   windows of doubling length ending at the difference (:mod:`memcheck.sim.checking.stretch`);
   the shortest failing one is kept;
2. delta debugging over cycles until no single cycle can be removed (:func:`~.shrink.ddmin_batched`);
3. single operations taken out of cycles where another port still acts, then delta debugging again;
4. addresses renamed to small ones, write data zero, all lanes enabled, where it still fails.

A budget of simulated cycles and seconds bounds the whole; when it runs out, the smallest failing
trace so far is reported and the note says it is not known to be 1-minimal.

References
----------
A. Zeller and R. Hildebrandt, "Simplifying and Isolating Failure-Inducing Input", IEEE Transactions
on Software Engineering 28(2), 2002 (delta debugging, 1-minimality).
"""

from __future__ import annotations

import time
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from memcheck.contract import Contract
from memcheck.model_fast import Columns, unsupported
from memcheck.ops import Cycle
from memcheck.records import CheckedTrace
from memcheck.sim.checking import sequences as seq
from memcheck.sim.checking.compare import check, check_arrays
from memcheck.sim.checking.runner import EXAMPLE_PREAMBLE, Runner
from memcheck.sim.checking.sequences import Segment
from memcheck.sim.checking.shrink import (
    ShrinkBudgetSpent,
    ddmin_batched,
    first_hits,
    greedy,
    quiet_candidates,
    simpler_candidates,
)
from memcheck.sim.checking.stretch import first_candidates
from memcheck.sim.checking.ticks import fit, fit_columns

#: Cycles handed to the backend at once while shrinking (the harness still runs them in its batches).
GROUP_CYCLES = 1 << 16
#: Budget of one shrink: simulated cycles (candidates, restores and flushes) and seconds.
SHRINK_CYCLES = 20_000_000
SHRINK_SECONDS = 120.0


@dataclass(frozen=True)
class Shrunk:
    """A shrunk failure: its check as reported (run once more, after the replay preamble), whether no
    single cycle or operation can be removed (False: the budget ran out first), the candidates tried,
    and whether it failed right after a fresh fill as a replay runs it."""

    checked: CheckedTrace
    one_minimal: bool
    candidates: int
    fresh: bool = True  # False: it fails after the canonical restore, not right after a fresh fill

    def note(self) -> str:
        if self.one_minimal:
            text = "1-minimal: no single cycle or operation can be removed"
        else:
            text = "shrinking stopped at its budget: not known to be 1-minimal"
        if not self.fresh:
            text += (
                "; it fails after the canonical restore but not right after a fresh fill (it depends on "
                "state the fill does not set), so a replay may not reproduce it"
            )
        return text


class CandidateRunner:
    """Runs candidate traces as independent examples, many per hand-over, with a cache and a budget."""

    def __init__(self, runner: Runner, *, cycles: int = SHRINK_CYCLES, seconds: float = SHRINK_SECONDS) -> None:
        self.runner = runner
        self.cache: dict[tuple[Cycle, ...], bool] = {}
        self.cycles_left = cycles
        self.deadline = time.perf_counter() + seconds
        self.tried = 0

    def fails_many(self, cands: list[list[Cycle]]) -> list[bool]:
        """Which of ``cands`` fail as independent examples (cached; empty traces never fail)."""
        todo = [tuple(c) for c in cands if c and tuple(c) not in self.cache]
        todo = list(dict.fromkeys(todo))
        if todo:
            if self.cycles_left <= 0 or time.perf_counter() > self.deadline:
                raise ShrinkBudgetSpent
            for key, failed in zip(todo, self._run(todo), strict=True):
                self.cache[key] = failed
        return [bool(c) and self.cache[tuple(c)] for c in cands]

    def _run(self, cands: list[tuple[Cycle, ...]]) -> list[bool]:
        r = self.runner
        c = r.contract
        if unsupported(c) is not None:
            # Several clocks or power pins: the reference model, one candidate at a time.
            self.tried += len(cands)
            out = []
            for cand in cands:
                checked = r.run_example(cand)
                self.cycles_left -= len(checked.rows)
                out.append(not checked.ok)
            return out
        if not r._canonical:
            r.run_steps(EXAMPLE_PREAMBLE)
        parts: list[Columns] = []
        spans: list[tuple[int, int, Columns]] = []
        dirty = r._dirty
        pos = 0
        for cand in cands:
            cols = fit_columns(c, Columns.from_cycles(c, cand))  # several clocks: on the tick timeline
            pre = between_examples(c, dirty)
            parts += [pre, cols]
            pos += len(pre)
            spans.append((pos, pos + len(cols), cols))
            pos += len(cols)
            dirty = set(cols.written_addresses().tolist())
        value, defined = r._run_columns(Columns.concat(parts))
        r._dirty = dirty
        self.cycles_left -= pos
        self.tried += len(cands)
        r.examples_run += len(cands)
        r.counts["shrink_candidates"] = r.counts.get("shrink_candidates", 0) + len(cands)
        r.counts["shrink_cycles"] = r.counts.get("shrink_cycles", 0) + pos
        for _, _, cols in spans:
            r.cover_columns(cols)
        return [not check_arrays(c, cols, value[lo:hi], defined[lo:hi]).ok for lo, hi, cols in spans]


def between_examples(contract: Contract, dirty: set[int]) -> Columns:
    """What runs before an independent example: the words the last one wrote restored, then the flush."""
    parts = []
    if seq.fill_limit(contract) and dirty:
        parts.append(seq.restore_columns(contract, np.array(sorted(dirty), dtype=np.int64)))
    parts.append(seq.flush_columns(contract))
    return Columns.concat(parts)


def minimise_cycles(runner: Runner, cycles: Sequence[Cycle], cr: CandidateRunner | None = None) -> Shrunk:
    """Shrink a trace that fails as an independent example (steps 2-4 of the module docstring)."""
    cr = cr or CandidateRunner(runner)
    group = GROUP_CYCLES
    current = list(cycles)
    if not cr.fails_many([current])[0]:
        return Shrunk(runner.run_example(current), False, cr.tried, fresh=False)
    current, minimal = ddmin_batched(current, cr.fails_many, group_items=group)
    quieter = greedy(current, quiet_candidates(seq.quiet(runner.contract)), cr.fails_many, group_items=group)
    if quieter != current:
        current, minimal = ddmin_batched(quieter, cr.fails_many, group_items=group)
    current = greedy(current, simpler_candidates(seq.quiet(runner.contract)), cr.fails_many, group_items=group)
    minimal = minimal and _still_minimal(current, cr)
    # Run the final trace once more the way a replay runs it (reset, the whole fill, flush, the trace),
    # so the reported run is the one a replay reproduces.
    final = as_replayed(runner, current)
    if final.ok:
        return Shrunk(runner.run_example(current), minimal, cr.tried, fresh=False)
    return Shrunk(final, minimal, cr.tried)


def as_replayed(runner: Runner, cycles: Sequence[Cycle]) -> CheckedTrace:
    """Run ``cycles`` after the replay preamble (reset, fill, flush), as a replay of it does."""
    cycles = fit(runner.contract, cycles)
    runner.run_steps(EXAMPLE_PREAMBLE)
    obs = runner._run([Segment(tuple(cycles))])
    runner.cover(cycles)
    runner._dirty = seq.written_addresses(cycles)
    runner.examples_run += 1
    return check(runner.contract, "unknown", list(cycles), obs)


def _still_minimal(current: list[Cycle], cr: CandidateRunner) -> bool:
    """Simplifying values keeps 1-minimality in practice; confirm it (one more hand-over)."""
    if len(current) < 2:
        return True
    try:
        quiet = quiet_candidates(seq.quiet(cr.runner.contract))(current)
        drops = [current[:k] + current[k + 1 :] for k in range(len(current))]
        return not first_hits(drops + quiet, cr.fails_many, GROUP_CYCLES)
    except ShrinkBudgetSpent:
        return False


def shrink_stretch(runner: Runner, stretch: Columns, failing: int) -> Shrunk | None:
    """Shrink the failure at row ``failing`` of ``stretch`` (the phase's cycles up to the difference,
    possibly with unrelated rows left out): the shortest of the first candidates that fails on its
    own, minimised; None when none of them fails as an independent example."""
    cr = CandidateRunner(runner)
    cands = [c.to_cycles() for c in first_candidates(runner.contract, stretch, failing, runner.window_max)]
    cands.sort(key=len)
    try:
        hits = first_hits(cands, cr.fails_many, GROUP_CYCLES)
    except ShrinkBudgetSpent:  # pragma: no cover - the first hand-over is within any budget
        return None
    if not hits:
        return None
    return minimise_cycles(runner, cands[min(hits, key=lambda i: len(cands[i]))], cr)
