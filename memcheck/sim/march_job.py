"""A March test run alone on the RTL, checked batch by batch inside the simulator process.

The stream is expanded chunk by chunk, turned into cycles with numpy, run through the harness and
compared with the reference model (carried across batches) and with the March expectations; only
counts and the first failure come back, so memory is bounded by a batch, not by the stream.
Used by :mod:`memcheck.sim.march_run` through the ``march`` job of the cocotb entry point.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, replace
from typing import Any

import numpy as np

from memcheck.contract import Contract
from memcheck.model_fast import Columns, int_limbs, limbs_of, limbs_to_ints
from memcheck.ops import Cycle
from memcheck.sim.checker import CheckedTrace, ModelStart, compare, start_model
from memcheck.sim.engine import Engine, observations_from_arrays

#: Cycles the March job checks at a time (the harness still runs them BATCH_CYCLES at a time); its
#: memory is bounded by this many cycles, whatever the stream length.
MARCH_BATCH_CYCLES = 1 << 16


def march_columns(contract: Contract, chunk: Any, writer: int, reader: int) -> Columns:
    """One March chunk (:class:`memcheck.march.expand.OpsChunk`) as cycles, one operation each: the
    write on ``writer``, the read on ``reader``, every other port quiet (as :func:`memcheck.strategies.
    drain_cycle`); numpy only."""
    from memcheck.march.expand import OP_WRITE
    from memcheck.model_fast import READ, WRITE

    cols = Columns.quiet(contract, len(chunk))
    w = np.asarray(chunk.op) == OP_WRITE
    r = ~w
    cols.kind[w, writer] = WRITE
    cols.address[w, writer] = chunk.address[w]
    cols.data[w, writer] = chunk.data[w]
    cols.kind[r, reader] = READ
    cols.address[r, reader] = chunk.address[r]
    return cols


@dataclass(frozen=True)
class MarchJob:
    """What the simulation side needs to run a March stream: the stream (pickled by the caller),
    the writing and reading port, quiet cycles per delay element and how the model starts."""

    writer: int
    reader: int
    pause_cycles: int
    start: ModelStart
    window: int = 12
    batch: int = MARCH_BATCH_CYCLES
    vectorised: bool = True  # False: memcheck.model.Model steps through every cycle (slower; same answers)


def march_pieces(contract: Contract, stream: Any, job: MarchJob, written: np.ndarray) -> Any:
    """Yield (columns, read due cycles, expected limbs, read op index) per stream item; ``written``
    (per word) is updated as writes go by, so a read is March-checked only after its word was written."""
    from memcheck.march.expand import OP_WRITE, Pause

    lat = contract.memory.read_latency
    limbs = limbs_of(contract.memory.width)
    cycle = 0
    none_i = np.zeros(0, dtype=np.int64)
    none_v = np.zeros((0, limbs), dtype=np.uint64)
    for item in stream:
        if isinstance(item, Pause):
            if job.pause_cycles:
                yield Columns.quiet(contract, job.pause_cycles), none_i, none_v, none_i
                cycle += job.pause_cycles
            continue
        n = len(item)
        cols = march_columns(contract, item, job.writer, job.reader)
        op = np.asarray(item.op)
        addr = np.asarray(item.address)
        pos = np.arange(n, dtype=np.int64)
        w = op == OP_WRITE
        # Each read's word was written before it: in an earlier chunk, or earlier in this one (the
        # first write of each address in the chunk, by sorting: no per-word array per chunk).
        wa, wi = np.unique(addr[w], return_index=True)
        first_w = pos[w][wi]
        r = np.flatnonzero(~w)
        at = np.minimum(np.searchsorted(wa, addr[r]), max(len(wa) - 1, 0))
        earlier = (wa[at] == addr[r]) & (first_w[at] < r) if len(wa) else np.zeros(len(r), dtype=bool)
        checked = written[addr[r]] | earlier
        rr = r[checked]
        written[addr[w]] = True
        yield cols, cycle + rr + lat, np.asarray(item.expected)[rr], item.start + rr
        cycle += n
    if lat:
        yield Columns.quiet(contract, lat), none_i, none_v, none_i


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
        from memcheck.sim.checker import start_contents

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
        from memcheck.model_fast import IDLE, READ, WRITE, expected

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


def run_march_job(engine: Engine, stream: Any, job: MarchJob) -> dict[str, Any]:
    """Run a March stream on the backend in batches, checking each batch against the contract model
    (carried across batches) and the March expectations; returns counts and the first failure only.

    Memory is bounded by one batch: nothing is kept per cycle beyond the last ``window`` cycles."""
    from memcheck.model_fast import expected_rows, ints_to_limbs, mismatch

    c = engine.contract
    m = c.memory
    limbs = limbs_of(m.width)
    word = int_limbs(m.word_mask, limbs)
    engine.where = {"phase": "march", "what": "preamble"}
    if job.start == "reset":
        engine.run_steps(["reset"])
    model = start_model(c, job.start)
    fast = CarriedModel(c, job.start, job.writer) if job.vectorised else None
    readable = [i for i, p in enumerate(c.ports) if p.read_data is not None]
    written = np.zeros(m.words, dtype=bool)
    batch = job.batch
    t_model = 0.0
    done = 0  # cycles run
    march_reads = 0
    # The last `window` cycles already run: (cycles, expected rows, value, defined).
    tail: tuple[list[Cycle], list[Any], np.ndarray, np.ndarray] | None = None
    pend_due: list[np.ndarray] = []
    pend_exp: list[np.ndarray] = []
    pend_op: list[np.ndarray] = []
    pieces: list[Columns] = []
    queued = 0
    total = stream.total_ops
    result: dict[str, Any] = {"failure": None}

    def run_batch(cols: Columns) -> dict[str, Any] | None:
        nonlocal done, tail, t_model, march_reads
        n = len(cols)
        engine.where = {"phase": "march", "what": "March test", "total": total, "done": done}
        value, defined = engine._run_columns(cols)
        t0 = time.perf_counter()
        if fast is not None:
            ev_all, ek_all = fast.run(cols)
        else:
            exp = model.run(cols.to_cycles())
            shape = (n, len(c.ports), limbs)
            ev_all = ints_to_limbs([e.value for row in exp for e in row], limbs).reshape(shape)
            ek_all = ints_to_limbs([e.known for row in exp for e in row], limbs).reshape(shape)
        diff_any = np.zeros(n, dtype=bool)
        for i in readable:
            diff_any |= mismatch(ev_all[:, i], ek_all[:, i], value[:, i], defined[:, i]).any(axis=1)
        model_first = int(np.argmax(diff_any)) if diff_any.any() else None
        # March expectations due in this batch.
        due = np.concatenate(pend_due) if pend_due else np.zeros(0, dtype=np.int64)
        pexp = np.concatenate(pend_exp) if pend_exp else np.zeros((0, limbs), dtype=np.uint64)
        pop = np.concatenate(pend_op) if pend_op else np.zeros(0, dtype=np.int64)
        now = due < done + n
        d_due, d_exp, d_op = due[now] - done, pexp[now], pop[now]
        pend_due[:] = [due[~now]]
        pend_exp[:] = [pexp[~now]]
        pend_op[:] = [pop[~now]]
        obs_v = value[d_due, job.reader]
        obs_d = defined[d_due, job.reader]
        mdiff = word & ((obs_v ^ d_exp) | ~obs_d)
        bad = mdiff.any(axis=1)
        march_first = int(d_due[np.argmax(bad)]) if bad.any() else None
        t_model += time.perf_counter() - t0
        if model_first is None and march_first is None:
            march_reads += len(d_due)
            keep = min(job.window, n)
            prev = tail
            cycles = cols[n - keep :].to_cycles()
            exp = expected_rows(ev_all[n - keep :], ek_all[n - keep :])
            if prev is not None and keep < job.window:
                more = job.window - keep
                tail = (
                    prev[0][-more:] + cycles,
                    prev[1][-more:] + exp,
                    np.concatenate([prev[2][-more:], value[n - keep :]]),
                    np.concatenate([prev[3][-more:], defined[n - keep :]]),
                )
            else:
                tail = (cycles, exp, value[n - keep :], defined[n - keep :])
            done += n
            return None
        k = min(x for x in (model_first, march_first) if x is not None)
        # The window: the last `window` cycles up to k, from the previous batches' tail and this one.
        lo = max(0, k - job.window + 1)
        w_cycles = cols[lo : k + 1].to_cycles()
        w_exp = expected_rows(ev_all[lo : k + 1], ek_all[lo : k + 1])
        w_val, w_def = value[lo : k + 1], defined[lo : k + 1]
        if tail is not None and len(w_cycles) < job.window:
            more = min(job.window - len(w_cycles), len(tail[0]))
            if more:
                w_cycles = tail[0][-more:] + w_cycles
                w_exp = tail[1][-more:] + w_exp
                w_val = np.concatenate([tail[2][-more:], w_val])
                w_def = np.concatenate([tail[3][-more:], w_def])
        first = done + k - len(w_cycles) + 1
        checked = compare(w_exp, observations_from_arrays(c, w_val, w_def), w_cycles, job.start)
        rows = tuple(replace(r, cycle=first + r.cycle) for r in checked.rows)
        at = np.flatnonzero(d_due == k)
        march = None
        if len(at):
            j = int(at[0])
            march = {
                "expected": hex(limbs_to_ints(d_exp[j : j + 1])[0]),
                "diff": hex(limbs_to_ints(mdiff[j : j + 1])[0]),
                "operation": int(d_op[j]),
            }
        march_reads += int(np.count_nonzero(d_due <= k))
        done += k + 1
        return {"cycle": done - 1, "window": CheckedTrace(job.start, rows).to_json(), "march": march}

    failure = None
    for cols, due, exp_v, op_i in march_pieces(c, stream, job, written):
        if len(due):
            pend_due.append(due)
            pend_exp.append(exp_v)
            pend_op.append(op_i)
        pieces.append(cols)
        queued += len(cols)
        while queued >= batch:
            allc = Columns.concat(pieces)
            failure = run_batch(allc[:batch])
            rest = allc[batch:]
            pieces, queued = ([rest] if len(rest) else []), len(rest)
            if failure is not None:
                break
        if failure is not None:
            break
    if failure is None and pieces:
        failure = run_batch(Columns.concat(pieces))
    result["failure"] = failure
    result["cycles_run"] = done
    result["march_reads_checked"] = march_reads
    result["seconds_model"] = round(t_model, 4)
    return result
