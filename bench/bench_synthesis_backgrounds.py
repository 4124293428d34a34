"""Trade-off table (test length vs fault classes) on a 1K x 32 memory with the six standard data
backgrounds, for docs/synthesis.md:

    .venv/bin/python bench/bench_synthesis_backgrounds.py [--time-limit S] [--words N] [--width W]

Each search runs the test once per background (the search's shared pseudo-rows, see
memcheck/synthesis/passes.py). For each class set: the per-pass length found (and whether it is
proven shortest), the tester cost (length x backgrounds operations per word), the search time and the
states per length, and the shortest library test on the same memory and backgrounds. Prints markdown
with the machine's load (`uptime`); never a timed test.
"""

from __future__ import annotations

import argparse
import datetime
import platform
import subprocess
import time

from memcheck.errors import SynthesisError
from memcheck.faults import Arrangement
from memcheck.synthesis import shortest_library_test, synthesize

CLASS_SETS = [
    "SAF",
    "SAF,AF",
    "SAF,AF,TF",
    "SAF,AF,TF,SOF",
    "SAF,AF,TF,CFin",
    "SAF,AF,TF,CFin,CFid,CFst",
    "SAF,TF,WDF,RDF,DRDF,IRF",
    "dRDF,dDRDF,dIRF",
    "SAF,AF,TF,RDF,DRDF,IRF,CFin,CFid,CFst",
]


def _load() -> str:
    return subprocess.run(["uptime"], capture_output=True, text=True, check=False).stdout.strip()


def row(words: int, width: int, classes: str, limit: float) -> str:
    setup = Arrangement(words, width, None, "linear", "standard", None)
    nbg = setup.resolve().nbg
    t0 = time.perf_counter()
    try:
        r = synthesize(classes, words=words, width=width, backgrounds="standard", max_length=24, time_limit=limit)
    except SynthesisError as exc:
        return f"| {classes.replace(',', ', ')} | refused: {exc} | | {time.perf_counter() - t0:.1f} s | | |"
    dt = time.perf_counter() - t0
    p = r.proof
    if r.test is not None:
        status = "" if r.minimal else f" (not proven; none ≤ {p.complete_below - 1}n)"
        cell = f"**{r.test.length}n** `{r.test.to_unicode()}`{status}"
        cost = f"{r.test.length * nbg}n"
    else:
        cell = f"none ≤ {p.complete_below - 1}n (proven); cut by the {p.cut_by or 'length bound'}"
        cost = "-"
    lib = shortest_library_test(setup, tuple(classes.split(",")))
    libcell = "none" if lib is None else f"{lib.name} {lib.length}n ({lib.length * nbg}n)"
    states = ", ".join(str(x) for x in p.states_per_length)
    return f"| {classes.replace(',', ', ')} | {cell} | {cost} | {dt:.1f} s | {states} | {libcell} |"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--time-limit", type=float, default=300.0, help="time limit per search (s)")
    ap.add_argument("--words", type=int, default=1024)
    ap.add_argument("--width", type=int, default=32)
    ap.add_argument("--only", default=None, help="one class set (comma-separated) instead of the list")
    args = ap.parse_args()
    stamp = datetime.datetime.now(datetime.UTC).strftime("%Y-%m-%d %H:%M UTC")
    print(
        f"<!-- {stamp}, {platform.machine()}, Python {platform.python_version()}, {args.words} x {args.width}, "
        f"standard backgrounds, time limit {args.time_limit:.0f} s per search; load before: {_load()} -->"
    )
    print("| classes | shortest per pass | tester cost | search time | states per length | shortest library test |")
    print("| --- | --- | --- | --- | --- | --- |")
    for classes in [args.only] if args.only else CLASS_SETS:
        print(row(args.words, args.width, classes, args.time_limit), flush=True)
    print(f"<!-- load after: {_load()} -->")


if __name__ == "__main__":
    main()
