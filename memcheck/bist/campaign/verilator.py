"""Build a campaign harness with Verilator (an executable that takes ``+faults=TABLE``, like ``vvp``).

The same three source files as the Icarus build are verilated with ``--main --timing`` (the harness's
clock and reset are written with delays), then compiled with make and the C++ compiler: the generated
code is large (every ``COPIES``-bit operation is unrolled word by word) and runs only ~40,000 cycles per
simulation, so compile time matters: ``-O2`` on the per-cycle code (it compiles in about the same time
as ``-O1`` and runs 2.4 times faster), ``-O0`` on start-up code. Verilator's own run-time library
(``verilated*.o``) does not depend on the design: it is compiled once per Verilator version and kept
beside the compiled harnesses, and later builds link the kept objects.

Both simulators print the same lines, and verdicts are identical shard for shard (a test holds them
equal); the simulator is part of the harness's cache key.
"""

from __future__ import annotations

import hashlib
import os
import shutil
import subprocess
from pathlib import Path

from memcheck.errors import BistError

#: verilator options (the prefix fixes the executable's name)
VERILATE = (
    "--cc",
    "--exe",
    "--main",
    "--timing",
    "-Wno-fatal",
    "-Wno-lint",
    "-Wno-style",
    "--x-assign",
    "0",
    "--x-initial",
    "0",
    "--top-module",
    "campaign_tb",
    "--prefix",
    "Vcampaign_tb",
)
#: C++ optimisation of the generated code (fast path, initial blocks) and of the run-time library
MAKE_VARS = ("OPT_FAST=-O2", "OPT_SLOW=-O0", "OPT_GLOBAL=-O1")
#: what a compiled harness depends on besides its sources (part of the build cache key)
BUILD_TAG = "\0".join((*VERILATE, *MAKE_VARS))
RUNTIME_OBJECTS = ("verilated.o", "verilated_timing.o", "verilated_threads.o")


def tools_missing() -> list[str]:
    """The programs a Verilator build needs that are not on PATH."""
    return [t for t in ("verilator", "make", os.environ.get("CXX", "g++")) if shutil.which(t) is None]


def _run(cmd: list[str], cwd: Path | None, what: str) -> str:
    proc = subprocess.run(cmd, cwd=cwd, capture_output=True, text=True, timeout=1800)
    if proc.returncode != 0:
        text = (proc.stderr.strip() or proc.stdout.strip())[-2000:]
        raise BistError(f"{what} failed on the campaign harness (exit {proc.returncode}): {text}")
    return proc.stdout


def _runtime_dir(root: Path) -> Path:
    version = _run(["verilator", "--version"], None, "verilator --version").strip()
    key = hashlib.sha256("\0".join((version, *VERILATE, *MAKE_VARS)).encode()).hexdigest()[:16]
    return root / f"verilator-runtime-{key}"


def _keep_runtime(obj: Path, kept: Path) -> None:
    """Keep the freshly compiled run-time objects for later builds (each file replaced atomically)."""
    kept.mkdir(parents=True, exist_ok=True)
    for name in RUNTIME_OBJECTS:
        src, dst = obj / name, kept / name
        if src.exists() and not dst.exists():
            tmp = kept / f".{name}.{os.getpid()}"
            shutil.copy2(src, tmp)
            os.replace(tmp, dst)


def build_verilator(sources: list[Path], workdir: Path, root: Path, jobs: int = 2) -> Path:
    """Verilate and compile ``sources`` in ``workdir``; returns the executable.

    Raises
    ------
    BistError
        When a tool is missing or verilator, make or the C++ compiler fails (their last lines quoted).
    """
    missing = tools_missing()
    if missing:
        raise BistError(
            f"the Verilator campaign build needs {', '.join(missing)} on PATH (tools/ensure-eda.sh installs "
            "Verilator); or run the campaign with --simulator icarus"
        )
    obj = workdir / "obj"
    _run(["verilator", *VERILATE, "-Mdir", str(obj), *map(str, sources)], workdir, "verilator")
    kept = _runtime_dir(root)
    if all((kept / n).exists() for n in RUNTIME_OBJECTS):
        for name in RUNTIME_OBJECTS:
            shutil.copy2(kept / name, obj / name)  # newer than the library's sources: make keeps them
    _run(["make", "-s", f"-j{max(1, jobs)}", "-f", "Vcampaign_tb.mk", *MAKE_VARS, "Vcampaign_tb"], obj, "make")
    _keep_runtime(obj, kept)
    return obj / "Vcampaign_tb"


SIMULATORS = ("auto", "icarus", "verilator")
#: copy-cycles (faulty copies x engine cycles) from which ``auto`` picks Verilator: Icarus spends about
#: 0.44 us of CPU per copy-cycle (18.3 s for 1,024 copies x 40,962 cycles), so 50M is ~22 s, about what
#: Verilator spends compiling a 256-copy harness (bench/bench_campaign.py)
AUTO_VERILATOR_WORK = 50_000_000
#: copies per simulation under Verilator by default: its generated code grows with the copies (and so
#: its compile time), while one simulation costs little
VERILATOR_COPIES = 256


def choose_simulator(choice: str, work: int) -> str:
    """``icarus`` or ``verilator`` for a campaign of ``work`` copy-cycles.

    ``auto`` takes Verilator when it is installed and the campaign is large enough to repay its compile;
    otherwise Icarus. An explicit ``verilator`` without the tools is refused (BistError naming them).
    """
    if choice not in SIMULATORS:
        raise BistError(f"unknown simulator {choice!r}: use {', '.join(SIMULATORS)}")
    if choice == "auto":
        return "verilator" if work >= AUTO_VERILATOR_WORK and not tools_missing() else "icarus"
    if choice == "verilator" and tools_missing():
        raise BistError(
            f"--simulator verilator needs {', '.join(tools_missing())} on PATH (tools/ensure-eda.sh installs "
            "Verilator); or use --simulator icarus"
        )
    return choice
