"""The checking phases against a Python stand-in for the RTL (no simulator needed)."""

from __future__ import annotations

import json
from dataclasses import replace
from typing import Any

import pytest

from memcheck.ops import OpKind, PortOp, read, write
from memcheck.records import Failure
from memcheck.sim.checking.outcome import RunResult
from memcheck.sim.checking.phases import PhaseRunner as Engine
from memcheck.sim.checking.runner import EXAMPLE_PREAMBLE
from memcheck.sim.checking.sequences import fill_word, smoke_cycles
from memcheck.sim.checking.shrink import ddmin
from memcheck.sim.options import SimOptions as RunOptions
from tests.sim_pyram import PyRam, contract

FAST = RunOptions(examples=40, seed=7, bulk_examples=3)


def _engine(bug: str, options: RunOptions = FAST) -> Engine:
    c = contract()
    return Engine(c, PyRam(c, bug), options)


def test_a_conforming_wrapper_passes_every_phase() -> None:
    res = _engine("none").run()
    assert [(p.name, p.verdict) for p in res.phases] == [("smoke", "pass"), ("sweep", "pass"), ("property", "pass")]
    assert res.failure is None
    # March C- is 10N operations per background (A.J. van de Goor, "Testing Semiconductor Memories:
    # Theory and Practice", 1991); an 8-bit word has ceil(log2 8) + 1 = 4 standard backgrounds.
    sweep = res.phases[1]
    assert sweep.operations == 10 * 16 * 4


@pytest.mark.parametrize("bug", ["swap_lanes", "stale_bypass", "late_data", "no_lane_mask"])
def test_each_seeded_bug_is_found_with_a_short_trace_that_replays(bug: str) -> None:
    res = _engine(bug).run()
    assert res.failure is not None, bug
    f = res.failure
    assert len(f.trace) <= 6
    assert not f.checked.ok
    assert f.preamble == EXAMPLE_PREAMBLE
    # A fresh "simulator" running the replay preamble and the trace shows the same mismatch.
    c = contract()
    again = Engine(c, PyRam(c, bug), FAST).replay(Failure.from_json(json.loads(json.dumps(f.to_json()))))
    assert again.signature() == f.checked.signature()


def test_property_phase_alone_finds_a_bug_and_shrinks_it() -> None:
    res = _engine("stale_bypass", RunOptions(examples=200, seed=3, phases=("property",))).run()
    assert res.failure is not None and res.failure.phase == "property"
    assert len(res.failure.trace) <= 6
    # What is left: a partial write (the bypass register misses it) and a read of the same word.
    ops = [c[0] for c in res.failure.trace.cycles]
    partial = [op for op in ops if op.kind == OpKind.WRITE and op.lanes is not None]
    assert partial and any(op.kind == OpKind.READ and op.address == partial[0].address for op in ops)


def test_verdicts_do_not_depend_on_earlier_examples() -> None:
    """The minimal trace fails on its own from the canonical start, whatever ran before it."""
    c = contract()
    res = Engine(c, PyRam(c, "stale_bypass"), RunOptions(examples=200, seed=11, phases=("property",))).run()
    assert res.failure is not None
    trace = res.failure.trace.cycles
    # Run many unrelated examples first, then the failing one: same verdict and same mismatch.
    eng = Engine(c, PyRam(c, "stale_bypass"), FAST)
    for a in range(16):
        eng.run_example([(write(a, 0xFF),), (read(a),), (PortOp(OpKind.IDLE),)])
    assert eng.run_example(trace).signature() == res.failure.checked.signature()


def test_same_seed_same_result_and_seed_is_reported() -> None:
    a = _engine("swap_lanes", RunOptions(examples=30, seed=5, phases=("property",))).run()
    b = _engine("swap_lanes", RunOptions(examples=30, seed=5, phases=("property",))).run()
    assert a.failure is not None and b.failure is not None
    assert a.failure.trace == b.failure.trace
    assert a.seed == 5


