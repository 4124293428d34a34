"""Start one simulation of a built harness and collect what it found.

The simulator runs :mod:`memcheck.sim.plumbing._cocotb_entry` with a job file; we watch its progress file
(stall watchdog, progress display) and read its result file.
"""

from __future__ import annotations

import contextlib
import dataclasses
import json
import os
import pickle
import shutil
import tempfile
from collections.abc import Mapping
from pathlib import Path
from typing import Any

from memcheck.contract import Contract
from memcheck.errors import SimulationError, SimulationStalled
from memcheck.sim.checking.outcome import RunResult
from memcheck.sim.options import SimOptions
from memcheck.sim.plumbing.build import Build
from memcheck.sim.plumbing.harness import HARNESS_TOP, PERIOD_NS, WAVE_FILE
from memcheck.sim.plumbing.icarus import CommandFailed, ProgressCallback, QuietIcarus, Stalled, Watch

ENTRY_MODULE = "memcheck.sim.plumbing._cocotb_entry"
DEFAULT_STALL_SECONDS = SimOptions.stall_timeout


def _picklable(contract: Contract) -> Contract:
    rtl = contract.rtl
    if rtl is None:
        return contract
    return dataclasses.replace(
        contract, rtl=dataclasses.replace(rtl, parameters=dict(rtl.parameters), defines=dict(rtl.defines))
    )


def _exchange_dir(fallback: Path) -> Path:
    """Where the simulator runs and swaps stimulus/capture files: memory-backed when available.

    Every batch opens two small files on each side; on a disk-backed folder that costs a few hundred
    microseconds per batch, on tmpfs a few tens.
    """
    shm = Path("/dev/shm")
    if shm.is_dir() and os.access(shm, os.W_OK):
        with contextlib.suppress(OSError):
            return Path(tempfile.mkdtemp(prefix="memcheck-", dir=shm))
    fallback.mkdir(parents=True, exist_ok=True)
    return fallback


def _log_tail(log: Path, n: int = 8) -> str:
    if not log.is_file():
        return "  (no simulator log)"
    # cocotb's start-up chatter (INFO lines) says nothing about why a run ended.
    lines = [
        ln for ln in log.read_text(encoding="utf-8", errors="replace").splitlines() if ln.strip() and " INFO " not in ln
    ]
    return "\n".join(f"  {ln}" for ln in lines[-n:]) or "  (empty simulator log)"


def _where(last: Mapping[str, Any] | None) -> str:
    if not last:
        return "before the first batch of cycles (while starting the simulator)"
    phase = last.get("phase", "?")
    what = last.get("what")
    text = f"in the {phase} phase" + (f" ({what}" if what else "")
    if "done" in last and "total" in last:
        text += f", {last['done']} of {last['total']}"
    text += ")" if what else ""
    if "batch" in last:
        start = int(last.get("cycle", 0))
        text += (
            f", in a batch of {last['batch']} cycles starting at cycle {start} "
            f"(simulated time {start * PERIOD_NS} ns onwards)"
        )
    return text


#: A simulator log past this many bytes earns a warning in the report: a model's verbose default
#: output (one third-party model wrote 123 MB) slows a check down noticeably.
LOG_WARN_BYTES = 16 * 2**20


def _size(n: int) -> str:
    return f"{n / 2**20:.0f} MB" if n >= 2**20 else f"{n} bytes"


def log_size_note(log: Path, limit: int = LOG_WARN_BYTES) -> str | None:
    """A warning when the simulator log ``log`` is larger than ``limit`` bytes (None otherwise)."""
    size = log.stat().st_size if log.is_file() else 0
    if size <= limit:
        return None
    return (
        f"the simulator log {log} grew to {_size(size)} (over the {_size(limit)} limit): the RTL "
        "prints a lot ($display or $monitor in a model, or a model's verbose default messages), which slows the "
        "check down; switch that output off with the model's own define or parameter ([rtl] defines or "
        "parameters)"
    )


def run_job(
    build: Build,
    job: Mapping[str, Any],
    workdir: Path,
    *,
    stall_seconds: float = DEFAULT_STALL_SECONDS,
    on_progress: ProgressCallback | None = None,
    vcd: bool = False,
    log_limit: int = LOG_WARN_BYTES,
) -> RunResult:
    """Run ``job`` (mode, options, failure to replay) in a fresh simulator; returns its result, with a
    note when the simulator log grew past ``log_limit`` bytes."""
    workdir = Path(workdir).resolve()
    workdir.mkdir(parents=True, exist_ok=True)
    pickle_file = workdir / "contract.pickle"
    with pickle_file.open("wb") as fh:
        pickle.dump(_picklable(build.contract), fh)
    result_file = workdir / "result.json"
    progress_file = workdir / "progress.jsonl"
    for f in (result_file, progress_file):
        f.unlink(missing_ok=True)
    full = {
        **job,
        "contract_pickle": str(pickle_file),
        "widths": dict(build.pins.widths),
        "result_file": str(result_file),
        "progress_file": str(progress_file),
    }
    job_file = workdir / "job.json"
    job_file.write_text(json.dumps(full), encoding="utf-8")

    watch = Watch(progress_file, stall_seconds, on_progress)
    runner = QuietIcarus(watch=watch, vcd=vcd)
    runner.forced_env = {
        "MEMCHECK_JOB": str(job_file),
        "PYTEST_DISABLE_PLUGIN_AUTOLOAD": "1",
        "PYTHONHASHSEED": "0",
        "COCOTB_LOG_LEVEL": os.environ.get("MEMCHECK_COCOTB_LOG_LEVEL", "WARNING"),
        # Called from inside a user's own cocotb run, the environment carries its test selection.
        "COCOTB_TEST_FILTER": "memcheck_session$",
        "COCOTB_TESTCASE": "",
        "COCOTB_LIST_TESTS": "0",
    }
    log = workdir / "sim.log"
    xdir = _exchange_dir(workdir / "x")
    try:
        runner.test(
            test_module=ENTRY_MODULE,
            hdl_toplevel=HARNESS_TOP,
            hdl_toplevel_lang="verilog",
            build_dir=build.sim_dir,
            test_dir=xdir,
            results_xml=str(workdir / "results.xml"),
            log_file=log,
        )
    except Stalled as exc:
        raise SimulationStalled(
            f"the simulation stopped making progress (nothing for {exc.seconds:g} s) {_where(exc.last)}; "
            "the RTL may contain a zero-delay loop or wait for something that never happens. "
            f"The simulator was stopped; its log is {log}."
        ) from None
    except (CommandFailed, SystemExit):
        pass
    finally:
        wave = xdir / WAVE_FILE
        if wave.is_file():
            shutil.move(str(wave), str(workdir / WAVE_FILE))
        shutil.rmtree(xdir, ignore_errors=True)
    if not result_file.is_file():
        raise SimulationError(
            f"the simulation ended before memcheck finished ({_where(watch.last)}); did the RTL call $finish "
            f"or $fatal, or run out of events? Last lines of {log}:\n{_log_tail(log)}"
        )
    out = json.loads(result_file.read_text(encoding="utf-8"))
    if out.get("status") != "ok":
        err = SimulationError(str(out.get("error", "unknown error in the simulation")))
        err.sim_traceback = str(out.get("traceback", ""))  # type: ignore[attr-defined]
        raise err
    result = RunResult.from_json(out)
    note = log_size_note(log, log_limit)
    return result if note is None else dataclasses.replace(result, notes=(*result.notes, note))
