"""Shrinking failures to 1-minimal traces: batched delta debugging, first candidates from the failing
stretch, the seeded search, against a Python stand-in for the RTL (no simulator needed)."""

from __future__ import annotations

import json
from typing import Any

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from memcheck.model_fast import Columns
from memcheck.ops import OpKind, read, write
from memcheck.records import Failure
from memcheck.sim.checking.phases import PhaseRunner
from memcheck.sim.checking.runner import EXAMPLE_PREAMBLE
from memcheck.sim.checking.shrink import ShrinkBudgetSpent, ddmin_batched
from memcheck.sim.checking.stretch import failing_addresses, first_candidates, sweep_stretch
from memcheck.sim.options import SimOptions
from tests.sim_pyram import PyRam, contract

SWEEP = SimOptions(examples=5, bulk_examples=0, seed=3, phases=("smoke", "sweep"))


# -- delta debugging ---------------------------------------------------------------------------------


def _monotone(need: set[int]) -> Any:
    """A failure that needs every element of ``need`` (the model case of Zeller and Hildebrandt, 2002)."""
    calls: list[int] = []

    def fails_many(cands: list[list[int]]) -> list[bool]:
        calls.append(len(cands))
        return [need <= set(c) for c in cands]

    return fails_many, calls


@settings(max_examples=60, deadline=None)
@given(st.integers(2, 300).flatmap(lambda n: st.tuples(st.just(n), st.sets(st.integers(0, n - 1), min_size=1))))
def test_ddmin_batched_returns_exactly_the_needed_elements(case: tuple[int, set[int]]) -> None:
    # For a failure that needs a fixed set of elements, the 1-minimal failing subsequence (Zeller and
    # Hildebrandt, "Simplifying and Isolating Failure-Inducing Input", IEEE TSE 28(2), 2002, definition
    # of 1-minimality) is that set, in order: checked against the set itself.
    n, need = case
    fails_many, _ = _monotone(need)
    result, minimal = ddmin_batched(list(range(n)), fails_many)
    assert minimal and result == sorted(need)


def test_ddmin_batched_needs_few_hand_overs() -> None:
    # Three needed elements among 4,096: one candidate at a time takes hundreds of runs; batched, each
    # round is one hand-over, a few dozen in all.
    fails_many, calls = _monotone({5, 2000, 4090})
    result, _ = ddmin_batched(list(range(4096)), fails_many)
    assert result == [5, 2000, 4090]
    assert len(calls) <= 60 and max(calls) > 1


def test_ddmin_batched_stops_at_its_budget_with_a_smaller_failing_trace() -> None:
    need = {3, 77}
    rounds = [0]

    def fails_many(cands: list[list[int]]) -> list[bool]:
        rounds[0] += 1
        if rounds[0] > 5:
            raise ShrinkBudgetSpent
        return [need <= set(c) for c in cands]

    result, minimal = ddmin_batched(list(range(100)), fails_many)
    assert not minimal and need <= set(result) and len(result) < 100


# -- first candidates ---------------------------------------------------------------------------------


def test_first_candidates_reach_the_write_far_before_the_failing_read() -> None:
    c = contract(words=1024)
    cycles = [(write(7, 0x5A),)] + [(write(100 + k % 900, k & 0xFF),) for k in range(2000)] + [(read(7),), (read(8),)]
    stretch = Columns.from_cycles(c, cycles)
    failing = len(cycles) - 1  # read latency 1: the read of 7 shows on the last row
    # The rows that can show on the last one (read latency 1): the last write and both reads.
    assert failing_addresses(c, stretch, failing) == {7, 8, 100 + 1999 % 900}
    cands = [x.to_cycles() for x in first_candidates(c, stretch, failing, 4096)]
    # The first focus candidate: the write of 7 two thousand cycles back, the three writes of word 299,
    # the reads; windows end at the read.
    focus = cands[0]
    assert focus[0] == (write(7, 0x5A),) and focus[-2:] == [(read(7),), (read(8),)] and len(focus) == 6
    assert any(len(x) == 1 for x in cands) and any(len(x) == len(cycles) for x in cands)


# -- whole phases on the stand-in ---------------------------------------------------------------------


def _replays(bug: str, f: Failure, words: int) -> bool:
    c = contract(words=words)
    again = PhaseRunner(c, PyRam(c, bug), SWEEP).replay(Failure.from_json(json.loads(json.dumps(f.to_json()))))
    return again.signature() == f.checked.signature()


def test_a_sweep_failure_needing_earlier_writes_shrinks_to_a_one_minimal_trace() -> None:
    """A posted-write buffer that commits to the wrong word: the sweep of 1,024 words finds it more
    than a thousand cycles after the write it needs; shrinking leaves the write, the two writes that
    push it out of the buffer, the read and one cycle for the read data (read latency 1)."""
    c = contract(words=1024)
    runner = PhaseRunner(c, PyRam(c, "posted_write"), SWEEP)
    res = runner.run()
    f = res.failure
    assert f is not None and f.phase == "sweep" and f.preamble == EXAMPLE_PREAMBLE
    assert "1-minimal" in f.note and len(f.trace) == 5
    kinds = [cyc[0].kind for cyc in f.trace.cycles]
    assert kinds == [OpKind.WRITE, OpKind.WRITE, OpKind.WRITE, OpKind.READ, OpKind.IDLE]
    assert f.trace.cycles[0][0].address == f.trace.cycles[3][0].address
    assert _replays("posted_write", f, 1024)
    # Candidates went to the stand-in many at a time.
    assert res.extra["shrink_candidates"] > 10


@pytest.mark.parametrize("bug", ["swap_lanes", "stale_bypass", "late_data", "no_lane_mask", "posted_write"])
def test_every_seeded_bug_of_the_stand_in_shrinks_to_at_most_ten_cycles(bug: str) -> None:
    res = PhaseRunner(contract(), PyRam(contract(), bug), SimOptions(examples=40, bulk_examples=3, seed=7)).run()
    assert res.failure is not None and len(res.failure.trace) <= 10 and "1-minimal" in res.failure.note, bug


def test_a_sweep_failure_whose_stretch_will_not_shrink_is_found_again_by_a_seeded_search(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    """Without the rows that matter (the stretch cut to its last two rows), no candidate fails on its
    own; bulk examples seeded with the failing window's addresses find the bug again, and it shrinks."""
    monkeypatch.setattr("memcheck.sim.checking.phases.sweep_stretch", lambda s, at, keep: sweep_stretch(s, at, 2)[-2:])
    c = contract(words=64)
    res = PhaseRunner(c, PyRam(c, "posted_write"), SWEEP).run()
    f = res.failure
    assert f is not None and f.phase == "sweep"
    assert "seeded from the failing window" in f.note and len(f.trace) <= 10
    assert 1 <= res.extra["seeded_examples"] <= 50
    assert _replays("posted_write", f, 64)
