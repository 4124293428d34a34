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
from dataclasses import replace

from memcheck.cover import coverage_of
from memcheck.ops import Cycle, Trace
from memcheck.records import LIKELY_RACE, CheckedTrace, CycleRow, Failure, ModelStart, PhaseResult
from memcheck.sim.checking import sequences as seq
from memcheck.sim.checking.compare import check, compare, start_model
from memcheck.sim.checking.examples import bulk_examples, short_examples
from memcheck.sim.checking.holes import close_holes
from memcheck.sim.checking.outcome import RunResult
from memcheck.sim.checking.runner import EXAMPLE_PREAMBLE, Runner, operation_count
from memcheck.sim.checking.sequences import Segment
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
        small = self.shrink_window(cycles[: k + 1], k)
        if small is not None and not small.ok:
            return Failure("smoke", EXAMPLE_PREAMBLE, small, f"shrunk from a failure at cycle {k} of the smoke phase")
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
            detail = f"{total} operations exceed the sweep budget of {self.options.sweep_ops}"
            return PhaseResult("sweep", "skipped", detail=detail), None
        counts = [0, 0]  # cycles run, operations
        for k, plan in enumerate(plans):
            self.where = {"phase": "sweep", "what": plan.describe(c), "total": total, "done": counts[1]}
            failure = self._sweep_one(plan, counts)
            if failure is not None:
                at = failure[1]
                seconds = time.perf_counter() - t0
                detail = f"{plan.describe(c)}: read data differs at sweep cycle {at}"
                return PhaseResult("sweep", "fail", counts[0], counts[1], seconds, detail), failure[0]
            self.history.append(f"sweep:{k}")
        detail = "; ".join(p.describe(c) for p in plans)
        return PhaseResult("sweep", "pass", counts[0], counts[1], time.perf_counter() - t0, detail), None

    def _sweep_one(self, plan: seq.SweepPlan, counts: list[int]) -> tuple[Failure, int] | None:
        """Run one plan; on a difference, the shrunk failure and the sweep cycle it was found at."""
        c = self.contract
        before = list(self.history)
        if c.reset is not None:
            self.run_steps(["reset"])
        model = start_model(c, "unknown")
        recent: list[Cycle] = []
        done = 0
        for segment in plan.segments(self.backend.batch_limit):
            self.where["done"] = counts[1]
            obs = self._run([segment])
            self.cover(segment.cycles)
            checked = compare(model.run(segment.cycles), obs, segment.cycles, "unknown")
            done += len(segment)
            counts[0] += len(segment)
            counts[1] += operation_count(segment.cycles)
            recent = (recent + list(segment.cycles))[-(self.window_max + len(segment)) :]
            j = checked.first_mismatch
            if j is None:
                continue
            base = done - len(segment)
            rows = [replace(r, cycle=base + r.cycle) for r in checked.rows[max(0, j - _LONG_ROWS + 1) : j + 1]]
            preamble = before + (["reset"] if c.reset else [])
            return self._shrink_sweep_failure(plan, recent, len(recent) - len(segment) + j, preamble, base + j, rows)
        return None

    def _shrink_sweep_failure(
        self, plan: seq.SweepPlan, recent: list[Cycle], failing: int, preamble: list[str], at: int, rows: list[CycleRow]
    ) -> tuple[Failure, int]:
        self.where = {"phase": "sweep", "what": "shrinking the failure"}
        what = plan.describe(self.contract)
        small = self.shrink_window(recent, failing)
        if small is not None and not small.ok:
            return Failure("sweep", EXAMPLE_PREAMBLE, small, f"shrunk from a failure at cycle {at} of {what}"), at
        # Not reproducible as a short example: the sweep from its start is the trace (a replay reruns it).
        prefix = plan.cycles(at + 1, self.backend.batch_limit)
        note = (
            f"the sweep ({what}) up to its first difference, at cycle {at}; "
            "it does not fail as a short independent example"
        )
        return Failure("sweep", tuple(preamble), CheckedTrace("unknown", tuple(rows)), note, Trace(tuple(prefix))), at

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
            final = self.minimise(found.trace.cycles, found.trace.power)
        else:
            # A long (bulk) trace: the shortest window ending at the difference that fails on its own.
            cycles = found.trace.cycles[: k + 1]
            small = self.shrink_window(cycles, k)
            if small is None or small.ok:
                # Only the example's long history shows it: report the example up to the difference
                # (a replay reruns it from the canonical state), as a sweep failure is reported.
                note = note or (
                    f"the bulk example up to its first difference, at cycle {k}; it does not fail "
                    f"as a window of up to {self.window_max} cycles on its own"
                )
                rows = found.rows[max(0, k - _LONG_ROWS + 1) : k + 1]
                return Failure("property", EXAMPLE_PREAMBLE, CheckedTrace("unknown", rows), note, Trace(tuple(cycles)))
            final = small
        if final.ok:  # pragma: no cover - the canonical state did not reproduce it
            final = found
            note = note or LIKELY_RACE
        return Failure("property", EXAMPLE_PREAMBLE, final, note)
