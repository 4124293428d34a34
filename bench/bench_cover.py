"""Benchmark: cover points hit by the default check budget on every example wrapper.

Runs a default ``memcheck check`` (default examples, bulk examples and directed examples; fresh
output folder, build included) on each conforming wrapper of ``memcheck/examples`` (``--all`` adds
the buggy twins, whose check stops at the first failure) and prints, per wrapper: the verdict, cover
points hit of those reachable, the holes, directed examples run, the seconds spent counting cover
points inside the simulator process, and the wall time. Target: every reachable point hit on every
conforming example.

    .venv/bin/python bench/bench_cover.py [--seed N] [--all] [--only NAME]
        [--examples N] [--bulk-examples N] [--directed-examples N] [--phases LIST]

With a tiny budget (``--phases property --examples 5 --bulk-examples 0``) it shows the directed
examples closing the holes the random examples leave (compare ``--directed-examples 0``).
"""

from __future__ import annotations

import argparse
import re
import tempfile
import time
import tomllib
from pathlib import Path

from memcheck.examples import examples_dir
from memcheck.sim import SimOptions, check_contract


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--all", action="store_true", help="also the buggy twins")
    ap.add_argument("--only", help="one example by name")
    ap.add_argument("--examples", type=int, help="short examples (default: the check's)")
    ap.add_argument("--bulk-examples", type=int, help="bulk examples (default: the check's)")
    ap.add_argument("--directed-examples", type=int, help="directed examples (default: the check's)")
    ap.add_argument("--phases", help="phases, comma separated (default: all)")
    args = ap.parse_args()
    budget: dict[str, object] = {
        k: v
        for k, v in (
            ("examples", args.examples),
            ("bulk_examples", args.bulk_examples),
            ("directed_examples", args.directed_examples),
            ("phases", None if args.phases is None else tuple(args.phases.split(","))),
        )
        if v is not None
    }
    root = examples_dir()
    index = tomllib.loads((root / "index.toml").read_text(encoding="utf-8"))["example"]
    chosen = [e for e in index if (args.all or e["expect"] == "pass") and args.only in (None, e["name"])]
    print(f"seed {args.seed}; budget: {budget or 'the default (examples, bulk examples, directed examples)'}")
    print(f"{'example':30} {'verdict':8} {'hit':>9} {'directed':>8} {'cover s':>8} {'wall s':>7}  holes")
    all_hit = True
    # Wall time includes the build and the sweep; "cover s" is the time spent counting points.
    with tempfile.TemporaryDirectory() as tmp:
        for e in chosen:
            t0 = time.perf_counter()
            out = Path(tmp) / e["name"]
            opts = SimOptions().replace(seed=args.seed, out_dir=out, waveform=False, **budget)
            res = check_contract(root / e["contract"], opts)
            wall = time.perf_counter() - t0
            cov = res.coverage
            assert cov is not None
            prop = next((p for p in res.phases if p.name == "property"), None)
            found = re.search(r"(\d+) directed examples", prop.detail if prop else "")
            directed = found.group(1) if found else "0"
            cover_s = float(str(res.extra.get("seconds_coverage", 0.0)))
            holes = ", ".join(h.point.key for h in cov.holes) or "-"
            all_hit = all_hit and (not cov.holes or e["expect"] != "pass")
            print(
                f"{e['name']:30} {res.verdict!s:8} {f'{cov.hit}/{cov.total}':>9} {directed:>8} "
                f"{cover_s:8.2f} {wall:7.1f}  {holes}"
            )
    print("every reachable point hit on every conforming example" if all_hit else "holes left (see above)")


if __name__ == "__main__":
    main()
