"""Neighbour universe, exact, on 128 Mbit memories (issue 12): wall time and peak memory of
``coverage`` counted from the layout (memcheck/faults/neighbours.py, "after") beside the earlier way,
the whole-memory tables of memcheck/faults/universe.py ("before"). Target: <= 60 s and <= 4 GB.

Jobs (every fault class, March C-, seed 1, linear order unless named):
  2 Mword x 64 (layout 4096x512, standard backgrounds), 128 Mword x 1 (16384x8192, solid),
  1 Mword x 128 (2048x512, standard backgrounds), 128 Mword x 1 in gray order (not step-decided).

Each job runs in its own process; the result lines must be equal before and after (printed "same"
when they are). The earlier way takes minutes on the big jobs: ``--before-timeout S`` bounds it
(default 900 s; 0 skips it); it is not run where its own memory estimate (about 130 bytes a word)
passes 4 GiB, as on 128 Mwords (16.5 GiB; the issue measured 252 s and 16.9 GB there).
``--quick`` runs 8 Mbit versions. The machine may be shared: the load average is printed before
and after.

Run: .venv/bin/python bench/bench_neighbours.py [--quick] [--before-timeout S]
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys

_JOB = """
import importlib, json, resource, sys, time
from memcheck.faults.counted import WholeCounts
from memcheck.faults.fast_stream import Plan
from memcheck.faults.geometry import Arrangement
cov = importlib.import_module("memcheck.faults.coverage")
words, width, rows, cols, order, way = json.loads(sys.argv[1])
if way == "before":  # the earlier way: per-word arrays and every neighbour pair looked at
    cov.count_source = lambda t, s, k: WholeCounts(Plan.build(t, s), k)
setup = Arrangement(words, width, layout=(rows, cols), order=order, seed=1)
t0 = time.perf_counter()
rep = cov.coverage("March C-", setup, universe="neighbours")
lines = [f"{c.cls} {c.faults} {c.detected} {c.partial}" for c in rep.classes]
lines += [f"{g.cls} {g.model} {g.scope} {g.escaped} {g.partial} {g.example}" for g in rep.escapes]
out = {"seconds": time.perf_counter() - t0, "lines": lines}
out["peak_mib"] = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
print(json.dumps(out))
"""

JOBS = [
    ("2 Mword x 64, 4096x512", 1 << 21, 64, 4096, 512, "linear"),
    ("128 Mword x 1, 16384x8192", 1 << 27, 1, 16384, 8192, "linear"),
    ("1 Mword x 128, 2048x512", 1 << 20, 128, 2048, 512, "linear"),
    ("128 Mword x 1, gray order", 1 << 27, 1, 16384, 8192, "gray"),
]


def run(args: list[object], timeout: float) -> dict[str, object] | str:
    """One job in its own process: its JSON result, or why there is none."""
    try:
        proc = subprocess.run(
            [sys.executable, "-c", _JOB, json.dumps(args)], capture_output=True, text=True, check=False, timeout=timeout
        )
    except subprocess.TimeoutExpired:
        return f"> {timeout:.0f} s (stopped)"
    if proc.returncode != 0:
        return f"failed: {proc.stderr.strip().splitlines()[-1:]}"
    doc: dict[str, object] = json.loads(proc.stdout)
    return doc


def cost(doc: dict[str, object] | str) -> str:
    if isinstance(doc, str):
        return doc
    return f"{doc['seconds']:.1f} s, {doc['peak_mib']:.0f} MiB"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--before-timeout", type=float, default=900.0)
    args = ap.parse_args()
    print(f"load average before: {' '.join(f'{x:.2f}' for x in os.getloadavg())} on {os.cpu_count()} cores")
    print(f"{'job':30} {'before (whole-memory tables)':>30} {'after (from the layout)':>26}  results")
    for label, words, width, rows, cols, order in JOBS:
        if args.quick:
            words, rows, label = words >> 4, rows >> 4, label + " / 16"
        job = [words, width, rows, cols, order]
        after = run([*job, "after"], 3600)
        earlier = (200 << 20) + words * 135 + min(words * width, 1 << 22) * 48  # the earlier budget formula
        if earlier > 4 << 30:
            before: dict[str, object] | str = f"not run (needs ~{earlier / (1 << 30):.1f} GiB)"
        elif args.before_timeout > 0:
            before = run([*job, "before"], args.before_timeout)
        else:
            before = "not run"
        same = "-"
        if isinstance(before, dict) and isinstance(after, dict):
            same = "same" if before["lines"] == after["lines"] else "DIFFERENT"
        print(f"{label:30} {cost(before):>30} {cost(after):>26}  {same}")
    print(f"load average after: {' '.join(f'{x:.2f}' for x in os.getloadavg())}")


if __name__ == "__main__":
    main()
