"""The checking phases, independent of how cycles reach the RTL.

An :class:`Engine` drives a :class:`Backend` (in the simulator: the generated harness through
cocotb; in unit tests: a Python stand-in) and compares every cycle with the reference model:

* smoke: reset, a few writes and reads per lane; readable reports for gross wiring errors;
* sweep: a March test (default March C-) over the standard data backgrounds, through each port that
  reads;
* property: Hypothesis examples, each an independent trace checked from a model that knows nothing
  (so only what the example itself wrote is checked), with the RTL brought to its canonical state
  before each one (see sequences.py) so that verdicts do not depend on example order. Short
  examples (a handful of operations, small readable traces) come first, then *bulk* examples
  (thousands of operations each, decoded from one Hypothesis byte string by numpy and checked by
  the vectorised model, see bulk.py): they give the phase its throughput and depth.

Any failure is shrunk (Hypothesis for the property phase, delta debugging for the others) to a
short trace that fails on its own from the canonical state, which is what a replay runs.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Sequence
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, replace
from typing import Any, Protocol

import numpy as np

from memcheck.contract import Contract
from memcheck.model_fast import Columns, limbs_of, limbs_to_ints
from memcheck.ops import Cycle, OpKind, Trace
from memcheck.sim import sequences as seq
from memcheck.sim.checker import (
    ArrayCheck,
    CheckedTrace,
    CycleRow,
    ModelStart,
    check,
    check_arrays,
    compare,
    expected_arrays,
    start_model,
)
from memcheck.sim.layout import Observed
from memcheck.sim.result import Failure, PhaseResult, RunResult
from memcheck.sim.sequences import Segment
from memcheck.sim.shrink import ddmin, quieten, simplify_values, trim_quiet_edges

PHASES: tuple[str, ...] = ("smoke", "sweep", "property")
#: The preamble of every independent example: reset, canonical fill, flush.
EXAMPLE_PREAMBLE: tuple[str, ...] = ("reset", "fill", "flush")
_WINDOW_MAX = 4096
#: Shrinking a failing bulk example: at most this many simulator runs and seconds of Hypothesis'
#: own shrinking (later candidates count as passing), then delta debugging finishes the job.
BULK_SHRINK_RUNS = 40
BULK_SHRINK_SECONDS = 30.0

Observations = list[tuple[Observed | None, ...]]


def observations_from_arrays(contract: Contract, value: np.ndarray, defined: np.ndarray) -> Observations:
    """Captured ``(value, defined)`` arrays as per-cycle tuples of :class:`Observed` (None: no read data)."""
    n = value.shape[0]
    cols: list[list[Observed] | None] = []
    for i, port in enumerate(contract.ports):
        if port.read_data is None:
            cols.append(None)
            continue
        cols.append(
            [Observed(v, d) for v, d in zip(limbs_to_ints(value[:, i]), limbs_to_ints(defined[:, i]), strict=True)]
        )
    return [tuple(None if col is None else col[k] for col in cols) for k in range(n)]


def arrays_from_observations(contract: Contract, obs: Observations) -> tuple[np.ndarray, np.ndarray]:
    """The inverse of :func:`observations_from_arrays` (unread ports give zeros)."""
    from memcheck.model_fast import ints_to_limbs

    limbs = limbs_of(contract.memory.width)
    n, p = len(obs), len(contract.ports)
    value = np.zeros((n, p, limbs), dtype=np.uint64)
    defined = np.zeros_like(value)
    for i in range(p):
        col = [o[i] for o in obs]
        if n and all(o is not None for o in col):
            value[:, i] = ints_to_limbs([o.value for o in col if o is not None], limbs)
            defined[:, i] = ints_to_limbs([o.defined for o in col if o is not None], limbs)
    return value, defined


class Backend(Protocol):
    """Runs cycles on the RTL and returns what the read-data pins showed in each."""

    batch_limit: int

    def run(self, segments: Sequence[Segment], *, dump: bool = False) -> Observations: ...


@dataclass(frozen=True)
class RunOptions:
    """What to run; the defaults are the default budget of ``memcheck check``."""

    phases: tuple[str, ...] = PHASES
    examples: int = 300
    seed: int = 0
    march: str = "March C-"
    backgrounds: str = "standard"
    sweep_max_ops: int = 2_000_000
    max_blocks: int = 12
    bulk_examples: int = 100
    bulk_shrink_runs: int = BULK_SHRINK_RUNS

    def to_json(self) -> dict[str, Any]:
        return {
            "phases": list(self.phases),
            "examples": self.examples,
            "seed": self.seed,
            "march": self.march,
            "backgrounds": self.backgrounds,
            "sweep_max_ops": self.sweep_max_ops,
            "max_blocks": self.max_blocks,
            "bulk_examples": self.bulk_examples,
            "bulk_shrink_runs": self.bulk_shrink_runs,
        }

    @classmethod
    def from_json(cls, obj: dict[str, Any]) -> RunOptions:
        return cls(
            tuple(obj["phases"]),
            int(obj["examples"]),
            int(obj["seed"]),
            str(obj["march"]),
            str(obj["backgrounds"]),
            int(obj["sweep_max_ops"]),
            int(obj["max_blocks"]),
            int(obj.get("bulk_examples", 0)),
            int(obj.get("bulk_shrink_runs", BULK_SHRINK_RUNS)),
        )


class _Mismatch(Exception):
    """Raised inside a Hypothesis example that differs from the model."""

    def __init__(self, checked: CheckedTrace) -> None:
        super().__init__(f"read data differs from the contract at cycle {checked.first_mismatch}")
        self.checked = checked


class _BulkMismatch(Exception):
    """Raised inside a bulk example that differs from the model."""

    def __init__(self, checked: ArrayCheck) -> None:
        super().__init__(f"read data differs from the contract at cycle {checked.first_mismatch}")
        self.checked = checked


class _ShrinkBudgetSpent(BaseException):
    """Ends Hypothesis' shrinking of a bulk example once its budget is spent. Not an ``Exception``, so
    Hypothesis lets it through (as it does KeyboardInterrupt) instead of taking it for a failure."""


def _digest(cols: Columns) -> bytes:
    import hashlib

    h = hashlib.blake2b(digest_size=16)
    for a in (cols.kind, cols.address, cols.data, cols.lanes, cols.lanes_given):
        h.update(np.ascontiguousarray(a).tobytes())
    return h.digest()


def _ops(cycles: Sequence[Cycle]) -> int:
    return sum(1 for c in cycles for op in c if op.kind != OpKind.IDLE)


class Engine:
    """Runs phases on a backend and keeps the RTL's canonical state for independent examples."""

    def __init__(
        self,
        contract: Contract,
        backend: Backend,
        options: RunOptions | None = None,
        progress: Callable[[dict[str, Any]], None] | None = None,
    ) -> None:
        self.contract = contract
        self.backend = backend
        self.options = options or RunOptions()
        self.progress = progress
        self.history: list[str] = []  # steps run since the simulator started (replayable prefix)
        self._canonical = False
        self._dirty: set[int] = set()
        self._quiet = seq.quiet(contract)
        self.cycles = 0
        self.where: dict[str, Any] = {"phase": "start"}
        self.examples_run = 0
        # Where example time goes (for bench/): running cycles on the RTL, and the model + comparison.
        self.timing: dict[str, float] = {
            "example_rtl": 0.0,
            "example_model": 0.0,
            "bulk_phase": 0.0,
            "bulk_shrink": 0.0,
            "bulk_generate": 0.0,
            "bulk_decode": 0.0,
        }
        self._pool: ThreadPoolExecutor | None = None  # set while bulk examples run
        self.counts: dict[str, int] = {
            "bulk_examples": 0,
            "bulk_operations": 0,
            "bulk_cycles": 0,
            "bulk_shrink_runs": 0,
        }

    # -- running cycles --------------------------------------------------------------------

    def before_batch(self, cycles: int) -> None:
        """Called by the backend before each batch it hands to the simulator."""
        if self.progress is not None:
            self.progress({**self.where, "cycle": self.cycles, "batch": cycles})
        self.cycles += cycles

    def _run(self, segments: Sequence[Segment | None], *, dump: bool = False) -> Observations:
        segs = [s for s in segments if s is not None and len(s)]
        if not segs:
            return []
        obs = self.backend.run(segs, dump=dump)
        if self._canonical:
            for s in segs:
                self._dirty |= seq.written_addresses(s.cycles)
        return obs

    def run_steps(self, steps: Sequence[str]) -> None:
        """Run preamble steps unchecked (see result.PreambleStep)."""
        c = self.contract
        chunk = self.backend.batch_limit
        for step in steps:
            if step == "reset":
                self._run([seq.reset_segment(c)])
            elif step == "fill":
                self._canonical = False
                self._run(list(seq.fill_segments(c, chunk)))
                self._canonical = True
                self._dirty = set()
            elif step == "flush":
                self._run([Segment(tuple(seq.flush_cycles(c)))])
            elif step == "smoke":
                self._run([Segment(tuple(seq.smoke_cycles(c)))])
            elif step.startswith("sweep:"):
                plan = self._plans()[int(step.split(":", 1)[1])]
                for s in seq.sweep_segments(c, plan, chunk):
                    self._run([s])
            else:
                raise ValueError(f"unknown preamble step {step!r}")
            self.history.append(step)

    # -- independent examples ----------------------------------------------------------------

    def run_example(self, cycles: Sequence[Cycle]) -> CheckedTrace:
        """Check ``cycles`` as an independent example: canonical RTL state, model knows nothing."""
        c = self.contract
        if not self._canonical:
            self.run_steps(EXAMPLE_PREAMBLE)
            pre: list[Cycle] = []
        else:
            restore = seq.restore_cycles(c, self._dirty) if seq.fill_limit(c) else []
            pre = restore + seq.flush_cycles(c)
        t0 = time.perf_counter()
        obs = self._run([Segment(tuple(pre) + tuple(cycles))])
        t1 = time.perf_counter()
        self._dirty = seq.written_addresses(cycles)
        self.examples_run += 1
        checked = check(c, "unknown", list(cycles), obs[len(pre) :])
        self.timing["example_rtl"] += t1 - t0
        self.timing["example_model"] += time.perf_counter() - t1
        return checked

    def _run_columns(self, cols: Columns) -> tuple[np.ndarray, np.ndarray]:
        """Run a trace given as columns; the backend's own columns path when it has one."""
        run = getattr(self.backend, "run_columns", None)
        if run is not None:
            value, defined = run(cols)
        else:
            obs = self._run([Segment(tuple(cols.to_cycles()))])
            return arrays_from_observations(self.contract, obs)
        if self._canonical:
            self._dirty |= set(cols.written_addresses().tolist())
        return value, defined

    def run_example_columns(self, cols: Columns) -> ArrayCheck:
        """:meth:`run_example` for a trace given as columns, checked by the vectorised model."""
        c = self.contract
        if not self._canonical:
            self.run_steps(EXAMPLE_PREAMBLE)
            pre = Columns.quiet(c, 0)
        else:
            parts = []
            if seq.fill_limit(c) and self._dirty:
                parts.append(seq.restore_columns(c, np.array(sorted(self._dirty), dtype=np.int64)))
            parts.append(seq.flush_columns(c))
            pre = Columns.concat(parts)
        # The model works in a second thread while the simulator runs (the machine has two cores).
        model = self._pool.submit(expected_arrays, c, cols) if self._pool is not None else None
        t0 = time.perf_counter()
        value, defined = self._run_columns(Columns.concat([pre, cols]))
        t1 = time.perf_counter()
        self._dirty = set(cols.written_addresses().tolist())
        self.examples_run += 1
        checked = check_arrays(
            c, cols, value[len(pre) :], defined[len(pre) :], "unknown", model.result() if model is not None else None
        )
        self.timing["example_rtl"] += t1 - t0
        self.timing["example_model"] += time.perf_counter() - t1
        return checked

    def _fails(self, cache: dict[tuple[Cycle, ...], CheckedTrace]) -> Callable[[list[Cycle]], bool]:
        def fails(cycles: list[Cycle]) -> bool:
            key = tuple(cycles)
            if key not in cache:
                cache[key] = self.run_example(cycles)
            return not cache[key].ok

        return fails

    def minimise(self, cycles: Sequence[Cycle]) -> CheckedTrace:
        """Shrink a trace that fails as an independent example; returns the smallest one's check."""
        cache: dict[tuple[Cycle, ...], CheckedTrace] = {}
        fails = self._fails(cache)
        current = list(cycles)
        if not fails(current):
            return cache[tuple(current)]
        current = ddmin(current, fails)
        current = quieten(current, self._quiet, fails)
        current = trim_quiet_edges(current, self._quiet, fails)
        current = ddmin(current, fails)
        current = simplify_values(current, fails)
        # Run the final trace once more, so the canonical-state run is the reported one.
        return self.run_example(current)

    def shrink_window(self, recent: Sequence[Cycle], failing: int) -> CheckedTrace | None:
        """Find a short window ending at ``recent[failing]`` that fails on its own, and minimise it."""
        cache: dict[tuple[Cycle, ...], CheckedTrace] = {}
        fails = self._fails(cache)
        w = 1
        while w <= min(failing + 1, _WINDOW_MAX):
            window = list(recent[failing - w + 1 : failing + 1])
            if fails(window):
                return self.minimise(window)
            if w == failing + 1:
                break
            w = min(w * 2, failing + 1)
        return None

    # -- phases ------------------------------------------------------------------------------

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
        self.history.append("smoke")
        checked = check(c, start, cycles, obs)
        ops = _ops(cycles)
        if checked.ok:
            return PhaseResult("smoke", "pass", len(cycles), ops, time.perf_counter() - t0), None
        k = checked.first_mismatch
        assert k is not None
        failure = self._shrink_phase_failure("smoke", cycles, k, checked, before + (["reset"] if c.reset else []))
        return (
            PhaseResult(
                "smoke", "fail", len(cycles), ops, time.perf_counter() - t0, f"read data differs at smoke cycle {k}"
            ),
            failure,
        )

    def _plans(self) -> list[seq.SweepPlan]:
        return seq.sweep_plans(self.contract, self.options.march, self.options.backgrounds)

    def sweep(self) -> tuple[PhaseResult, Failure | None]:
        t0 = time.perf_counter()
        c = self.contract
        plans = self._plans()
        total = sum(seq.sweep_ops(c, p) for p in plans)
        if not plans:
            return PhaseResult("sweep", "skipped", detail="no port both writes and reads"), None
        if total > self.options.sweep_max_ops:
            return PhaseResult(
                "sweep",
                "skipped",
                detail=(f"{total} operations exceed the sweep budget of {self.options.sweep_max_ops}"),
            ), None
        cycles_run = 0
        ops = 0
        for k, plan in enumerate(plans):
            self.where = {"phase": "sweep", "what": plan.describe(c), "total": total, "done": ops}
            before = list(self.history)
            if c.reset is not None:
                self.run_steps(["reset"])
            model = start_model(c, "unknown")
            recent: list[Cycle] = []
            for segment in seq.sweep_segments(c, plan, self.backend.batch_limit):
                if not len(segment):
                    continue
                self.where["done"] = ops
                obs = self._run([segment])
                checked = compare(model.run(segment.cycles), obs, segment.cycles, "unknown")
                cycles_run += len(segment)
                ops += _ops(segment.cycles)
                recent = (recent + list(segment.cycles))[-(_WINDOW_MAX + len(segment)) :]
                if checked.ok:
                    continue
                j = checked.first_mismatch
                assert j is not None
                base = cycles_run - len(segment)
                failure = self._shrink_sweep_failure(
                    plan,
                    recent,
                    len(recent) - len(segment) + j,
                    before + (["reset"] if c.reset else []),
                    base + j,
                    [replace(r, cycle=base + r.cycle) for r in checked.rows[max(0, j - 63) : j + 1]],
                )
                return (
                    PhaseResult(
                        "sweep",
                        "fail",
                        cycles_run,
                        ops,
                        time.perf_counter() - t0,
                        f"{plan.describe(c)}: read data differs at sweep cycle {base + j}",
                    ),
                    failure,
                )
            self.history.append(f"sweep:{k}")
        detail = "; ".join(p.describe(c) for p in plans)
        return PhaseResult("sweep", "pass", cycles_run, ops, time.perf_counter() - t0, detail), None

    def _shrink_phase_failure(
        self, phase: str, cycles: list[Cycle], k: int, checked: CheckedTrace, preamble: list[str]
    ) -> Failure:
        self.where = {"phase": phase, "what": "shrinking the failure"}
        small = self.shrink_window(cycles[: k + 1], k)
        if small is not None and not small.ok:
            return Failure(phase, EXAMPLE_PREAMBLE, small, f"shrunk from a failure at cycle {k} of the {phase} phase")
        return Failure(
            phase,
            tuple(preamble),
            CheckedTrace(checked.start, checked.rows[: k + 1]),
            f"the {phase} sequence up to its first difference (it does not fail as a short independent example)",
        )

    def _shrink_sweep_failure(
        self, plan: seq.SweepPlan, recent: list[Cycle], failing: int, preamble: list[str], at: int, rows: list[CycleRow]
    ) -> Failure:
        self.where = {"phase": "sweep", "what": "shrinking the failure"}
        small = self.shrink_window(recent, failing)
        if small is not None and not small.ok:
            return Failure(
                "sweep",
                EXAMPLE_PREAMBLE,
                small,
                f"shrunk from a failure at cycle {at} of {plan.describe(self.contract)}",
            )
        # Not reproducible as a short example: the sweep from its start is the trace (a replay reruns it).
        prefix: list[Cycle] = []
        for s in seq.sweep_segments(self.contract, plan, self.backend.batch_limit):
            prefix.extend(s.cycles)
            if len(prefix) > at:
                break
        return Failure(
            "sweep",
            tuple(preamble),
            CheckedTrace("unknown", tuple(rows)),
            f"the sweep ({plan.describe(self.contract)}) up to its first difference, at cycle {at}; "
            "it does not fail as a short independent example",
            Trace(tuple(prefix[: at + 1])),
        )

    def _hypothesis_settings(self, n: int, seed: int) -> Callable[[Callable[..., None]], Callable[[], None]]:
        from hypothesis import HealthCheck, Phase, Verbosity, settings
        from hypothesis import seed as hyp_seed

        def wrap(test: Callable[..., None]) -> Callable[[], None]:
            test = settings(
                max_examples=n,
                deadline=None,
                database=None,
                derandomize=False,
                print_blob=False,
                suppress_health_check=list(HealthCheck),
                report_multiple_bugs=False,
                phases=[Phase.explicit, Phase.generate, Phase.shrink],
                verbosity=Verbosity.quiet,
            )(test)
            return hyp_seed(seed)(test)  # type: ignore[no-any-return]

        return wrap

    def property(self) -> tuple[PhaseResult, Failure | None]:
        t0 = time.perf_counter()
        n, nb = self.options.examples, self.options.bulk_examples
        if n < 1 and nb < 1:
            return PhaseResult(
                "property", "skipped", detail="no examples asked for (--examples 0 --bulk-examples 0)"
            ), None
        stats = {"examples": 0, "ops": 0, "cycles": 0}
        found, note = self._short_examples(stats) if n > 0 else (None, "")
        if found is None and nb > 0:
            found, note = self._bulk_examples(stats)
        seconds = time.perf_counter() - t0
        ops, cycles_run = stats["ops"], stats["cycles"]
        parts = []
        if n > 0:
            parts.append(f"{min(stats['examples'], n)} examples")
        if nb > 0:
            parts.append(f"{self.counts['bulk_examples']} bulk examples ({self.counts['bulk_operations']} operations)")
        detail = " + ".join(parts)
        if found is None:
            return PhaseResult("property", "pass", cycles_run, ops, seconds, detail), None
        self.where = {"phase": "property", "what": "shrinking the failure"}
        k = found.first_mismatch
        assert k is not None
        if len(found.rows) > 64:
            # A long (bulk) trace: the shortest window ending at the difference that fails on its own.
            cycles = found.trace.cycles[: k + 1]
            small = self.shrink_window(cycles, k)
            if small is None or small.ok:
                # Only the example's long history shows it: report the example up to the difference
                # (a replay reruns it from the canonical state), as a sweep failure is reported.
                note = note or (
                    f"the bulk example up to its first difference, at cycle {k}; it does not fail "
                    f"as a window of up to {_WINDOW_MAX} cycles on its own"
                )
                return (
                    PhaseResult(
                        "property", "fail", cycles_run, ops, time.perf_counter() - t0, f"{detail} (including shrinking)"
                    ),
                    Failure(
                        "property",
                        EXAMPLE_PREAMBLE,
                        CheckedTrace("unknown", found.rows[max(0, k - 63) : k + 1]),
                        note,
                        Trace(tuple(cycles)),
                    ),
                )
            final = small
        else:
            final = self.minimise(found.trace.cycles)
        if final.ok:  # pragma: no cover - the canonical state did not reproduce it
            final = found
            note = note or "the failure did not reproduce from the canonical state"
        return (
            PhaseResult(
                "property", "fail", cycles_run, ops, time.perf_counter() - t0, f"{detail} (including shrinking)"
            ),
            Failure("property", EXAMPLE_PREAMBLE, final, note),
        )

    def _short_examples(self, stats: dict[str, int]) -> tuple[CheckedTrace | None, str]:
        """Hypothesis examples of a handful of operations: readable minimal traces for most bugs."""
        from hypothesis import given
        from hypothesis.errors import Flaky

        from memcheck.strategies import traces

        n = self.options.examples
        self.where = {"phase": "property", "what": "examples", "total": n, "done": 0}

        def prop(trace: Trace) -> None:
            stats["examples"] += 1
            stats["ops"] += trace.operation_count()
            stats["cycles"] += len(trace)
            self.where["done"] = stats["examples"]
            checked = self.run_example(trace.cycles)
            if not checked.ok:
                raise _Mismatch(checked)

        test = self._hypothesis_settings(n, self.options.seed)(
            given(traces(self.contract, max_blocks=self.options.max_blocks))(prop)
        )
        try:
            test()
        except _Mismatch as exc:
            return exc.checked, ""
        except Flaky as exc:
            inner = [e for e in getattr(exc, "exceptions", ()) if isinstance(e, _Mismatch)]
            if not inner:
                raise
            return inner[0].checked, (
                "Hypothesis saw this example pass once and fail once (state left by earlier examples)"
            )
        return None, ""

    def _bulk_examples(self, stats: dict[str, int]) -> tuple[CheckedTrace | None, str]:
        """Bulk examples (bulk.py): thousands of operations per Hypothesis example, checked column-wise.

        A failing one is shrunk by Hypothesis within a budget of simulator runs and seconds (then
        Hypothesis is stopped and the smallest failing example it tried is kept); the caller cuts it
        to the shortest failing window and delta-debugs it.
        """
        from hypothesis import given
        from hypothesis.errors import Flaky

        from memcheck.sim.bulk import bulk_specs, decode

        c = self.contract
        nb = self.options.bulk_examples
        t0 = time.perf_counter()
        self.where = {"phase": "property", "what": "bulk examples", "total": nb, "done": 0}
        seen: dict[bytes, ArrayCheck | None] = {}  # trace digest -> its failing check (None: conforms)
        shrink: dict[str, float] = {}
        mark = [time.perf_counter()]

        def prop(spec: Any) -> None:
            t_in = time.perf_counter()
            self.timing["bulk_generate"] += t_in - mark[0]
            try:
                _check(spec)
            finally:
                mark[0] = time.perf_counter()

        failing: dict[Any, ArrayCheck] = {}  # specs seen to fail (at most the shrink budget of them)
        best: list[ArrayCheck] = []  # the shortest of them

        def _check(spec: Any) -> None:
            known = failing.get(spec)
            if known is None:
                known = _run(spec)
            if known is not None:
                # One raise statement: Hypothesis tells failures apart by where they were raised.
                raise _BulkMismatch(known)

        def _run(spec: Any) -> ArrayCheck | None:
            if shrink and (
                self.counts["bulk_shrink_runs"] >= self.options.bulk_shrink_runs
                or time.perf_counter() - shrink["t0"] > BULK_SHRINK_SECONDS
            ):
                raise _ShrinkBudgetSpent
            t_in = time.perf_counter()
            cols = decode(c, spec)
            key = _digest(cols)
            self.timing["bulk_decode"] += time.perf_counter() - t_in
            if key in seen:
                known = seen[key]
                if known is not None:
                    failing[spec] = known
                return known
            if shrink:
                self.counts["bulk_shrink_runs"] += 1
            else:
                ops = cols.operation_count()
                self.counts["bulk_examples"] += 1
                self.counts["bulk_operations"] += ops
                self.counts["bulk_cycles"] += len(cols)
                stats["ops"] += ops
                stats["cycles"] += len(cols)
                self.where["done"] = self.counts["bulk_examples"]
            checked = self.run_example_columns(cols)
            seen[key] = None if checked.ok else checked
            if checked.ok:
                return None
            shrink.setdefault("t0", time.perf_counter())
            failing[spec] = checked
            if not best or len(cols) <= len(best[0].cols):
                best[:] = [checked]
            return checked

        test = self._hypothesis_settings(nb, (self.options.seed + 1) & ((1 << 64) - 1))(given(bulk_specs(c))(prop))
        found: ArrayCheck | None = None
        note = ""
        try:
            with ThreadPoolExecutor(max_workers=1, thread_name_prefix="memcheck-model") as pool:
                self._pool = pool
                test()
        except _BulkMismatch as exc:
            found = exc.checked
        except _ShrinkBudgetSpent:
            found = best[0]
        except Flaky as exc:  # pragma: no cover - results are cached per trace, so replays agree
            inner = [e for e in getattr(exc, "exceptions", ()) if isinstance(e, _BulkMismatch)]
            if not inner:
                raise
            found = inner[0].checked
            note = "Hypothesis saw this example pass once and fail once (state left by earlier examples)"
        finally:
            self._pool = None
        now = time.perf_counter()
        self.timing["bulk_phase"] += now - t0
        if found is None:
            return None, ""
        self.timing["bulk_shrink"] += now - shrink.get("t0", now)
        # Run the smallest failing bulk example again, so the RTL state matches a replay of it.
        again = self.run_example_columns(found.cols)
        if again.ok:  # pragma: no cover - keep what was seen; property() notes the non-reproduction
            return found.checked(), note or "the failure did not reproduce from the canonical state"
        return again.checked(), note

    def run(self) -> RunResult:
        """All requested phases, stopping at the first that fails."""
        results: list[PhaseResult] = []
        failure: Failure | None = None
        for name in PHASES:
            if name not in self.options.phases:
                continue
            if failure is not None:
                results.append(PhaseResult(name, "skipped", detail="an earlier phase failed"))
                continue
            phase_result, failure = getattr(self, name)()
            results.append(phase_result)
        return RunResult(
            phases=tuple(results),
            failure=failure,
            seed=self.options.seed,
            extra={
                "cycles_simulated": self.cycles,
                "examples_run": self.examples_run,
                **self.counts,
                **{f"seconds_{k}": round(v, 4) for k, v in self.timing.items()},
            },
        )

    # -- replay --------------------------------------------------------------------------------

    def replay(self, failure: Failure, *, dump: bool = False) -> CheckedTrace:
        """Run a failure's preamble, then its trace (dumped to the waveform when asked), checked."""
        self.where = {"phase": "replay", "what": "preamble"}
        self.run_steps(failure.preamble)
        self.where = {"phase": "replay", "what": "trace"}
        cycles = list(failure.trace.cycles)
        obs = self._run([Segment(tuple(cycles))], dump=dump)
        return check(self.contract, failure.checked.start, cycles, obs)
