"""The property phase's search: Hypothesis examples run on the RTL as independent traces.

Short examples (:func:`memcheck.strategies.traces`, a handful of operations) give readable minimal
traces for most bugs; bulk examples (:mod:`memcheck.sim.checking.bulk`, thousands of operations
each, checked column-wise) give the phase its throughput and depth. Each search returns the failing
check it found (or None) and a note; the phase (phases.py) shrinks it further.
"""

from __future__ import annotations

import hashlib
import time
from collections.abc import Callable
from concurrent.futures import ThreadPoolExecutor
from typing import Any

import numpy as np

from memcheck.model_fast import Columns, unsupported
from memcheck.ops import Trace
from memcheck.records import LIKELY_RACE, CheckedTrace
from memcheck.sim.checking.compare import ArrayCheck
from memcheck.sim.checking.runner import Runner

#: Shrinking a failing bulk example: at most this many seconds of Hypothesis' own shrinking (and
#: ``SimOptions.bulk_shrink_runs`` simulator runs; later candidates count as passing), then delta
#: debugging finishes the job.
BULK_SHRINK_SECONDS = 30.0
#: Bulk examples of a contract the vectorised model cannot check (several clocks, power pins) are
#: checked by the reference model, about a hundred times slower: new ones stop after this many seconds.
SLOW_MODEL_BULK_SECONDS = 30.0


class _Mismatch(Exception):
    """Raised inside a Hypothesis example that differs from the model."""

    def __init__(self, checked: CheckedTrace | ArrayCheck) -> None:
        super().__init__(f"read data differs from the contract at cycle {checked.first_mismatch}")
        self.checked = checked


class _SlowModelBudgetSpent(BaseException):
    """Ends the search for bulk examples checked by the reference model once its time is spent."""


class _ShrinkBudgetSpent(BaseException):
    """Ends Hypothesis' shrinking of a bulk example once its budget is spent. Not an ``Exception``, so
    Hypothesis lets it through (as it does KeyboardInterrupt) instead of taking it for a failure."""


def _settings(n: int, seed: int) -> Callable[[Callable[..., None]], Callable[[], None]]:
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
        return hyp_seed(seed)(test)

    return wrap


def _flaky_mismatch(exc: BaseException) -> _Mismatch:
    inner = [e for e in getattr(exc, "exceptions", ()) if isinstance(e, _Mismatch)]
    if not inner:
        raise exc
    return inner[0]


def short_examples(runner: Runner, stats: dict[str, int]) -> tuple[CheckedTrace | None, str]:
    """Hypothesis examples of a handful of operations: readable minimal traces for most bugs."""
    from hypothesis import given
    from hypothesis.errors import Flaky

    from memcheck.strategies import traces

    opts = runner.options
    runner.where = {"phase": "property", "what": "examples", "total": opts.examples, "done": 0}

    def prop(trace: Trace) -> None:
        stats["examples"] += 1
        stats["ops"] += trace.operation_count()
        stats["cycles"] += len(trace)
        runner.where["done"] = stats["examples"]
        checked = runner.run_example(trace.cycles, trace.power)
        if not checked.ok:
            raise _Mismatch(checked)

    test = _settings(opts.examples, opts.seed_or_zero())(
        given(traces(runner.contract, max_blocks=opts.max_blocks, pin_bits=runner.pin_address_bits))(prop)
    )
    try:
        test()
    except _Mismatch as exc:
        assert isinstance(exc.checked, CheckedTrace)
        return exc.checked, ""
    except Flaky as exc:
        found = _flaky_mismatch(exc).checked
        assert isinstance(found, CheckedTrace)
        return found, LIKELY_RACE
    return None, ""


def _digest(cols: Columns) -> bytes:
    h = hashlib.blake2b(digest_size=16)
    for a in (cols.kind, cols.address, cols.data, cols.lanes, cols.lanes_given):
        h.update(np.ascontiguousarray(a).tobytes())
    return h.digest()


