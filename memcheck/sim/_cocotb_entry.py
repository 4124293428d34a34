"""The cocotb test module the simulator loads: runs a job inside the simulation.

The whole check (phases, Hypothesis and its shrinking, replays) runs in one cocotb bridge thread;
each batch of cycles crosses into the simulator once through ``cocotb.task.resume``. The job comes
from the file named by ``MEMCHECK_JOB``; the result goes to the job's result file as JSON, and
progress records are appended to its progress file after every batch (the parent process shows
them and uses them as a stall watchdog).
"""

from __future__ import annotations

import json
import os
import pickle
import time
import traceback
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import cocotb
import numpy as np
from cocotb.task import bridge, resume
from cocotb.triggers import Timer

from memcheck._atomic import write_text_atomic
from memcheck.contract import Contract
from memcheck.errors import MemcheckError, SimulationError
from memcheck.model_fast import Columns
from memcheck.sim.engine import Engine, Observations, RunOptions, observations_from_arrays
from memcheck.sim.harness import CAP_FILE, PERIOD_NS, STIM_FILE
from memcheck.sim.layout import BATCH_CYCLES, Layout
from memcheck.sim.march_job import MarchJob, run_march_job
from memcheck.sim.result import Failure, RunResult
from memcheck.sim.sequences import Segment


class HarnessBackend:
    """Runs batches on the generated harness: one stimulus file in, one capture file out."""

    batch_limit = BATCH_CYCLES

    def __init__(self, dut: Any, layout: Layout, workdir: Path) -> None:
        self.dut = dut
        self.layout = layout
        self.stim = workdir / STIM_FILE
        self.cap = workdir / CAP_FILE
        self.go = 0
        self.dumping = False
        self.engine: Engine | None = None
        self.sim_cycles = 0
        self.batches = 0
        self.batch_seconds = 0.0  # wall time of batches: files, the round trip and the simulator
        self.codec_seconds = 0.0  # building stimulus text and parsing captures
        self.record: Path | None = None  # bench/: keep every stimulus and capture file

    def run(self, segments: Sequence[Segment], *, dump: bool = False) -> Observations:
        segs = [s for s in segments if len(s)]
        if not segs:
            return []
        contract = self.layout.contract
        cols = Columns.concat([Columns.from_cycles(contract, s.cycles) for s in segs])
        reset = np.concatenate([np.full(len(s), s.reset) for s in segs])
        value, defined = self.run_columns(cols, reset=reset, dump=dump)
        return observations_from_arrays(contract, value, defined)

    def run_columns(
        self, cols: Columns, *, reset: bool | np.ndarray = False, dump: bool = False
    ) -> tuple[np.ndarray, np.ndarray]:
        """Run a trace given as columns; returns the captured ``(value, defined)`` arrays."""
        values: list[np.ndarray] = []
        defined: list[np.ndarray] = []
        n = len(cols)
        resets = np.broadcast_to(np.asarray(reset, dtype=bool), (n,))
        for lo in range(0, n, self.batch_limit):
            hi = min(n, lo + self.batch_limit)
            if self.engine is not None:
                self.engine.before_batch(hi - lo)
            t0 = time.perf_counter()
            text = self.layout.stim_bytes(cols[lo:hi], resets[lo:hi])
            t1 = time.perf_counter()
            self.stim.write_bytes(text)
            resume(self._batch)(hi - lo, dump)
            captured = self.cap.read_bytes()
            t2 = time.perf_counter()
            v, d = self.layout.decode_arrays(captured, hi - lo)
            self.batch_seconds += t2 - t1
            self.codec_seconds += t1 - t0 + time.perf_counter() - t2
            values.append(v)
            defined.append(d)
            self.sim_cycles += hi - lo
            self.batches += 1
            if self.record is not None:
                with (self.record / "stim.hex").open("ab") as fb:
                    fb.write(text)
                with (self.record / "cap.bin").open("ab") as fb:
                    fb.write(captured)
        if not values:
            limbs = cols.data.shape[2]
            empty = np.zeros((0, cols.ports, limbs), dtype=np.uint64)
            return empty, empty.copy()
        return np.concatenate(values), np.concatenate(defined)

    async def _batch(self, count: int, dump: bool) -> None:
        if dump and not self.dumping:
            self.dut.mc_dump.value = 1
            self.dumping = True
        self.dut.mc_count.value = count
        self.go ^= 1
        self.dut.mc_go.value = self.go
        await self.dut.mc_done.value_change


class _Progress:
    def __init__(self, path: Path) -> None:
        self.fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_APPEND, 0o644)
        self.backend: HarnessBackend | None = None

    def __call__(self, rec: dict[str, Any]) -> None:
        sim_ns = self.backend.sim_cycles * PERIOD_NS if self.backend is not None else 0
        line = json.dumps({**rec, "sim_ns": sim_ns, "t": round(time.time(), 3)}) + "\n"
        os.write(self.fd, line.encode())


def _session(dut: Any, job: dict[str, Any]) -> dict[str, Any]:
    with open(job["contract_pickle"], "rb") as fh:
        contract: Contract = pickle.load(fh)
    layout = Layout.build(contract, {k: int(v) for k, v in job["widths"].items()})
    workdir = Path.cwd()
    backend = HarnessBackend(dut, layout, workdir)
    if job.get("record"):
        backend.record = Path(job["record"])
    progress = _Progress(Path(job["progress_file"]))
    progress.backend = backend
    options = RunOptions.from_json(job["options"])
    engine = Engine(contract, backend, options, progress)
    backend.engine = engine
    t0 = time.perf_counter()
    if job["mode"] == "replay":
        failure = Failure.from_json(job["failure"])
        replayed = engine.replay(failure, dump=bool(job.get("dump")))
        result = RunResult(seed=options.seed, replayed=replayed)
    elif job["mode"] == "march":
        spec = job["march"]
        with open(spec["stream_pickle"], "rb") as fh:
            stream = pickle.load(fh)
        march = MarchJob(
            int(spec["writer"]), int(spec["reader"]), int(spec["pause_cycles"]), spec["start"], int(spec["window"])
        )
        result = RunResult(seed=options.seed, extra={"march": run_march_job(engine, stream, march)})
    else:
        result = engine.run()
    out = result.to_json()
    out["extra"] = {
        **out["extra"],
        "sim_seconds": round(time.perf_counter() - t0, 3),
        "cycles_simulated": backend.sim_cycles,
        "batches": backend.batches,
        "seconds_batches": round(backend.batch_seconds, 4),
        "seconds_codec": round(backend.codec_seconds, 4),
    }
    progress({"phase": "done"})
    return out


@cocotb.test()
async def memcheck_session(dut: Any) -> None:
    """Run the job named by MEMCHECK_JOB; never fails as a cocotb test (the verdict is in the result)."""
    job_file = Path(os.environ["MEMCHECK_JOB"])
    job = json.loads(job_file.read_text(encoding="utf-8"))
    await Timer(1, "ns")  # let the harness reach its first wait before the first batch
    try:
        out = await bridge(_session)(dut, job)
        out["status"] = "ok"
    except MemcheckError as exc:
        out = {"status": "error", "error": str(exc), "kind": type(exc).__name__, "traceback": traceback.format_exc()}
    except Exception as exc:
        err = SimulationError(f"internal error in the simulation side ({type(exc).__name__}: {exc})")
        out = {"status": "error", "error": str(err), "kind": "internal", "traceback": traceback.format_exc()}
    write_text_atomic(job["result_file"], json.dumps(out))
