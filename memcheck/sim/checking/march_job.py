"""A March test run alone on the RTL, checked batch by batch inside the simulator process.

The stream is expanded chunk by chunk, turned into cycles with numpy, run through the harness and
compared with the reference model (carried across batches) and with the March expectations; only
counts and the first failure come back, so memory is bounded by a batch, not by the stream.
Used by :mod:`memcheck.sim.jobs.march` through the ``march`` job of the cocotb entry point.
"""

from __future__ import annotations

import time
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from memcheck.contract import Contract
from memcheck.model_fast import (
    IDLE,
    READ,
    WRITE,
    Columns,
    expected,
    expected_rows,
    int_limbs,
    ints_to_limbs,
    limbs_of,
    limbs_to_ints,
    mismatch,
    unsupported,
)
from memcheck.ops import Cycle, Expected
from memcheck.records import CheckedTrace, ModelStart
from memcheck.sim.checking.compare import compare, start_contents, start_model
from memcheck.sim.checking.runner import Runner, observations_from_arrays
from memcheck.sim.checking.schedule import MarchSchedule
from memcheck.sim.checking.ticks import hyper_ticks, lay_columns

#: Cycles the March job checks at a time (the harness still runs them BATCH_CYCLES at a time); its
#: memory is bounded by this many cycles, whatever the stream length.
MARCH_BATCH_CYCLES = 1 << 16


@dataclass(frozen=True)
class MarchJob:
    """How the simulation side runs a March schedule: how the model starts, the cycles kept for the
    report (``window``), cycles checked at a time, which model checks them, whether the March
    expectations are judged besides the contract model (the check's sweep judges the model only) and
    the phase name progress records carry."""

    start: ModelStart
    window: int = 12
    batch: int = MARCH_BATCH_CYCLES
    vectorised: bool = True  # False: memcheck.model.Model steps through every cycle (slower; same answers)
    expectations: bool = True
    phase: str = "march"
    what: str = "March test"
    cover: bool = False  # count the cover points of every batch (the check's sweep)
    # 0: stop at the first failure (the check's sweep). N > 0: run on to the end and list the first N
    # failing March reads (``march run --fail-log``); the first failure is reported as before.
    fail_reads: int = 0


class CarriedModel:
    """The vectorised model (:func:`memcheck.model_fast.expected`) over consecutive batches of a March
    run, its state carried from one batch to the next; agrees with :class:`memcheck.model.Model`.

    A March run writes whole words through one port, so the stored state is, per word, the last data
    written (else the start contents). Each batch is modelled as: one restoring write per word the
    batch and the kept tail touch, the kept *tail* of earlier cycles, then the batch. The tail holds at
    least ``read_latency`` cycles and reaches back to every port's last read result, so what each port
    shows (pipeline, ``idle_read_data``) comes from real cycles, not from the restoring writes. The
    tail is usually a few cycles; it grows while a port shows a held result (a long write-only
    element on a port that keeps its read data, a pause), up to that stretch."""

    def __init__(self, contract: Contract, start: ModelStart, writer: int) -> None:

        m = contract.memory
        self.contract = contract
        self.writer = writer
        self.contents = start_contents(contract, start)
        self.data = np.zeros((m.words, limbs_of(m.width)), dtype=np.uint64)
        self.written = np.zeros(m.words, dtype=bool)
        self.tail = Columns.quiet(contract, 0)
        self._results = [i for i, p in enumerate(contract.ports) if p.can_read]

    def run(self, cols: Columns) -> tuple[np.ndarray, np.ndarray]:
        """Expected ``(value, known)`` of the batch ``cols`` (the cycles right after the last batch)."""

        c = self.contract
        m = c.memory
        w = self.writer
        work = Columns.concat([self.tail, cols])
        used = np.unique(work.address[work.kind != IDLE])
        used = used[(used >= 0) & (used < m.words)]
        back = used[self.written[used]]
        restore = Columns.quiet(c, len(back))
        restore.kind[:, w] = WRITE
        restore.address[:, w] = back
        restore.data[:, w] = self.data[back]
        value, known = expected(c, Columns.concat([restore, work]), self.contents, check=False)
        n = len(cols)
        # The next tail: from every port's last result the next batch may still show.
        length = len(work)
        lat = m.read_latency
        upto = min(length, length - lat + 1)
        cut = max(0, length - lat)
        for i in self._results:
            k = work.kind[:upto, i]
            res = k == READ
            if m.read_during_write != "keep":
                res |= k == WRITE
            if m.idle_read_data == "unknown":
                res |= k == IDLE
            hits = np.flatnonzero(res)
            if len(hits):
                cut = min(cut, int(hits[-1]))
        gone = work[:cut]
        wt = np.flatnonzero(gone.kind[:, w] == WRITE)
        if len(wt):
            addr = gone.address[wt, w]
            # The last write of each word wins.
            rev = wt[::-1]
            a_last, first_rev = np.unique(addr[::-1], return_index=True)
            keep = (a_last >= 0) & (a_last < m.words)
            self.data[a_last[keep]] = gone.data[rev[first_rev[keep]], w]
            self.written[a_last[keep]] = True
        self.tail = work[cut:]
        return value[-n:], known[-n:]