class _BulkSearch:
    """Bulk examples through Hypothesis, each run once (results cached per trace), with a budget for
    Hypothesis' own shrinking of a failing one; keeps the shortest failing example it saw."""

    def __init__(self, runner: Runner, stats: dict[str, int]) -> None:
        self.runner = runner
        self.stats = stats
        self.seen: dict[bytes, ArrayCheck | None] = {}  # trace digest -> its failing check (None: conforms)
        self.failing: dict[Any, ArrayCheck] = {}  # specs seen to fail (at most the shrink budget of them)
        self.best: ArrayCheck | None = None  # the shortest of them
        self.shrink_t0: float | None = None  # set when the first failure is seen
        self.mark = time.perf_counter()
        self.t0 = self.mark
        self.slow = unsupported(runner.contract) is not None

    def prop(self, spec: Any) -> None:
        self.runner.timing["bulk_generate"] += time.perf_counter() - self.mark
        try:
            known = self.failing.get(spec)
            if known is None:
                known = self._run(spec)
            if known is not None:
                # One raise statement: Hypothesis tells failures apart by where they were raised.
                raise _Mismatch(known)
        finally:
            self.mark = time.perf_counter()

    def _budget_spent(self) -> bool:
        r = self.runner
        return self.shrink_t0 is not None and (
            r.counts["bulk_shrink_runs"] >= r.options.bulk_shrink_runs
            or time.perf_counter() - self.shrink_t0 > BULK_SHRINK_SECONDS
        )

    def _count(self, cols: Columns) -> None:
        r = self.runner
        if self.shrink_t0 is not None:
            r.counts["bulk_shrink_runs"] += 1
            return
        ops = cols.operation_count()
        r.counts["bulk_examples"] += 1
        r.counts["bulk_operations"] += ops
        r.counts["bulk_cycles"] += len(cols)
        self.stats["ops"] += ops
        self.stats["cycles"] += len(cols)
        r.where["done"] = r.counts["bulk_examples"]

    def _run(self, spec: Any) -> ArrayCheck | None:
        from memcheck.sim.checking.bulk import decode

        if self._budget_spent():
            raise _ShrinkBudgetSpent
        if self.slow and self.shrink_t0 is None and time.perf_counter() - self.t0 > SLOW_MODEL_BULK_SECONDS:
            raise _SlowModelBudgetSpent
        t_in = time.perf_counter()
        cols = decode(self.runner.contract, spec, address_bits=self.runner.driven_address_bits)
        key = _digest(cols)
        self.runner.timing["bulk_decode"] += time.perf_counter() - t_in
        if key in self.seen:
            known = self.seen[key]
            if known is not None:
                self.failing[spec] = known
            return known
        self._count(cols)
        checked = self.runner.run_example_columns(cols)
        self.seen[key] = None if checked.ok else checked
        if checked.ok:
            return None
        if self.shrink_t0 is None:
            self.shrink_t0 = time.perf_counter()
        self.failing[spec] = checked
        if self.best is None or len(cols) <= len(self.best.cols):
            self.best = checked
        return checked


def bulk_examples(runner: Runner, stats: dict[str, int]) -> tuple[CheckedTrace | None, str]:
    """Bulk examples (bulk.py): thousands of operations per Hypothesis example, checked column-wise.

    A failing one is shrunk by Hypothesis within a budget of simulator runs and seconds (then
    Hypothesis is stopped and the smallest failing example it tried is kept); the caller cuts it
    to the shortest failing window and delta-debugs it.
    """
    from hypothesis import given
    from hypothesis.errors import Flaky

    from memcheck.sim.checking.bulk import bulk_specs

    nb = runner.options.bulk_examples
    t0 = time.perf_counter()
    runner.where = {"phase": "property", "what": "bulk examples", "total": nb, "done": 0}
    search = _BulkSearch(runner, stats)
    seed = (runner.options.seed_or_zero() + 1) & ((1 << 64) - 1)
    test = _settings(nb, seed)(given(bulk_specs(runner.contract))(search.prop))
    found: ArrayCheck | None = None
    note = ""
    try:
        with ThreadPoolExecutor(max_workers=1, thread_name_prefix="memcheck-model") as pool:
            runner._pool = pool
            test()
    except _Mismatch as exc:
        assert isinstance(exc.checked, ArrayCheck)
        found = exc.checked
    except _ShrinkBudgetSpent:
        found = search.best
    except _SlowModelBudgetSpent:
        found = None
    except Flaky as exc:  # pragma: no cover - results are cached per trace, so replays agree
        inner = _flaky_mismatch(exc).checked
        assert isinstance(inner, ArrayCheck)
        found, note = inner, LIKELY_RACE
    finally:
        runner._pool = None
    now = time.perf_counter()
    runner.timing["bulk_phase"] += now - t0
    if found is None:
        return None, ""
    runner.timing["bulk_shrink"] += now - (search.shrink_t0 or now)
    # Run the smallest failing bulk example again, so the RTL state matches a replay of it.
    again = runner.run_example_columns(found.cols)
    if again.ok:  # pragma: no cover - keep what was seen; the phase notes the non-reproduction
        return found.checked(), note or LIKELY_RACE
    return again.checked(), note
