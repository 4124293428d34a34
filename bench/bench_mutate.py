"""Benchmark: ``memcheck mutate`` on example wrappers: kill rate and wall time.

For each wrapper (default: regfile, scratchpad_banked, descriptor_ring) the script runs
``mutate_contract`` with ``--mutants`` mutants (50; all candidates when a wrapper has fewer) and
``--workers`` worker processes (2), the check at its default budget unless ``--examples`` /
``--bulk-examples`` are given, in a fresh scratch folder (builds included). It prints, per wrapper:
candidates, mutants run, killed (of which hung), survived (likely equivalent / possible hole), not
compiled, the kill rate, the kill rate of non-equivalent mutants, the longest minimal trace of a
killed mutant and the wall time, then each survivor's diff line and reason.

Targets (issue 11): kill rate >= 90% of non-equivalent mutants, <= 5 minutes per wrapper with 2
workers. The machine is shared; the figures are wall times of one run.

    .venv/bin/python bench/bench_mutate.py [--wrappers a,b,c] [--mutants N] [--workers N] [--seed S]
                                           [--examples N] [--bulk-examples N]
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

from memcheck.examples import examples_dir
from memcheck.mutation import MutantStatus, MutationReport, mutate_contract
from memcheck.sim import SimOptions

DEFAULT_WRAPPERS = "regfile,scratchpad_banked,descriptor_ring"


def _pct(x: float | None) -> str:
    return "-" if x is None else f"{100 * x:.1f}%"


def _row(name: str, rep: MutationReport, wall: float) -> str:
    hung = sum(1 for o in rep.outcomes if o.how == "hang")
    holes = rep.survived - rep.likely_equivalent
    cycles = [o.cycles for o in rep.outcomes if o.cycles is not None]
    longest = max(cycles) if cycles else "-"
    return (
        f"{name:<20} {rep.candidates:>5} {len(rep.outcomes):>4} {rep.killed:>4} ({hung} hung) "
        f"{rep.survived:>3} ({rep.likely_equivalent} eq/{holes} hole) {rep.not_compiled:>3} "
        f"{_pct(rep.kill_rate):>7} {_pct(rep.kill_rate_non_equivalent):>7} {longest!s:>6} {wall:>8.1f}"
    )


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--wrappers", default=DEFAULT_WRAPPERS)
    ap.add_argument("--mutants", type=int, default=50)
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--examples", type=int, default=None)
    ap.add_argument("--bulk-examples", type=int, default=None)
    args = ap.parse_args()
    opts = SimOptions()
    if args.examples is not None:
        opts = opts.replace(examples=args.examples)
    if args.bulk_examples is not None:
        opts = opts.replace(bulk_examples=args.bulk_examples)
    print(
        f"memcheck mutate benchmark: seed {args.seed}, {args.mutants} mutants, {args.workers} workers, "
        f"check budget {opts.examples} examples + {opts.bulk_examples} bulk examples"
    )
    header = "wrapper              cand.  run kill        surv.              n.c.   rate  non-eq  cyc.   wall s"
    rows = []
    details = []
    for name in args.wrappers.split(","):
        contract = examples_dir() / name / "contract.toml"
        with tempfile.TemporaryDirectory(prefix="bench-mutate-") as tmp:
            t0 = time.perf_counter()
            rep = mutate_contract(
                contract, mutants=args.mutants, seed=args.seed, workers=args.workers, options=opts, out_dir=Path(tmp)
            )
            wall = time.perf_counter() - t0
        rows.append(_row(name, rep, wall))
        print(rows[-1], flush=True)
        for o in rep.outcomes:
            if o.status == MutantStatus.SURVIVED and o.reason is not None:
                details.append(f"{name} {o.ident} line {o.mutant.line}: {o.mutant.description}: {o.reason.label}")
    print()
    print(header)
    print("\n".join(rows))
    if details:
        print("\nsurvivors:")
        print("\n".join(details))


if __name__ == "__main__":
    main()
