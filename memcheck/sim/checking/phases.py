"""The phases of ``memcheck check``, independent of how cycles reach the RTL.

A :class:`PhaseRunner` runs, on a :class:`~memcheck.sim.checking.runner.Runner`'s backend, and
compares every cycle with the reference model:

* smoke: reset, a few writes and reads per lane; readable reports for gross wiring errors;
* sweep: a March test (default March C-) over the standard data backgrounds, through each port that
  reads, laid out by the one March schedule (:mod:`memcheck.sim.checking.schedule`, pauses included);
* property: Hypothesis examples, each an independent trace checked from a model that knows nothing
  (so only what the example itself wrote is checked), from the RTL's canonical state. Short
  examples (a handful of operations, small readable traces) come first, then *bulk* examples
  (thousands of operations each; see examples.py and bulk.py): they give the phase its throughput.

Any failure is shrunk (Hypothesis for the property phase, delta debugging for the others) to a
short trace that fails on its own from the canonical state, which is what a replay runs.
"""

from __future__ import annotations

import time

from memcheck.cover import coverage_of
from memcheck.model_fast import Columns
from memcheck.ops import Cycle, Trace
from memcheck.records import LIKELY_RACE, CheckedTrace, CycleRow, Failure, ModelStart, PhaseResult
from memcheck.sim.checking import sequences as seq
from memcheck.sim.checking.compare import check
from memcheck.sim.checking.examples import bulk_examples, short_examples
from memcheck.sim.checking.holes import close_holes
from memcheck.sim.checking.march_job import MarchJob, run_march_job
from memcheck.sim.checking.minimise import Shrunk, minimise_cycles, shrink_stretch
from memcheck.sim.checking.outcome import RunResult
from memcheck.sim.checking.runner import EXAMPLE_PREAMBLE, Runner, operation_count
from memcheck.sim.checking.seeded import seeded_search
from memcheck.sim.checking.sequences import Segment
from memcheck.sim.checking.stretch import sweep_stretch
from memcheck.sim.options import PHASES

#: Rows kept of a long failing trace (the rows up to its first difference).
_LONG_ROWS = 64