#: The last cycles already run: (cycles, expected rows, value, defined).
_Tail = tuple[list[Cycle], list[tuple[Expected, ...]], np.ndarray, np.ndarray]


class _MarchRun:
    """One March schedule run batch by batch: counts, the carried models, the March reads still due."""

    def __init__(self, runner: Runner, schedule: MarchSchedule, job: MarchJob) -> None:
        c = runner.contract
        self.runner, self.schedule, self.job, self.contract = runner, schedule, job, c
        self.limbs = limbs_of(c.memory.width)
        self.word = int_limbs(c.memory.word_mask, self.limbs)
        self.model = start_model(c, job.start)
        # The vectorised model where it applies; else the reference model, carried across batches.
        self.fast = CarriedModel(c, job.start, schedule.writer) if job.vectorised and unsupported(c) is None else None
        self.readable = [i for i, p in enumerate(c.ports) if p.read_data is not None]
        self.done = 0  # cycles run
        self.march_reads = 0
        self.t_model = 0.0
        self.tail: _Tail | None = None
        self.due = np.zeros(0, dtype=np.int64)
        self.exp = np.zeros((0, self.limbs), dtype=np.uint64)
        self.op = np.zeros(0, dtype=np.int64)
        self.pool: ThreadPoolExecutor | None = None
        self.failing: list[list[Any]] = []  # [cycle, operation, expected hex, failing bits hex], first N
        self.failing_total = 0
        self.failed = False  # a failure was reported (only a job listing failing reads runs on after it)

    def expect(self, due: np.ndarray, exp: np.ndarray, op: np.ndarray) -> None:
        """Queue March reads (due cycles counted from the schedule's start)."""
        if len(due):
            self.due = np.concatenate([self.due, due])
            self.exp = np.concatenate([self.exp, exp])
            self.op = np.concatenate([self.op, op])

    def _model(self, cols: Columns) -> tuple[np.ndarray, np.ndarray]:
        if self.fast is not None:
            return self.fast.run(cols)
        exp = self.model.run(cols.to_cycles())
        shape = (len(cols), len(self.contract.ports), self.limbs)
        ev = ints_to_limbs([e.value for row in exp for e in row], self.limbs).reshape(shape)
        ek = ints_to_limbs([e.known for row in exp for e in row], self.limbs).reshape(shape)
        return ev, ek

    def batch(self, cols: Columns) -> dict[str, Any] | None:
        """Run and check one batch; the first failure (as the job reports it) or None."""
        n = len(cols)
        r = self.runner
        r.where = {
            "phase": self.job.phase,
            "what": self.job.what,
            "total": self.schedule.total_cycles,
            "done": self.done,
        }
        # The model works in a second thread while the simulator runs the batch (two cores).
        model = self.pool.submit(self._model, cols) if self.pool is not None else None
        value, defined = r._run_columns(cols)
        if self.job.cover:
            r.cover_columns(cols)
        t0 = time.perf_counter()
        ev, ek = model.result() if model is not None else self._model(cols)
        diff_any = np.zeros(n, dtype=bool)
        for i in self.readable:
            diff_any |= mismatch(ev[:, i], ek[:, i], value[:, i], defined[:, i]).any(axis=1)
        model_first = int(np.argmax(diff_any)) if diff_any.any() else None
        # March expectations due in this batch.
        now = self.due < self.done + n
        d_due, d_exp, d_op = self.due[now] - self.done, self.exp[now], self.op[now]
        self.due, self.exp, self.op = self.due[~now], self.exp[~now], self.op[~now]
        rd = self.schedule.reader
        mdiff = self.word & ((value[d_due, rd] ^ d_exp) | ~defined[d_due, rd])
        bad = mdiff.any(axis=1)
        march_first = int(d_due[np.argmax(bad)]) if bad.any() else None
        self.t_model += time.perf_counter() - t0
        if self.job.fail_reads:
            self._list_failing(d_due[bad], d_op[bad], d_exp[bad], mdiff[bad])
        if self.failed or (model_first is None and march_first is None):
            self.march_reads += len(d_due)
            self._keep_tail(cols, ev, ek, value, defined)
            self.done += n
            return None
        k = min(x for x in (model_first, march_first) if x is not None)
        at = np.flatnonzero(d_due == k)
        march = None
        if len(at):
            j = int(at[0])
            march = {
                "expected": hex(limbs_to_ints(d_exp[j : j + 1])[0]),
                "diff": hex(limbs_to_ints(mdiff[j : j + 1])[0]),
                "operation": int(d_op[j]),
            }
        window = self._window(cols, ev, ek, value, defined, k)
        cycle = self.done + k
        self.failed = True
        if self.job.fail_reads:  # the run goes on: every read of the batch counts, as the simulator ran them
            self.march_reads += len(d_due)
            self.done += n
        else:
            self.march_reads += int(np.count_nonzero(d_due <= k))
            self.done = cycle + 1
        return {"cycle": cycle, "window": window.to_json(), "march": march}

    def _list_failing(self, due: np.ndarray, op: np.ndarray, exp: np.ndarray, diff: np.ndarray) -> None:
        """Add failing March reads (in cycle order) to the list, up to ``job.fail_reads``."""
        self.failing_total += len(due)
        room = self.job.fail_reads - len(self.failing)
        if room <= 0 or not len(due):
            return
        cycles, ops = (self.done + due[:room]).tolist(), op[:room].tolist()
        words = zip(limbs_to_ints(exp[:room]), limbs_to_ints(diff[:room]), strict=True)
        self.failing.extend([c, o, hex(e), hex(d)] for c, o, (e, d) in zip(cycles, ops, words, strict=True))

    def _keep_tail(self, cols: Columns, ev: np.ndarray, ek: np.ndarray, value: np.ndarray, defined: np.ndarray) -> None:
        n, w = len(cols), self.job.window
        keep = min(w, n)
        part: _Tail = (
            cols[n - keep :].to_cycles(),
            expected_rows(ev[n - keep :], ek[n - keep :]),
            value[n - keep :],
            defined[n - keep :],
        )
        self.tail = part if self.tail is None or keep >= w else _join_tail(self.tail, part, w - keep)

    def _window(
        self, cols: Columns, ev: np.ndarray, ek: np.ndarray, value: np.ndarray, defined: np.ndarray, k: int
    ) -> CheckedTrace:
        """The last ``window`` cycles up to ``k``, from the previous batches' tail and this one."""
        lo = max(0, k - self.job.window + 1)
        part: _Tail = (
            cols[lo : k + 1].to_cycles(),
            expected_rows(ev[lo : k + 1], ek[lo : k + 1]),
            value[lo : k + 1],
            defined[lo : k + 1],
        )
        if self.tail is not None and len(part[0]) < self.job.window:
            part = _join_tail(self.tail, part, min(self.job.window - len(part[0]), len(self.tail[0])))
        cyc, exp, val, dfd = part
        first = self.done + k - len(cyc) + 1
        checked = compare(exp, observations_from_arrays(self.contract, val, dfd), cyc, self.job.start)
        return CheckedTrace(self.job.start, tuple(replace(r, cycle=first + r.cycle) for r in checked.rows))