def test_phases_stop_after_the_first_failure() -> None:
    res = _engine("swap_lanes").run()
    assert [p.verdict for p in res.phases] == ["fail", "skipped", "skipped"]
    assert res.failure is not None and res.failure.phase == "smoke"


def test_run_result_round_trips_through_json() -> None:
    res = _engine("late_data").run()
    back = RunResult.from_json(json.loads(json.dumps(res.to_json())))
    assert back.to_json() == res.to_json()


def test_smoke_writes_and_reads_every_lane() -> None:
    c = contract()
    cycles = smoke_cycles(c)
    lanes = {op.lanes for cyc in cycles for op in cyc if op.kind == OpKind.WRITE}
    assert lanes == {None, 1, 2}
    assert any(op.kind == OpKind.READ for cyc in cycles for op in cyc)


def test_fill_pattern_is_deterministic_and_never_trivial() -> None:
    for width in (1, 2, 8, 64, 65, 1024):
        vals = [fill_word(width, a) for a in range(64)]
        assert vals == [fill_word(width, a) for a in range(64)]
        if width > 1:
            assert all(v not in (0, (1 << width) - 1) for v in vals)
            assert len(set(vals)) > 1


def test_ddmin_finds_a_one_minimal_failing_subset() -> None:
    # Delta debugging: A. Zeller and R. Hildebrandt, "Simplifying and Isolating Failure-Inducing
    # Input", IEEE TSE 28(2), 2002. Their running example has eight changes of which 1, 7 and 8
    # together cause the failure (value from memory); ddmin must return exactly those.
    items = [(read(i),) for i in range(1, 9)]
    need = {1, 7, 8}

    def fails(xs: list[Any]) -> bool:
        return need <= {c[0].address for c in xs}

    assert [c[0].address for c in ddmin(items, fails)] == [1, 7, 8]


