"""The one run pipeline of every job on RTL: options, folders, build, launch, replay and waveform.

A :class:`Session` is opened for one contract and one :class:`~memcheck.sim.options.SimOptions`;
a job (:mod:`memcheck.sim.jobs`) then builds the RTL (once per source/parameter hash, shared by
every job), launches its work in a fresh simulator, replays a failure in another one (writing the
waveform of the trace alone, atomically) and writes the replay file. Folders:

* ``out_dir`` (default ``memcheck-out/<name>``, plus ``/<job>`` for jobs other than ``check``): the
  run's work folders, replay file, waveform and text report;
* ``build_dir`` (default ``memcheck-out/<name>/build``): the compiled simulation images.
"""

from __future__ import annotations

import random
import shutil
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from memcheck._atomic import open_atomic
from memcheck.contract import Contract, load_contract
from memcheck.records import CheckedTrace, Failure
from memcheck.sim.checking.outcome import RunResult
from memcheck.sim.checking.support import require_simulator_support
from memcheck.sim.options import SimOptions
from memcheck.sim.plumbing.build import Build, build
from memcheck.sim.plumbing.harness import WAVE_FILE
from memcheck.sim.plumbing.icarus import ProgressCallback
from memcheck.sim.plumbing.launch import run_job
from memcheck.sim.replayfile import ReplayFile, file_digest

DEFAULT_OUT = Path("memcheck-out")


def default_out_dir(contract: Contract, contract_path: Path | None) -> Path:
    """``memcheck-out/<name>``: the contract's file stem, or its folder name for ``contract.toml``."""
    if contract_path is not None:
        name = contract_path.stem if contract_path.stem != "contract" else contract_path.resolve().parent.name
    else:
        name = contract.rtl.top if contract.rtl is not None else "memory"
    return DEFAULT_OUT / name


def resolve_contract(contract: Contract | str | Path) -> tuple[Contract, Path | None]:
    """A contract and the file it came from (loaded when given as a path)."""
    if isinstance(contract, Contract):
        return contract, contract.path
    return load_contract(contract), Path(contract)


def fresh_seed() -> int:
    """A seed for a run whose caller gave none (reported in the result)."""
    return random.SystemRandom().randrange(1 << 32)


@dataclass
class Session:
    """One job's pipeline on one contract (see the module docstring)."""

    contract: Contract
    contract_path: Path | None
    options: SimOptions
    out_dir: Path
    build_dir: Path
    on_progress: ProgressCallback | None = None
    started: float = field(default_factory=time.perf_counter)
    build: Build | None = None
    build_seconds: float = 0.0

    @classmethod
    def open(
        cls,
        contract: Contract | str | Path,
        options: SimOptions,
        *,
        job: str | None = None,
        on_progress: ProgressCallback | None = None,
    ) -> Session:
        """A session for ``contract``; ``job`` names the job's own folder under the default output
        folder (None: the output folder itself). The seed is drawn here when the options have none."""
        t0 = time.perf_counter()
        c, path = resolve_contract(contract)
        require_simulator_support(c)
        if options.seed is None:
            options = options.replace(seed=fresh_seed())
        base = default_out_dir(c, path)
        given = options.out_dir is not None
        out = Path(options.out_dir) if options.out_dir is not None else (base / job if job else base)
        cache = (
            Path(options.build_dir)
            if options.build_dir is not None
            else (out / "build" if given or not job else base / "build")
        )
        return cls(c, path, options, out, cache, on_progress, t0)

    @property
    def seed(self) -> int:
        return self.options.seed_or_zero()

    def elapsed(self) -> float:
        return time.perf_counter() - self.started

    def compile(self) -> Build:
        """Build (or reuse) the simulation image; timed as the session's build seconds."""
        if self.build is None:
            t0 = time.perf_counter()
            self.build = build(self.contract, self.build_dir)
            self.build_seconds = time.perf_counter() - t0
        return self.build

    def launch(self, job: dict[str, Any], folder: str, *, extra_stall: float = 0.0, vcd: bool = False) -> RunResult:
        """Run ``job`` (its mode and data; the options are added) in a fresh simulator, working in
        ``out_dir/folder``."""
        b = self.compile()
        return run_job(
            b,
            {**job, "options": self.options.to_json()},
            self.out_dir / folder,
            stall_seconds=self.options.stall_timeout + extra_stall,
            on_progress=self.on_progress,
            vcd=vcd,
        )

    def replay(self, failure: Failure, *, extra_stall: float = 0.0) -> tuple[CheckedTrace, Path | None]:
        """Run ``failure`` again in a fresh simulator (dumping the trace alone when the options ask for
        the waveform); returns what it showed and the waveform file, copied to ``out_dir``."""
        dump = self.options.waveform
        job = {"mode": "replay", "failure": failure.to_json(), "dump": dump}
        res = self.launch(job, "replay", extra_stall=extra_stall, vcd=dump)
        assert res.replayed is not None
        return res.replayed, self._keep_waveform(self.out_dir / "replay" / WAVE_FILE) if dump else None

    def _keep_waveform(self, src: Path) -> Path | None:
        if not src.is_file():
            return None
        wave = self.out_dir / WAVE_FILE
        with src.open("rb") as fh, open_atomic(wave) as dst:
            shutil.copyfileobj(fh, dst)
        return wave

    def write_replay_file(self, failure: Failure) -> Path | None:
        """The replay file of ``failure`` (``out_dir/replay.json``); None without a contract file."""
        if self.contract_path is None:
            return None
        rf = ReplayFile(self.contract_path, failure, self.seed, file_digest(self.contract_path))
        return rf.write(self.out_dir / "replay.json")

    def record_fields(self) -> dict[str, Any]:
        """The fields of a result record the session knows (see :class:`memcheck.records.RunRecord`)."""
        return {
            "contract": self.contract,
            "contract_path": self.contract_path,
            "seed": self.seed,
            "seconds": self.elapsed(),
            "build_seconds": self.build_seconds,
            "build_reused": self.build is not None and self.build.reused,
            "out_dir": self.out_dir,
            "unconnected_inputs": self.build.pins.unconnected_inputs if self.build is not None else (),
            "pin_widths": dict(self.build.pins.widths) if self.build is not None else {},
        }