def _join_tail(prev: _Tail, part: _Tail, more: int) -> _Tail:
    """The last ``more`` cycles of ``prev`` followed by ``part``."""
    if not more:
        return part
    return (
        prev[0][-more:] + part[0],
        prev[1][-more:] + part[1],
        np.concatenate([prev[2][-more:], part[2]]),
        np.concatenate([prev[3][-more:], part[3]]),
    )


def laid_cycles(schedule: MarchSchedule, count: int) -> list[Cycle]:
    """The first ``count`` cycles (ticks, with several clocks) as :func:`run_march_job` runs them."""
    c = schedule.contract
    if c.lockstep:
        return schedule.cycles(count)
    out: list[Cycle] = []
    for piece in schedule.pieces():
        out.extend(lay_columns(c, piece.cols).to_cycles()[: count - len(out)])
        if len(out) >= count:
            break
    return out


def run_march_job(runner: Runner, schedule: MarchSchedule, job: MarchJob) -> dict[str, Any]:
    """Run a March schedule on the backend in batches, checking each batch against the contract model
    (carried across batches) and the March expectations; returns counts and the first failure only.

    Memory is bounded by one batch: nothing is kept per cycle beyond the last ``window`` cycles."""
    runner.where = {"phase": job.phase, "what": "preamble"}
    if job.start == "reset":
        runner.run_steps(["reset"])
    with ThreadPoolExecutor(max_workers=1, thread_name_prefix="memcheck-march-model") as pool:
        run = _MarchRun(runner, schedule, job)
        run.pool = pool
        failure = _run_batches(run, schedule, job)
    out: dict[str, Any] = {
        "failure": failure,
        "cycles_run": run.done,
        "march_reads_checked": run.march_reads,
        "seconds_model": round(run.t_model, 4),
    }
    if job.fail_reads:
        out.update(failing_reads=run.failing, failing_reads_total=run.failing_total)
    return out


