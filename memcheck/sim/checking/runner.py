"""Runs cycles on the RTL through a backend and keeps its canonical state: the base of every job.

A :class:`Runner` drives a :class:`Backend` (in the simulator: the generated harness through cocotb,
see :mod:`memcheck.sim.plumbing.backend`; in unit tests: a Python stand-in). It runs preamble steps,
checks independent examples from the RTL's canonical state (see sequences.py: every address written
with a fixed pattern, then a flush, so verdicts do not depend on example order), shrinks a failing
trace to a short one that fails on its own, and replays a recorded failure. The phases of a check
are in phases.py, the property phase's example search in examples.py, the March job in march_job.py.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Sequence
from concurrent.futures import ThreadPoolExecutor
from dataclasses import replace
from typing import Any, Protocol

import numpy as np

from memcheck.contract import Contract
from memcheck.cover import Counts, TraceArrays, arrays_of_cycles, measure
from memcheck.model_fast import Columns, ints_to_limbs, limbs_of, limbs_to_ints
from memcheck.ops import Cycle, OpKind, Power
from memcheck.records import CheckedTrace, Failure, Observed
from memcheck.sim.checking import sequences as seq
from memcheck.sim.checking.compare import ArrayCheck, check, check_arrays, expected_arrays
from memcheck.sim.checking.sequences import Segment
from memcheck.sim.checking.shrink import ddmin
from memcheck.sim.checking.ticks import fit, fit_columns
from memcheck.sim.options import SimOptions
from memcheck.strategies import driven_address_bits

#: The preamble of every independent example: reset, canonical fill, flush.
EXAMPLE_PREAMBLE: tuple[str, ...] = ("reset", "fill", "flush")
#: Longest window ending at a failing cycle that shrinking tries as an independent example.
WINDOW_MAX = 4096

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


def operation_count(cycles: Sequence[Cycle]) -> int:
    """Non-idle port operations of ``cycles``."""
    return sum(1 for c in cycles for op in c if op.kind != OpKind.IDLE)


class Runner:
    """Runs cycles on a backend and keeps the RTL's canonical state for independent examples."""

    #: Longest window ending at a failing cycle that shrinking tries as an independent example.
    window_max = WINDOW_MAX

    def __init__(
        self,
        contract: Contract,
        backend: Backend,
        options: SimOptions | None = None,
        progress: Callable[[dict[str, Any]], None] | None = None,
    ) -> None:
        self.contract = contract
        self.backend = backend
        self.options = options or SimOptions()
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
            "coverage": 0.0,
        }
        self._pool: ThreadPoolExecutor | None = None  # set while bulk examples run
        #: Width of the address pins (the narrowest port's), set by the simulator side: with
        #: ``out_of_range`` "ignore" or "wrap" examples drive addresses over all of it.
        self.pin_address_bits: int | None = None
        self.counts: dict[str, int] = {
            "bulk_examples": 0,
            "bulk_operations": 0,
            "bulk_cycles": 0,
            "bulk_shrink_runs": 0,
        }
        self.coverage = Counts.empty(contract)  # cover points hit by the checked traces (memcheck.cover)

    # -- coverage ----------------------------------------------------------------------------

    def cover(self, cycles: Sequence[Cycle], power: Sequence[Power] = ()) -> None:
        """Count the cover points of a checked trace (memcheck.cover), with its per-tick power states."""
        t0 = time.perf_counter()
        self.coverage = self.coverage.then(measure(self.contract, arrays_of_cycles(self.contract, cycles, power)))
        self.timing["coverage"] += time.perf_counter() - t0

    def cover_columns(self, cols: Columns) -> None:
        """:meth:`cover` for a trace given as columns."""
        t0 = time.perf_counter()
        self.coverage = self.coverage.then(measure(self.contract, TraceArrays(cols.kind, cols.address, cols.lanes)))
        self.timing["coverage"] += time.perf_counter() - t0

    @property
    def driven_address_bits(self) -> int:
        """Address bits examples drive (see :func:`memcheck.strategies.driven_address_bits`)."""
        return driven_address_bits(self.contract, self.pin_address_bits)

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
                self.coverage = self.coverage.after_reset()
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
                plan = seq.sweep_plans(c, self.options)[int(step.split(":", 1)[1])]
                for piece in plan.schedule.pieces():
                    self._run_columns(piece.cols)
            else:
                raise ValueError(f"unknown preamble step {step!r}")
            self.history.append(step)

    # -- independent examples ----------------------------------------------------------------

    def run_example(self, cycles: Sequence[Cycle], power: Sequence[Power] = ()) -> CheckedTrace:
        """Check ``cycles`` as an independent example: canonical RTL state, model knows nothing. With
        several clocks ``cycles`` are first made valid on the tick timeline (:func:`ticks.fit`)."""
        c = self.contract
        cycles = fit(c, cycles)
        power = tuple(power) if any(power) else ()
        if not self._canonical:
            self.run_steps(EXAMPLE_PREAMBLE)
            pre: list[Cycle] = []
        else:
            restore = seq.restore_cycles(c, self._dirty) if seq.fill_limit(c) else []
            pre = restore + seq.flush_cycles(c)
        t0 = time.perf_counter()
        states = (Power.ON,) * len(pre) + power if power else ()
        obs = self._run([Segment(tuple(pre) + tuple(cycles), power=states)])
        t1 = time.perf_counter()
        self._dirty = seq.written_addresses(cycles)
        if Power.SHUTDOWN in power:
            self._canonical = False  # a shutdown lost the contents: the next example refills them
        self.examples_run += 1
        self.cover(cycles, power)
        checked = check(c, "unknown", list(cycles), obs[len(pre) :], power)
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
        cols = fit_columns(c, cols)
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
        self.cover_columns(cols)
        checked = check_arrays(
            c, cols, value[len(pre) :], defined[len(pre) :], "unknown", model.result() if model is not None else None
        )
        self.timing["example_rtl"] += t1 - t0
        self.timing["example_model"] += time.perf_counter() - t1
        return checked

    def minimise(self, cycles: Sequence[Cycle], power: Sequence[Power] = ()) -> CheckedTrace:
        """Shrink a trace that fails as an independent example; returns the smallest one's check
        (see :mod:`memcheck.sim.checking.minimise`; with power states, :meth:`_minimise_powered`)."""
        if any(power):
            return self._minimise_powered(list(cycles), list(power))
        from memcheck.sim.checking.minimise import minimise_cycles

        return minimise_cycles(self, cycles).checked

    def _minimise_powered(self, cycles: list[Cycle], power: list[Power]) -> CheckedTrace:
        """:meth:`minimise` for a trace with power states: delta debugging over its cycles, each with its
        power state."""
        cache: dict[tuple[int, ...], CheckedTrace] = {}

        def fails(keep: list[int]) -> bool:
            key = tuple(keep)
            if key not in cache:
                cache[key] = self.run_example([cycles[i] for i in keep], [power[i] for i in keep])
            return not cache[key].ok

        current = list(range(len(cycles)))
        if not fails(current):
            return cache[tuple(current)]
        current = ddmin(current, fails)
        return self.run_example([cycles[i] for i in current], [power[i] for i in current])

    def shrink_window(self, recent: Sequence[Cycle], failing: int) -> CheckedTrace | None:
        """Shrink the failure shown at ``recent[failing]``: the operations on its addresses anywhere in
        ``recent`` or a window ending there that fails on its own, minimised (None: none fails)."""
        from memcheck.sim.checking.minimise import shrink_stretch

        shrunk = shrink_stretch(self, Columns.from_cycles(self.contract, recent[: failing + 1]), failing)
        return None if shrunk is None else shrunk.checked

    # -- replay --------------------------------------------------------------------------------

    def replay(self, failure: Failure, *, dump: bool = False) -> CheckedTrace:
        """Run a failure's preamble, then its trace (dumped to the waveform when asked), checked."""
        self.where = {"phase": "replay", "what": "preamble"}
        self.run_steps(failure.preamble)
        self.where = {"phase": "replay", "what": "trace"}
        cycles = list(failure.trace.cycles)
        power = failure.trace.power
        watch = hasattr(self.backend, "watching")
        if watch:  # record how read data settles after each sample point (for a timing hint)
            setattr(self.backend, "watching", True)  # noqa: B010
        obs = self._run([Segment(tuple(cycles), power=power)], dump=dump)
        self.cover(cycles, power)
        checked = check(self.contract, failure.checked.start, cycles, obs, power)
        settled = getattr(self.backend, "settled", []) if watch else []
        if len(settled) == len(checked.rows):
            rows = tuple(replace(r, settled=s) for r, s in zip(checked.rows, settled, strict=True))
            checked = CheckedTrace(checked.start, rows)
        return checked