def test_a_sweep_failure_that_needs_history_is_reported_from_the_start_and_replays(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    """A word that loses a bit when it is not rewritten for a while fails the March sweep, but no short
    window fails on its own: the report keeps the sweep from its start, and a replay reruns it."""
    monkeypatch.setattr(Engine, "window_max", 4)
    res = _engine("decay", RunOptions(examples=5, seed=1, phases=("smoke", "sweep"))).run()
    f = res.failure
    assert f is not None and f.phase == "sweep"
    assert f.preamble[:1] == ("smoke",) and len(f.trace) > 16
    assert "does not fail as a short independent example" in f.note
    c = contract()
    again = Engine(c, PyRam(c, "decay"), FAST).replay(Failure.from_json(json.loads(json.dumps(f.to_json()))))
    assert again.signature() == f.checked.signature()


# -- bulk examples --------------------------------------------------------------------------------

BULK = RunOptions(examples=0, bulk_examples=20, seed=5, phases=("property",))


@pytest.mark.parametrize("bug", ["swap_lanes", "stale_bypass", "late_data", "no_lane_mask"])
def test_bulk_examples_alone_find_each_bug_and_shrink_it(bug: str) -> None:
    res = _engine(bug, BULK).run()
    f = res.failure
    assert f is not None and f.phase == "property", bug
    assert "bulk examples" in res.phases[0].detail
    assert len(f.trace) <= 6 and f.preamble == EXAMPLE_PREAMBLE
    # Hypothesis shrank within its budget of simulator runs, then delta debugging finished.
    assert 0 < res.extra["bulk_shrink_runs"] <= BULK.bulk_shrink_runs
    c = contract()
    again = Engine(c, PyRam(c, bug), FAST).replay(Failure.from_json(json.loads(json.dumps(f.to_json()))))
    assert again.signature() == f.checked.signature()


def test_bulk_examples_run_thousands_of_operations_each_and_pass_a_conforming_wrapper() -> None:
    res = _engine("none", RunOptions(examples=0, bulk_examples=4, seed=2, phases=("property",))).run()
    assert res.failure is None
    ran = res.extra["bulk_examples"]
    assert 1 <= ran <= 4 and res.phases[0].operations == res.extra["bulk_operations"] > 2000 * ran


def test_bulk_results_repeat_with_the_seed() -> None:
    opts = replace(BULK, bulk_shrink_runs=10)
    a = _engine("late_data", opts).run()
    b = _engine("late_data", opts).run()
    assert a.failure is not None and b.failure is not None
    assert a.failure.trace == b.failure.trace


def test_columns_and_cycle_paths_agree_on_the_stand_in() -> None:
    """run_example (cycles, per-cycle objects) and run_example_columns (arrays) give the same verdict."""
    from memcheck.model_fast import Columns

    c = contract()
    cycles = [
        (write(3, 0xA5, 1),),
        (read(3),),
        (PortOp(OpKind.IDLE),),
        (write(3, 0x5A),),
        (read(3),),
        (PortOp(OpKind.IDLE),),
    ]
    for bug in ("none", "swap_lanes", "late_data"):
        eng = Engine(c, PyRam(c, bug), FAST)
        rows = eng.run_example(cycles)
        arr = eng.run_example_columns(Columns.from_cycles(c, cycles))
        assert arr.checked().to_json() == rows.to_json()
        assert arr.ok == rows.ok and arr.first_mismatch == rows.first_mismatch


def test_vectorised_fill_and_restore_match_the_cycle_versions() -> None:
    import numpy as np

    from memcheck.model_fast import limbs_to_ints
    from memcheck.sim.checking.sequences import fill_words, flush_columns, flush_cycles, restore_columns, restore_cycles

    for width in (1, 2, 8, 63, 64, 65, 1024):
        a = np.arange(300)
        assert limbs_to_ints(fill_words(width, a)) == [fill_word(width, int(x)) for x in a]
    c = contract()
    assert restore_columns(c, np.array([1, 4, 9])).to_cycles() == restore_cycles(c, [9, 1, 4])
    assert flush_columns(c).to_cycles() == flush_cycles(c)


def test_short_examples_put_garbage_addresses_from_the_pool() -> None:
    """Disabled ports' garbage addresses come from the trace's pool of hot addresses, so a wrapper that
    writes while deselected is caught by a later read of the same word."""
    from hypothesis import HealthCheck, given, settings

    from memcheck.strategies import traces

    c = contract(words=1024)
    seen_garbage = []

    @settings(max_examples=150, deadline=None, database=None, suppress_health_check=list(HealthCheck))
    @given(traces(c, max_pool=3))
    def prop(trace) -> None:  # type: ignore[no-untyped-def]
        ops = [op for cyc in trace.cycles for op in cyc]
        garbage = [op for op in ops if op.kind == OpKind.IDLE and (op.address or op.data or op.lanes is not None)]
        seen_garbage.extend(garbage)
        assert len({op.address for op in ops if op.kind != OpKind.IDLE or op in garbage}) <= 3

    prop()
    assert seen_garbage


def test_a_bulk_failure_that_needs_long_history_is_reported_up_to_its_difference_and_replays(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    """A word that loses a bit when not rewritten for a while: with windows capped at 4 cycles no short
    window fails on its own, so the bulk example up to its first difference is the trace."""
    monkeypatch.setattr(Engine, "window_max", 4)
    res = _engine("decay", replace(BULK, bulk_shrink_runs=0)).run()
    f = res.failure
    assert f is not None and f.phase == "property" and f.full_trace is not None
    assert "does not fail as a window" in f.note and len(f.trace) > 12
    assert f.checked.rows[-1].cycle == len(f.trace) - 1 and not f.checked.rows[-1].ok
    c = contract()
    again = Engine(c, PyRam(c, "decay"), FAST).replay(Failure.from_json(json.loads(json.dumps(f.to_json()))))
    assert again.signature() == f.checked.signature()