def _run_batches(run: _MarchRun, schedule: MarchSchedule, job: MarchJob) -> dict[str, Any] | None:
    """Every batch of the schedule, until the first failure (returned); to the end when the job lists
    failing reads."""
    failure = None
    pieces: list[Columns] = []
    queued = 0
    c = run.contract
    # Several clocks: each piece is laid on the tick timeline, so the schedule's cycle numbers (and the
    # March expectations due at them) no longer apply; the reference model checks every read.
    laid = not c.lockstep
    hyper = hyper_ticks(c)
    size = max(job.batch // hyper, 1) * hyper
    go_on = job.fail_reads > 0  # list failing reads to the end, past the first failure
    for piece in schedule.pieces():
        if job.expectations and not laid:
            run.expect(piece.due, piece.expected, piece.op_index)
        cols = lay_columns(c, piece.cols) if laid else piece.cols
        pieces.append(cols)
        queued += len(cols)
        while queued >= size and (failure is None or go_on):
            allc = Columns.concat(pieces)
            failure = run.batch(allc[:size]) or failure
            rest = allc[size:]
            pieces, queued = ([rest] if len(rest) else []), len(rest)
        if failure is not None and not go_on:
            break
    if (failure is None or go_on) and pieces:
        failure = run.batch(Columns.concat(pieces)) or failure
    return failure
