"""Fault-simulation benchmark: both engines in one run, figures and peak memory printed.

(a) reference engine vs fast engine on the same 16-word job (every fault of every class, all
    universe, March C-); the verdicts are compared and the speed ratio printed (target >= 1000x);
(b) fast engine: every static two-cell fault over every ordered cell pair of a 4,096-bit memory
    under March SS (target < 5 s), plus the same with a pseudo-random order and a word-oriented
    128 x 32 memory;
(c) fast engine: neighbour universe of a 1 Mbit memory, 1024 x 1024 layout, every class, March SS
    (target < 30 s).

Run: .venv/bin/python bench/bench_faults.py [--quick]   (--quick shrinks (a) for a smoke run)
"""

from __future__ import annotations

import argparse
import resource
import sys
import time
import tracemalloc
from collections import Counter
from collections.abc import Callable
from functools import partial
from typing import TypeVar

from memcheck.faults.coverage import CoverageReport, coverage
from memcheck.faults.fast import simulate
from memcheck.faults.geometry import Arrangement
from memcheck.faults.reference import simulate_reference
from memcheck.faults.sampling import enumerate_class
from memcheck.faults.universe import CLASSES
from memcheck.march.library import resolve_test

T = TypeVar("T")
STATIC_TWO_CELL = ("CFst", "CFds", "CFtr", "CFwd", "CFrd", "CFdrd", "CFir")


def measured(fn: Callable[[], T], repeat: int = 1, trace: Callable[[], object] | None = None) -> tuple[T, float, float]:
    """Result, best wall seconds over ``repeat`` untraced calls, and peak memory (MiB) of one more call
    (or of ``trace``) under tracemalloc, which slows numpy code down too much to time it traced."""
    best = float("inf")
    out: T | None = None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    tracemalloc.start()
    (trace or fn)()
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    assert out is not None
    return out, best, peak / 2**20


def total(report: CoverageReport) -> int:
    return sum(c.faults for c in report.classes)


def bench_a(words: int) -> None:
    test = resolve_test("March C-")
    setup = Arrangement(words)
    faults = [f for cls in CLASSES for f in enumerate_class(cls, setup)]
    print(f"(a) {len(faults):,} faults (every class, all universe), {words} words x 1 bit, March C-")
    ref, t_ref, m_ref = measured(
        lambda: simulate_reference(test, faults, setup), trace=lambda: simulate_reference(test, faults[::50], setup)
    )
    fast, t_fast, m_fast = measured(lambda: simulate(test, faults, setup), repeat=3)
    rep, t_cov, m_cov = measured(lambda: coverage(test, setup, universe="all"), repeat=5)
    same = ref == fast
    tally = Counter(r.verdict for r in ref)
    counted = (sum(c.detected for c in rep.classes), sum(c.partial for c in rep.classes))
    print("    (times are untraced; peak memory is traced in a separate call)")
    print(f"    reference engine        {t_ref:9.3f} s   peak {m_ref:7.1f} MiB")
    print(
        f"    fast, per fault         {t_fast:9.3f} s   peak {m_fast:7.1f} MiB   ratio {t_ref / t_fast:8.0f}x"
        f"   identical verdicts and witnesses: {same}"
    )
    ratio = t_ref / t_cov
    print(
        f"    fast, coverage counts   {t_cov:9.3f} s   peak {m_cov:7.1f} MiB   ratio {ratio:8.0f}x"
        f"   same counts: {counted == (tally['detected'], tally['partial'])}   "
        f"({'meets' if ratio >= 1000 else 'MISSES'} >= 1000x)"
    )
    if not same:
        sys.exit("reference and fast engines disagree")


def bench_b() -> None:
    print("(b) every static two-cell fault (36 primitives) over every ordered cell pair, March SS, 4,096 bits")
    for label, setup in (
        ("4096 x 1, linear", Arrangement(4096)),
        ("4096 x 1, lfsr order", Arrangement(4096, order="lfsr", seed=1)),
        ("128 x 32, standard backgrounds", Arrangement(128, 32)),
    ):
        rep, dt, mem = measured(partial(coverage, "March SS", setup, classes=STATIC_TWO_CELL), repeat=3)
        cov = sum(c.detected for c in rep.classes) / total(rep)
        print(
            f"    {label:32s} {total(rep):>14,} faults {dt:8.3f} s   peak {mem:7.1f} MiB   "
            f"coverage {100 * cov:.2f} %   ({'meets' if dt < 5 else 'MISSES'} < 5 s)"
        )


def bench_c() -> None:
    print("(c) neighbour universe, every class, March SS, 1 Mbit")
    for label, setup in (
        ("1,048,576 x 1, layout 1024x1024", Arrangement(1 << 20, layout=(1024, 1024))),
        ("32,768 x 32, layout 1024x32", Arrangement(1 << 15, 32, layout=(1024, 32))),
    ):
        rep, dt, mem = measured(partial(coverage, "March SS", setup, universe="neighbours"))
        print(
            f"    {label:32s} {total(rep):>14,} faults {dt:8.3f} s   peak {mem:7.1f} MiB   "
            f"({'meets' if dt < 30 else 'MISSES'} < 30 s)"
        )
        worst = sorted(rep.classes, key=lambda c: c.coverage)[:3]
        print("        lowest: " + ", ".join(f"{c.cls} {100 * c.coverage:.1f} %" for c in worst))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--quick", action="store_true", help="smaller job for (a) (8 words)")
    args = ap.parse_args()
    bench_a(8 if args.quick else 16)
    bench_b()
    bench_c()
    rss = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"peak resident memory of the whole run: {rss:.0f} MiB")


if __name__ == "__main__":
    main()
