"""Benchmark: real-memory examples (several clocks, slow output, power pins, lane maps).

Prints, in one run:

1. the wall time of a default ``memcheck check`` (build included, fresh output folder, seed 1) on
   each real-memory example wrapper and buggy twin of ``memcheck/examples`` (target: at most 60 s
   each on a shared 2-core machine), with its verdict and minimal trace; an example whose keys the
   simulator harness does not drive yet is listed as such;
2. on the 2-clock 1K x 32 wrapper (``tile_exchange``: 10 ns and 15 ns clocks, 5 ns apart), the
   property phase in bulk mode against a plain Verilog testbench (``tests/plain_tb.py``: timed pin
   assignments per clock edge and a ``$fdisplay`` per sample, written independently of memcheck's
   harness) running random operations on the same wrapper in the same Icarus. Operations per
   second of the plain testbench (vvp time, start-up subtracted) and of memcheck's whole property
   phase (Hypothesis generation, stimulus, simulator, capture, the reference model); target:
   within 2x, as for one clock (bench/bench_check.py).

    .venv/bin/python bench/bench_realmem.py [--bulk-examples N] [--ticks N] [--skip-wall]
"""

from __future__ import annotations

import argparse
import json
import os
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))  # tests.plain_tb

from memcheck.contract import load_contract  # noqa: E402
from memcheck.examples import examples_dir  # noqa: E402
from memcheck.sim.checking.support import simulator_support_problems  # noqa: E402
from memcheck.sim.options import SimOptions  # noqa: E402
from memcheck.sim.plumbing.build import build  # noqa: E402
from memcheck.sim.plumbing.launch import run_job  # noqa: E402
from tests import plain_tb  # noqa: E402
from tests.test_examples_plain import random_trace  # noqa: E402

REAL = (
    "tile_exchange",
    "coeff_store_slow",
    "retention_buffer",
    "flit_store",
    "tile_exchange_bypass_bug",
    "flit_store_lane_bug",
)
TWO_CLOCK = "tile_exchange"


def wall(name: str) -> str:
    """One default check of example ``name``: verdict, minimal trace and wall seconds."""
    contract = examples_dir() / name / "contract.toml"
    problems = simulator_support_problems(load_contract(contract))
    if problems:
        return f"  {name:26s} needs harness support for {'; '.join(p.split(':')[0] for p in problems)}"
    out = Path(tempfile.mkdtemp(prefix="memcheck-realmem-"))
    cmd = [sys.executable, "-m", "memcheck", "check", str(contract), "--seed", "1", "--out", str(out)]
    t0 = time.perf_counter()
    proc = subprocess.run([*cmd, "--quiet", "--json", str(out / "r.json")], capture_output=True, text=True)
    seconds = time.perf_counter() - t0
    rep = json.loads((out / "r.json").read_text())
    shutil.rmtree(out, ignore_errors=True)
    mt = rep.get("minimal_trace") or {}
    trace = f"minimal trace {mt.get('cycles')} ticks" if mt else ""
    target = "within 60 s" if seconds <= 60 else "OVER 60 s"
    return f"  {name:26s} {rep['verdict']:4s} (exit {proc.returncode}) {seconds:6.1f} s  {target}  {trace}"


def memcheck_property(bulk_examples: int, seed: int) -> tuple[int, float, float]:
    """Operations, property-phase seconds and wall seconds of a bulk-mode property phase."""
    contract = load_contract(examples_dir() / TWO_CLOCK / "contract.toml")
    work = Path(tempfile.mkdtemp(prefix="memcheck-realmem-"))
    b = build(contract, work / "build")
    opts = SimOptions(phases=("property",), examples=0, bulk_examples=bulk_examples, seed=seed)
    t0 = time.perf_counter()
    res = run_job(b, {"mode": "check", "options": opts.to_json()}, work / "run")
    seconds = time.perf_counter() - t0
    shutil.rmtree(work, ignore_errors=True)
    assert res.failure is None, "the 2-clock wrapper should conform"
    phase = res.phases[0]
    return phase.operations, phase.seconds, seconds


def _vvp_seconds(folder: Path) -> float:
    t0 = time.perf_counter()
    subprocess.run(["vvp", "-n", "plain.vvp", "-none"], cwd=folder, check=True, capture_output=True)
    return time.perf_counter() - t0


def plain_property(ticks: int, seed: int) -> tuple[int, float]:
    """Operations and vvp seconds (start-up subtracted) of the plain testbench over ``ticks`` random
    ticks on the 2-clock wrapper; its samples are checked against the model (no difference)."""
    contract = load_contract(examples_dir() / TWO_CLOCK / "contract.toml")
    work = Path(tempfile.mkdtemp(prefix="memcheck-plain-"))
    trace = random_trace(contract, ticks, seed)
    samples = plain_tb.run(contract, trace, work / "full")
    assert plain_tb.compare(contract, trace, samples) == []
    plain_tb.run(contract, random_trace(contract, 2, seed), work / "empty")
    seconds = max(_vvp_seconds(work / "full") - _vvp_seconds(work / "empty"), 1e-9)
    shutil.rmtree(work, ignore_errors=True)
    return trace.operation_count(), seconds


def main() -> None:
    ap = argparse.ArgumentParser(description=(__doc__ or "").split("\n")[0])
    ap.add_argument("--bulk-examples", type=int, default=100, help="bulk examples of the property phase")
    ap.add_argument("--ticks", type=int, default=50_000, help="ticks of the plain testbench")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--skip-wall", action="store_true", help="skip the default checks of the examples")
    args = ap.parse_args()
    print(f"machine: {os.cpu_count()} cores, load average {os.getloadavg()[0]:.1f} at the start")
    if not args.skip_wall:
        print("default `memcheck check` (build included, seed 1) on each real-memory example:")
        for name in REAL:
            print(wall(name), flush=True)
    problems = simulator_support_problems(load_contract(examples_dir() / TWO_CLOCK / "contract.toml"))
    if problems:
        print(f"\nproperty phase on {TWO_CLOCK}: needs harness support ({problems[0]})")
        return
    print(f"\nproperty phase, bulk mode, {TWO_CLOCK} (1K x 32, clocks 10 ns and 15 ns, phase 5 ns):")
    ops, phase_s, wall_s = memcheck_property(args.bulk_examples, args.seed)
    p_ops, p_s = plain_property(args.ticks, args.seed)
    plain_rate, mc_rate = p_ops / p_s, ops / phase_s
    print(f"  plain Verilog testbench   {plain_rate:>10.0f} ops/s  ({p_ops} operations in {p_s:.2f} s of vvp)")
    print(
        f"  memcheck property phase   {mc_rate:>10.0f} ops/s  ({ops} operations in {phase_s:.2f} s; "
        f"job wall {wall_s:.1f} s)   ratio {plain_rate / mc_rate:.2f}x"
    )
    ratio = plain_rate / mc_rate
    print(f"  -> target within 2x of the plain testbench: {'met' if ratio <= 2 else 'NOT met'} ({ratio:.2f}x)")
    print(f"load average {os.getloadavg()[0]:.1f} at the end")


if __name__ == "__main__":
    main()
