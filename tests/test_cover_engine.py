"""Coverage through the checking phases, against the Python stand-in for the RTL (no simulator)."""

from __future__ import annotations

from memcheck.ops import OpKind
from memcheck.sim.checking.holes import close_holes
from memcheck.sim.checking.phases import PhaseRunner
from memcheck.sim.options import SimOptions
from tests.sim_pyram import PyRam, contract

TINY = SimOptions(examples=1, bulk_examples=0, seed=3, phases=("property",))


def test_every_phase_is_counted_and_the_default_budget_hits_every_point() -> None:
    c = contract()
    res = PhaseRunner(c, PyRam(c), SimOptions(examples=40, bulk_examples=2, seed=7)).run()
    assert res.coverage is not None
    assert res.coverage.holes == (), res.coverage.hole_text()
    # The smoke and sweep phases alone already write with every lane, at address 0 and the last word.
    smoke_sweep = PhaseRunner(c, PyRam(c), SimOptions(seed=7, phases=("smoke", "sweep"))).run().coverage
    assert smoke_sweep is not None
    hits = {r.point.key: r.hits for r in smoke_sweep.points}
    assert hits["a:lanes.all"] > 0 and hits["a:address.last"] > 0 and hits["a:lanes.single"] > 0


def test_directed_examples_close_the_holes_a_tiny_random_budget_leaves() -> None:
    c = contract()
    left = PhaseRunner(c, PyRam(c), TINY.replace(directed_examples=0)).run()
    assert left.coverage is not None and len(left.coverage.holes) > 5
    closed = PhaseRunner(c, PyRam(c), TINY).run()
    assert closed.failure is None and closed.coverage is not None
    assert closed.coverage.holes == (), closed.coverage.hole_text()
    assert "directed examples for cover holes" in closed.phases[0].detail


def test_directed_examples_stop_at_the_budget() -> None:
    c = contract()
    runner = PhaseRunner(c, PyRam(c), TINY.replace(directed_examples=3))
    stats = {"examples": 0, "ops": 0, "cycles": 0}
    assert close_holes(runner, stats) is None
    assert stats["directed"] == 3 and runner.examples_run == 3


def test_a_directed_example_that_shows_a_bug_fails_the_property_phase() -> None:
    # No random examples at all beyond one; the lane bug shows in the directed lane examples.
    c = contract()
    res = PhaseRunner(c, PyRam(c, "no_lane_mask"), TINY).run()
    assert res.failure is not None and res.failure.phase == "property"
    assert any(op.kind == OpKind.WRITE and op.lanes for cyc in res.failure.trace.cycles for op in cyc)
