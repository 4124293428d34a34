"""Trade-off table (test length vs fault classes) and coverage plot of library vs synthesized tests,
for docs/synthesis.md. Remake both with:

    .venv/bin/python bench/bench_synthesis_tradeoff.py [--time-limit S] [--plot docs/img/synthesis_coverage.png]

The table is over the geometries the search supports today: 64 x 1 (bit-oriented) and 1K x 32 with
one data background (solid). A class set whose intra-word faults one background cannot expose is
reported as such (the search proves it and refuses). For each row: the synthesized length (or, when
the time limit cuts the search, the lengths proven empty), search time, and the shortest library
test that detects every instance on the same memory. Prints markdown; never a timed test.
"""

from __future__ import annotations

import argparse
import datetime
import platform
import time
from dataclasses import replace
from pathlib import Path

from memcheck.errors import SynthesisError
from memcheck.faults import Arrangement, coverage
from memcheck.faults.plot import plot_coverage
from memcheck.march.library import ALGORITHMS
from memcheck.march.notation import MarchTest
from memcheck.synthesis import shortest_library_test, synthesize

CLASS_SETS = [
    "SAF",
    "SAF,AF",
    "SAF,AF,TF",
    "SAF,AF,TF,CFin",
    "SAF,AF,TF,CFin,CFid,CFst",
    "SAF,TF,WDF,RDF,DRDF,IRF",
    "SAF,AF,TF,RDF,DRDF,IRF,CFin,CFid,CFst",
    "dRDF,dDRDF,dIRF",
    "SAF,TF,WDF,RDF,DRDF,IRF,CFst,CFds,CFtr,CFwd,CFrd,CFdrd,CFir",
]
GEOMETRIES = [(64, 1), (1024, 32)]
STATIC = ("SAF", "TF", "WDF", "RDF", "DRDF", "IRF", "CFst", "CFds", "CFtr", "CFwd", "CFrd", "CFdrd", "CFir", "CFin")
PLOT_CLASSES = (*STATIC, "CFid", "AF")
PLOT_LIBRARY = ("March C-", "March SS", "March MSS")
PLOT_SYNTH = ("SAF,AF,TF,CFin", "SAF,AF,TF,CFin,CFid,CFst", "SAF,AF,TF,RDF,DRDF,IRF,CFin,CFid,CFst")


def _library_cell(words: int, width: int, classes: str) -> str:
    """The shortest library test detecting every instance, run over the memory's default backgrounds
    (the standard set on wide words, so its time is length x backgrounds operations per word)."""
    setup = Arrangement(words, width, None, "linear", None, None)
    fb = shortest_library_test(setup, tuple(classes.split(",")))
    if fb is None:
        return "none"
    nbg = setup.resolve().nbg
    return f"{fb.name} {fb.length}n" + (f" x {nbg} backgrounds = {fb.length * nbg}n" if nbg > 1 else "")


def table_row(words: int, width: int, classes: str, limit: float) -> tuple[str, MarchTest | None]:
    """One markdown row (and the synthesized test, if one was found)."""
    geo = f"{words} x {width}" if words < 1024 else f"{words // 1024}K x {width}"
    t0 = time.perf_counter()
    try:
        r = synthesize(classes, words=words, width=width, backgrounds="solid", max_length=24, time_limit=limit)
    except SynthesisError:
        dt = time.perf_counter() - t0
        cell = "no one-background test exists (intra-word faults); needs several backgrounds"
        return (
            f"| {geo} | {classes.replace(',', ', ')} | {cell} | {dt:.1f} s | {_library_cell(words, width, classes)} |",
            None,
        )
    dt = time.perf_counter() - t0
    if r.test is not None:
        proof = "" if r.minimal else " (cut by the limit: not proven shortest)"
        cell = f"**{r.length}n** `{r.test.to_unicode()}`{proof}"
    else:
        cell = f"none ≤ {r.proof.complete_below - 1}n (proven); cut by the {limit:.0f} s limit"
    lib = _library_cell(words, width, classes)
    return f"| {geo} | {classes.replace(',', ', ')} | {cell} | {dt:.1f} s | {lib} |", r.test


def make_plot(tests: dict[str, MarchTest], path: Path) -> None:
    """Grouped bars: coverage per class of March C-, SS, MSS and the synthesized tests on 64 x 1."""
    setup = Arrangement(64, 1, None, "linear", None, None)
    lib = {a.test.name: a.test for a in ALGORITHMS}
    reports = [coverage(lib[n], setup, classes=PLOT_CLASSES) for n in PLOT_LIBRARY]
    for classes, t in tests.items():
        named = replace(t, name=f"synth {classes.replace('SAF,AF,TF,', '…')}")
        reports.append(coverage(named, setup, classes=PLOT_CLASSES))
    plot_coverage(reports, path)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--time-limit", type=float, default=120.0, help="time limit per search (s)")
    ap.add_argument("--plot", type=Path, default=Path("docs/img/synthesis_coverage.png"))
    ap.add_argument("--skip-table", action="store_true", help="only the plot")
    args = ap.parse_args()
    stamp = datetime.datetime.now(datetime.UTC).strftime("%Y-%m-%d")
    print(
        f"<!-- {stamp}, {platform.machine()} {platform.processor() or platform.system()}, Python "
        f"{platform.python_version()}, time limit {args.time_limit:.0f} s per search -->"
    )
    synth: dict[str, MarchTest] = {}
    if not args.skip_table:
        print(
            "| memory | classes | shortest test (one background: solid) | search time "
            "| shortest library test (default backgrounds) |"
        )
        print("| --- | --- | --- | --- | --- |")
        for words, width in GEOMETRIES:
            for classes in CLASS_SETS:
                row, test = table_row(words, width, classes, args.time_limit)
                print(row, flush=True)
                if test is not None and words == 64 and classes in PLOT_SYNTH:
                    synth[classes] = test
    for classes in PLOT_SYNTH:
        if classes not in synth:
            r = synthesize(classes, words=64, max_length=24, time_limit=args.time_limit)
            if r.test is not None:
                synth[classes] = r.test
    make_plot(synth, args.plot)
    print(f"\nplot: {args.plot} ({args.plot.stat().st_size // 1024} KB)")


if __name__ == "__main__":
    main()
