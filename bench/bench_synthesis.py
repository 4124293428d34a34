"""Search time of `memcheck march synthesize` for the known targets on a 64-word bit-oriented memory,
and the all-static-faults search against March SS (22n).

    .venv/bin/python bench/bench_synthesis.py [--static-limit SECONDS] [--skip-static]

Targets: the 4n/5n/6n/6n cases <= 10 s each, the 10n case <= 10 minutes (2-core machine, shared).
Prints figures; never a timed test.
"""

from __future__ import annotations

import argparse
import time

from memcheck.synthesis import synthesize

TARGETS = [
    ("SAF", 4, "MATS"),
    ("SAF,AF", 5, "MATS+"),
    ("SAF,AF,TF", 6, "MATS++"),
    ("SAF,AF,TF,CFin", 6, "March X"),
    ("SAF,AF,TF,CFin,CFid,CFst", 10, "March C-"),
]
ALL_STATIC = "SAF,TF,WDF,RDF,DRDF,IRF,CFst,CFds,CFtr,CFwd,CFrd,CFdrd,CFir"
# Classes of ALL_STATIC whose exact search finishes further: its proven minimum bounds ALL_STATIC's below.
LOWER_BOUND_SUBSET = "SAF,TF,RDF,DRDF,IRF,CFst,CFds"


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--static-limit", type=float, default=600.0, help="time limit of the all-static search (s)")
    ap.add_argument("--skip-static", action="store_true")
    ap.add_argument("--subset-limit", type=float, default=0.0, help="time limit of the lower-bound subset search")
    args = ap.parse_args()
    print(f"{'classes':<28} {'found':>6} {'known':>6}  {'seconds':>8}  test")
    for classes, known, name in TARGETS:
        t0 = time.perf_counter()
        r = synthesize(classes, words=64)
        dt = time.perf_counter() - t0
        test = r.test.to_unicode() if r.test else "-"
        print(f"{classes:<28} {r.length or '-':>5}n {known:>5}n  {dt:8.2f}  {test}   (known: {name})")
    if args.skip_static:
        return
    t0 = time.perf_counter()
    r = synthesize(ALL_STATIC, words=64, max_length=22, time_limit=args.static_limit)
    dt = time.perf_counter() - t0
    p = r.proof
    print(f"\nall static single- and two-cell faults ({ALL_STATIC}), time limit {args.static_limit:.0f} s:")
    if r.test is not None:
        status = "proven shortest" if r.minimal else f"found by the {r.found_by}, not proven shortest"
        print(f"  shortest found: {r.length}n ({status}) {r.test.to_unicode()} in {dt:.1f} s")
        print("  against March SS 22n and March MSS 18n (library lengths)")
    else:
        print(f"  no test found (cut by: {p.cut_by or 'max length 22'}) in {dt:.1f} s")
    if p.cut_by is not None:
        print(f"  the {p.cut_by} cut the exact search: no test of length <= {p.complete_below - 1} exists")
        if r.fallback is not None:
            print(f"  shortest library test that detects them: {r.fallback.name} {r.fallback.length}n")
    if r.beam is not None:
        print(f"  beam search: {r.beam.length or '-'}n in {r.beam.seconds:.1f} s (width {r.beam.width})")
    print(f"  distinct states per length: {list(p.states_per_length)}")
    if args.subset_limit > 0:
        t0 = time.perf_counter()
        s = synthesize(LOWER_BOUND_SUBSET, words=64, max_length=22, time_limit=args.subset_limit)
        print(
            f"\nlower bound from the subset {LOWER_BOUND_SUBSET}: no test of length <= "
            f"{s.proof.complete_below - 1} exists (exact search, {time.perf_counter() - t0:.1f} s, cut by: "
            f"{s.proof.cut_by or 'nothing'}; states per length {list(s.proof.states_per_length)})"
        )


if __name__ == "__main__":
    main()