class PhaseRunner(Runner):
    """Runs the requested phases in order, stopping at the first that fails."""

    def run(self) -> RunResult:
        """All requested phases, stopping at the first that fails."""
        results: list[PhaseResult] = []
        failure: Failure | None = None
        phases = {"smoke": self.smoke, "sweep": self.sweep, "property": self.property}
        for name in PHASES:
            if name not in self.options.phases:
                continue
            if failure is not None:
                results.append(PhaseResult(name, "skipped", detail="an earlier phase failed"))
                continue
            phase_result, failure = phases[name]()
            results.append(phase_result)
        return RunResult(
            phases=tuple(results),
            failure=failure,
            seed=self.options.seed_or_zero(),
            coverage=coverage_of(self.contract, self.coverage),
            extra={
                "cycles_simulated": self.cycles,
                "examples_run": self.examples_run,
                **self.counts,
                **{f"seconds_{k}": round(v, 4) for k, v in self.timing.items()},
            },
        )

    # -- smoke ---------------------------------------------------------------------------------

    def smoke(self) -> tuple[PhaseResult, Failure | None]:
        t0 = time.perf_counter()
        c = self.contract
        self.where = {"phase": "smoke", "what": "smoke sequence"}
        cycles = seq.smoke_cycles(c)
        start: ModelStart = "reset" if c.reset is not None else "power-up"
        before = list(self.history)
        if c.reset is not None:
            self.run_steps(["reset"])
        obs = self._run([Segment(tuple(cycles))])
        self.cover(cycles)
        self.history.append("smoke")
        checked = check(c, start, cycles, obs)
        ops = operation_count(cycles)
        if checked.ok:
            return PhaseResult("smoke", "pass", len(cycles), ops, time.perf_counter() - t0), None
        k = checked.first_mismatch
        assert k is not None
        failure = self._shrink_smoke_failure(cycles, k, checked, before + (["reset"] if c.reset else []))
        seconds = time.perf_counter() - t0
        return PhaseResult("smoke", "fail", len(cycles), ops, seconds, f"read data differs at smoke cycle {k}"), failure

    def _shrink_smoke_failure(self, cycles: list[Cycle], k: int, checked: CheckedTrace, preamble: list[str]) -> Failure:
        self.where = {"phase": "smoke", "what": "shrinking the failure"}
        shrunk = shrink_stretch(self, Columns.from_cycles(self.contract, cycles[: k + 1]), k)
        if shrunk is not None and not shrunk.checked.ok:
            note = f"shrunk from a failure at cycle {k} of the smoke phase; {shrunk.note()}"
            return Failure("smoke", EXAMPLE_PREAMBLE, shrunk.checked, note)
        return Failure(
            "smoke",
            tuple(preamble),
            CheckedTrace(checked.start, checked.rows[: k + 1]),
            "the smoke sequence up to its first difference (it does not fail as a short independent example)",
        )

    # -- sweep ---------------------------------------------------------------------------------

    def sweep(self) -> tuple[PhaseResult, Failure | None]:
        t0 = time.perf_counter()
        c = self.contract
        plans = seq.sweep_plans(c, self.options)
        total = sum(p.schedule.operations for p in plans)
        if not plans:
            return PhaseResult("sweep", "skipped", detail="no port both writes and reads"), None
        if total > self.options.sweep_ops:
            detail = f"{total} operations exceed the sweep budget of {self.options.sweep_ops} (--sweep-ops)"
            return PhaseResult("sweep", "skipped", detail=detail), None
        counts = [0, 0]  # cycles run, operations
        for k, plan in enumerate(plans):
            found = self._sweep_one(plan, counts)
            if found is not None:
                failure, at = found
                seconds = time.perf_counter() - t0
                detail = f"{plan.describe(c)}: read data differs at sweep cycle {at}"
                return PhaseResult("sweep", "fail", counts[0], counts[1], seconds, detail), failure
            self.history.append(f"sweep:{k}")
        detail = "; ".join(p.describe(c) for p in plans)
        return PhaseResult("sweep", "pass", counts[0], counts[1], time.perf_counter() - t0, detail), None

    def _sweep_one(self, plan: seq.SweepPlan, counts: list[int]) -> tuple[Failure, int] | None:
        """Run one plan inside the simulator in batches (the March job's way: numpy schedule, the
        vectorised model carried across batches); on a difference, the shrunk failure and its cycle."""
        c = self.contract
        before = list(self.history)
        if c.reset is not None:
            self.run_steps(["reset"])
        job = MarchJob(
            "unknown", window=_LONG_ROWS, expectations=False, phase="sweep", what=plan.describe(c), cover=True
        )
        out = run_march_job(self, plan.schedule, job)
        counts[0] += int(out["cycles_run"])
        found = out["failure"]
        if found is None:
            counts[1] += plan.schedule.operations
            return None
        at = int(found["cycle"])
        last = plan.schedule.last_op_before(at)
        counts[1] += 0 if last is None else last + 1
        rows = list(CheckedTrace.from_json(found["window"]).rows)
        preamble = before + (["reset"] if c.reset else [])
        return self._shrink_sweep_failure(plan, at, preamble, rows), at

    def _shrink_sweep_failure(self, plan: seq.SweepPlan, at: int, preamble: list[str], rows: list[CycleRow]) -> Failure:
        self.where = {"phase": "sweep", "what": "shrinking the failure"}
        what = plan.describe(self.contract)
        c = self.contract
        if c.lockstep:
            stretch = sweep_stretch(plan.schedule, at, self.window_max)
        else:  # several clocks: the sweep was laid on the tick timeline, so its cycles are the laid ones
            stretch = Columns.from_cycles(c, plan.cycles(at + 1, self.backend.batch_limit))
        shrunk = shrink_stretch(self, stretch, len(stretch) - 1)
        if shrunk is not None and not shrunk.checked.ok:
            note = f"shrunk from a failure at cycle {at} of {what}; {shrunk.note()}"
            return Failure("sweep", EXAMPLE_PREAMBLE, shrunk.checked, note)
        seeded = seeded_search(self, stretch)
        if seeded is not None:
            note = (
                f"found by a property search seeded from the failing window of {what} (the failure at its "
                f"cycle {at} does not fail as a short independent example); {seeded.note()}"
            )
            return Failure("sweep", EXAMPLE_PREAMBLE, seeded.checked, note)
        # Not reproducible as a short example: the sweep from its start is the trace (a replay reruns it).
        prefix = plan.cycles(at + 1, self.backend.batch_limit)
        note = (
            f"the sweep ({what}) up to its first difference, at cycle {at}; "
            "it does not fail as a short independent example"
        )
        return Failure("sweep", tuple(preamble), CheckedTrace("unknown", tuple(rows)), note, Trace(tuple(prefix)))

    # -- property --------------------------------------------------------------------------------

    def property(self) -> tuple[PhaseResult, Failure | None]:
        t0 = time.perf_counter()
        n, nb = self.options.examples, self.options.bulk_examples
        if n < 1 and nb < 1:
            detail = "no examples asked for (--examples 0 --bulk-examples 0)"
            return PhaseResult("property", "skipped", detail=detail), None
        stats = {"examples": 0, "ops": 0, "cycles": 0}
        found, note = short_examples(self, stats) if n > 0 else (None, "")
        if found is None and nb > 0:
            found, note = bulk_examples(self, stats)
        if found is None:
            found = close_holes(self, stats)
        parts = []
        if n > 0:
            parts.append(f"{min(stats['examples'], n)} examples")
        if nb > 0:
            parts.append(f"{self.counts['bulk_examples']} bulk examples ({self.counts['bulk_operations']} operations)")
        if stats.get("directed"):
            parts.append(f"{stats['directed']} directed examples for cover holes")
        detail = " + ".join(parts)
        if found is None:
            return PhaseResult(
                "property", "pass", stats["cycles"], stats["ops"], time.perf_counter() - t0, detail
            ), None
        failure = self._shrink_property_failure(found, note)
        seconds = time.perf_counter() - t0
        result = PhaseResult(
            "property", "fail", stats["cycles"], stats["ops"], seconds, f"{detail} (including shrinking)"
        )
        return result, failure

    def _shrink_property_failure(self, found: CheckedTrace, note: str) -> Failure:
        self.where = {"phase": "property", "what": "shrinking the failure"}
        k = found.first_mismatch
        assert k is not None
        if len(found.rows) <= _LONG_ROWS:
            if any(found.trace.power):  # power states: delta debugging over cycles with their states
                final = self.minimise(found.trace.cycles, found.trace.power)
                return Failure("property", EXAMPLE_PREAMBLE, found if final.ok else final, note or _race(final))
            shrunk: Shrunk | None = minimise_cycles(self, found.trace.cycles)
        else:
            # A long (bulk) trace: the operations on the failing read's addresses, or the shortest
            # window ending at the difference, that fails on its own, minimised.
            cycles = found.trace.cycles[: k + 1]
            shrunk = shrink_stretch(self, Columns.from_cycles(self.contract, cycles), k)
            if shrunk is None or shrunk.checked.ok:
                # Only the example's long history shows it: report the example up to the difference
                # (a replay reruns it from the canonical state), as a sweep failure is reported.
                note = note or (
                    f"the bulk example up to its first difference, at cycle {k}; it does not fail "
                    f"as a window of up to {self.window_max} cycles on its own"
                )
                rows = found.rows[max(0, k - _LONG_ROWS + 1) : k + 1]
                return Failure("property", EXAMPLE_PREAMBLE, CheckedTrace("unknown", rows), note, Trace(tuple(cycles)))
        assert shrunk is not None
        final = shrunk.checked
        if final.ok:  # the canonical state did not reproduce it
            return Failure("property", EXAMPLE_PREAMBLE, found, note or LIKELY_RACE)
        return Failure("property", EXAMPLE_PREAMBLE, final, "; ".join(x for x in (note, shrunk.note()) if x))


def _race(final: CheckedTrace) -> str:
    """The note of a failure that did not fail again from the same state (else none)."""
    return LIKELY_RACE if final.ok else ""
