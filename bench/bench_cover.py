"""Benchmark: cover points hit by the default check budget on every example wrapper.

Runs a default ``memcheck check`` (default examples, bulk examples and directed examples; fresh
output folder, build included) on each conforming wrapper of ``memcheck/examples`` (``--all`` adds
the buggy twins, whose check stops at the first failure) and prints, per wrapper: the verdict, cover
points hit of those reachable, the holes, directed examples run, the seconds spent counting cover
points inside the simulator process, and the wall time. Target: every reachable point hit on every
conforming example.

    .venv/bin/python bench/bench_cover.py [--seed N] [--all] [--only NAME]
"""

from __future__ import annotations

import argparse
import re
import tempfile
import time
import tomllib
from pathlib import Path

from memcheck.examples import examples_dir
from memcheck.sim import check_contract


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--all", action="store_true", help="also the buggy twins")
    ap.add_argument("--only", help="one example by name")
    args = ap.parse_args()
    root = examples_dir()
    index = tomllib.loads((root / "index.toml").read_text(encoding="utf-8"))["example"]
    chosen = [e for e in index if (args.all or e["expect"] == "pass") and args.only in (None, e["name"])]
    print(f"seed {args.seed}; default budget (examples, bulk examples, directed examples)")
    print(f"{'example':30} {'verdict':8} {'hit':>9} {'directed':>8} {'cover s':>8} {'wall s':>7}  holes")
    all_hit = True
    with tempfile.TemporaryDirectory() as tmp:
        for e in chosen:
            t0 = time.perf_counter()
            res = check_contract(root / e["contract"], seed=args.seed, out_dir=Path(tmp) / e["name"], waveform=False)
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
