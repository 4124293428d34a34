"""Benchmark: ``memcheck march run`` of March SS over the standard backgrounds on a 1K-word wrapper.

Runs memcheck/examples/scratchpad_banked (1024 words x 64 bits, 7 standard backgrounds: 157,696
operations) under Icarus twice, each in a fresh Python process so peak memory is its own:

* ``replay``: the earlier way, the replay job sends every cycle's comparison back as JSON;
* ``march``: the March job checks the stream batch by batch inside the simulator and sends back
  counts and the first failure only.

Prints, per way: wall seconds, operations per second, peak RSS of memcheck's process and of the
simulator process (``resource.getrusage``: RUSAGE_SELF and RUSAGE_CHILDREN, the largest child).
The build is made once beforehand, so neither figure includes compiling.

    .venv/bin/python bench/bench_march_run.py [--contract PATH] [--test NAME] [--ways march,replay]
"""

from __future__ import annotations

import argparse
import json
import resource
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from memcheck.examples import examples_dir

ROOT = Path(__file__).resolve().parents[1]
CONTRACT = examples_dir() / "scratchpad_banked" / "contract.toml"


def one(contract: str, test: str, way: str, build_dir: str, out_dir: str) -> None:
    """Run once and print a JSON line of figures (called in a child process)."""
    from memcheck.sim import SimOptions, run_march
    from memcheck.sim.jobs.march import check_by_replay, prepare
    from memcheck.sim.session import Session

    opts = SimOptions(out_dir=Path(out_dir), build_dir=Path(build_dir), max_ops=10_000_000, waveform=False)
    t0 = time.perf_counter()
    if way == "march":
        r = run_march(contract, test, opts)
        verdict, operations, cycles, extra = str(r.verdict), r.operations, r.cycles, r.extra
    else:  # the earlier way, kept for comparison: every cycle's comparison comes back
        s = Session.open(contract, opts, job="march")
        schedule, _ = prepare(s.contract, test, s.options)
        failure, extra = check_by_replay(s, schedule)
        verdict, operations, cycles = ("fail" if failure else "pass"), schedule.operations, schedule.total_cycles
    seconds = time.perf_counter() - t0
    print(
        json.dumps(
            {
                "way": way,
                "verdict": verdict,
                "operations": operations,
                "cycles": cycles,
                "seconds": seconds,
                "sim_seconds": extra.get("sim_seconds"),
                "model_seconds": extra.get("seconds_model"),
                "harness_seconds": extra.get("seconds_batches"),
                "rss_memcheck_mb": resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024,
                "rss_simulator_mb": resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss / 1024,
            }
        )
    )


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--contract", default=str(CONTRACT))
    ap.add_argument("--test", default="March SS")
    ap.add_argument("--ways", default="replay,march")
    ap.add_argument(
        "--repeat",
        type=int,
        default=4,
        help="Also run the March job on the test's elements repeated this many times (0: skip), to "
        "show that memory does not grow with the stream.",
    )
    ap.add_argument("--one", help=argparse.SUPPRESS)
    ap.add_argument("--build-dir", help=argparse.SUPPRESS)
    ap.add_argument("--out-dir", help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.one:
        one(args.contract, args.test, args.one, args.build_dir, args.out_dir)
        return
    from memcheck.contract import load_contract
    from memcheck.sim.plumbing.build import build

    with tempfile.TemporaryDirectory(prefix="memcheck-bench-") as tmp:
        build_dir = Path(tmp) / "build"
        build(load_contract(args.contract), build_dir)
        print(f"{args.test} on {args.contract}, standard backgrounds (build made beforehand)")
        runs = [(way, args.test) for way in args.ways.split(",")]
        if args.repeat > 1:
            from memcheck.march.library import resolve_test

            inner = resolve_test(args.test).to_ascii().strip()[1:-1]
            runs.append(("march", "{" + "; ".join([inner] * args.repeat) + "}"))
        for way, test in runs:
            if test != args.test:
                print(f"  {args.test} x {args.repeat} (its elements {args.repeat} times over):")
            out = subprocess.run(
                [
                    sys.executable,
                    __file__,
                    "--contract",
                    args.contract,
                    "--test",
                    test,
                    "--one",
                    way,
                    "--build-dir",
                    str(build_dir),
                    "--out-dir",
                    str(Path(tmp) / way),
                ],
                check=True,
                capture_output=True,
                text=True,
            )
            f = json.loads(out.stdout.strip().splitlines()[-1])
            print(
                f"  {way:<7} {f['verdict']}: {f['operations']} operations in {f['seconds']:.1f} s "
                f"({f['operations'] / f['seconds']:,.0f} ops/s; simulator side {f['sim_seconds']} s"
                + (f" of which model {f['model_seconds']} s" if f["model_seconds"] is not None else "")
                + f", harness {f['harness_seconds']} s), "
                f"peak RSS memcheck {f['rss_memcheck_mb']:.0f} MB, simulator {f['rss_simulator_mb']:.0f} MB"
            )


if __name__ == "__main__":
    main()
