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
from pathlib import Path
from typing import Any

import cocotb
from cocotb.task import bridge
from cocotb.triggers import Timer

from memcheck._atomic import write_text_atomic
from memcheck.contract import Contract
from memcheck.errors import MemcheckError, SimulationError
from memcheck.records import Failure
from memcheck.sim.checking.march_job import MarchJob, run_march_job
from memcheck.sim.checking.outcome import RunResult
from memcheck.sim.checking.phases import PhaseRunner
from memcheck.sim.checking.schedule import march_schedule
from memcheck.sim.options import SimOptions
from memcheck.sim.plumbing.backend import HarnessBackend
from memcheck.sim.plumbing.words import HarnessLayout


class _Progress:
    def __init__(self, path: Path) -> None:
        self.fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_APPEND, 0o644)
        self.backend: HarnessBackend | None = None

    def __call__(self, rec: dict[str, Any]) -> None:
        sim_ns = round(self.backend.sim_ns) if self.backend is not None else 0
        line = json.dumps({**rec, "sim_ns": sim_ns, "t": round(time.time(), 3)}) + "\n"
        os.write(self.fd, line.encode())


def _run(runner: PhaseRunner, job: dict[str, Any]) -> RunResult:
    """The job's work: "replay" a failure, run a "march" schedule, or "check" (the phases)."""
    seed = runner.options.seed_or_zero()
    if job["mode"] == "replay":
        failure = Failure.from_json(job["failure"])
        return RunResult(seed=seed, replayed=runner.replay(failure, dump=bool(job.get("dump"))))
    if job["mode"] == "march":
        spec = job["march"]
        with open(spec["stream_pickle"], "rb") as fh:
            stream = pickle.load(fh)
        schedule = march_schedule(
            runner.contract, stream, int(spec["writer"]), int(spec["reader"]), int(spec["pause_cycles"])
        )
        march = MarchJob(spec["start"], int(spec["window"]), fail_reads=int(spec.get("fail_reads", 0)))
        return RunResult(seed=seed, extra={"march": run_march_job(runner, schedule, march)})
    return runner.run()


def _session(dut: Any, job: dict[str, Any]) -> dict[str, Any]:
    with open(job["contract_pickle"], "rb") as fh:
        contract: Contract = pickle.load(fh)
    layout = HarnessLayout.build(contract, {k: int(v) for k, v in job["widths"].items()})
    backend = HarnessBackend(dut, layout, Path.cwd())
    if job.get("record"):
        backend.record = Path(job["record"])
    progress = _Progress(Path(job["progress_file"]))
    progress.backend = backend
    runner = PhaseRunner(contract, backend, SimOptions.from_json(job["options"]), progress)
    backend.runner = runner
    runner.pin_address_bits = min(pf.address.width for w in layout.words for pf in w.ports)
    t0 = time.perf_counter()
    out = _run(runner, job).to_json()
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
