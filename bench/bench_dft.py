"""DFT workflow benchmark (issue 12): each job in its own process, wall time and peak memory printed.

(a) ``coverage "March SS"`` with ``sample:100000`` (every class: 25 x 100,000 instances) on a
    1 Gword x 64 memory with layout 32Kx32K (target <= 60 s, 2 GB): the sample is decoded and
    simulated as arrays (memcheck/faults/drawn.py, sampled.py, compose.py) on the compact memory of
    the words it touches (memcheck/faults/sparse.py), so memory is bounded by the sample;
(a2) the same with ``sample:100000:neighbours``;
(b) the same sample job on the 16 Mword x 64 memory of the OverflowError (sample:2000, CFst,CFds,AF);
(c) neighbour universe, exact, 128 Mbit (2 Mword x 64, layout 4096x512), March SS, two-cell
    classes and AF (target <= 60 s, 4 GB);
(d) diagnose on 1 Mbit with 10 failing operations (target <= 10 s): bench/bench_diagnose.py.

Run: .venv/bin/python bench/bench_dft.py [--quick] [--sample K] [--skip-neighbours] [--before DIR]
(--quick shrinks (c) to 8 Mbit; --sample sets K of (a), default 100000; --before DIR runs every job
a second time on the memcheck package found in DIR (e.g. ``git archive`` of an earlier commit) and
prints both side by side). The machine may be shared: the load average is printed with every job.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys

_JOB = """
import json, resource, sys, time
from memcheck.errors import BudgetError
from memcheck.faults.budget import DEFAULT_MAX_MEMORY, check_budget, estimate_coverage
from memcheck.faults.coverage import coverage
from memcheck.faults.geometry import Arrangement
from memcheck.faults.universe import parse_classes, parse_universe
words, width, rows, cols, universe, classes = json.loads(sys.argv[1])
setup = Arrangement(words, width, layout=(rows, cols), seed=1)
uni = parse_universe(universe, 1)
cls = parse_classes(classes)
t0 = time.perf_counter()
est = estimate_coverage(setup, uni, cls, 7)
out = {"estimate_gib": est.bytes / 2**30}
try:
    check_budget(est, DEFAULT_MAX_MEMORY, "job", "--max-memory")
    rep = coverage("March SS", setup, classes=cls, universe=uni)
    out["coverage"] = {c.cls: f"{c.detected}/{c.faults}" for c in rep.classes}
except BudgetError as exc:
    out["refused"] = str(exc)[:160]
out["seconds"] = time.perf_counter() - t0
out["peak_mib"] = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
print(json.dumps(out))
"""


def _load() -> str:
    return " ".join(f"{x:.2f}" for x in os.getloadavg())


def _job(args: list[object], code: str | None) -> tuple[str, str]:
    """One job in its own process (on the memcheck package in ``code`` when given): its cost (or why it
    did not run) and its coverage figures."""
    env = dict(os.environ, PYTHONPATH=code) if code else None
    load = _load()
    proc = subprocess.run(
        [sys.executable, "-c", _JOB, json.dumps(args)],
        capture_output=True,
        text=True,
        check=False,
        timeout=3600,
        env=env,
        cwd=code,  # ``python -c`` puts the working folder first on the path
    )
    if proc.returncode != 0:
        return f"failed: {proc.stderr.strip().splitlines()[-1:]}", ""
    doc = json.loads(proc.stdout)
    if "refused" in doc:
        return f"refused ({doc['refused']})", ""
    cost = f"{doc['seconds']:.1f} s, peak {doc['peak_mib']:.0f} MiB (load before {load}, after {_load()})"
    return cost, f"coverage {doc['coverage']}"


def run(label: str, args: list[object], before: str | None = None) -> None:
    if not before:
        cost, figures = _job(args, None)
        print(f"{label}: {cost}; {figures}")
        return
    old, old_figures = _job(args, os.path.abspath(before))
    new, figures = _job(args, None)
    same = "identical" if figures == old_figures else f"DIFFER; before {old_figures}"
    print(f"{label}:\n  before: {old}\n  after:  {new}\n  {figures} ({same})")


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--sample", type=int, default=100_000)
    ap.add_argument("--skip-neighbours", action="store_true")
    ap.add_argument("--before", default=None, help="folder holding an earlier memcheck package to compare with")
    args = ap.parse_args()
    quick = args.quick
    print(f"load average before: {_load()} on {os.cpu_count()} cores")
    k, old = args.sample, args.before
    run(f"(a) 1 Gword x 64, sample:{k}", [1 << 30, 64, 1 << 15, 1 << 15, f"sample:{k}", None], old)
    run(
        f"(a2) 1 Gword x 64, sample:{k}:neighbours",
        [1 << 30, 64, 1 << 15, 1 << 15, f"sample:{k}:neighbours", None],
        old,
    )
    run("(b) 16 Mword x 64, sample:2000", [1 << 24, 64, 4096, 4096, "sample:2000", "CFst,CFds,AF"], old)
    words, rows, cols = ((1 << 17), 512, 256) if quick else ((1 << 21), 4096, 512)
    if not args.skip_neighbours:
        run(
            f"(c) neighbours exact, {words * 64 >> 20} Mbit",
            [words, 64, rows, cols, "neighbours", "CFst,CFds,CFtr,CFwd,CFrd,CFdrd,CFir,CFin,CFid,AF"],
        )
    print("(d) diagnose, 1 Mbit, 10 failing operations: bench/bench_diagnose.py")
    print(f"load average after: {_load()}")


if __name__ == "__main__":
    main()
