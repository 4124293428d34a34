"""Benchmark: the example wrappers in CI, three ways, wall time.

1. one ``memcheck check CONTRACT`` after another (the sum of the single runs);
2. ``memcheck check A.toml B.toml ... -j J`` (one command, J worker processes);
3. ``pytest -n J`` with the memcheck pytest plugin (``memcheck_contracts = rtl/**/contract.toml``).

Each way starts from a fresh copy of ``memcheck/examples`` in a temporary folder, so every build is
included and none is shared between the ways; every run uses the same seed and budget. Printed: the
wall time of each single run, the sum, the wall times of ways 2 and 3 and their ratio to the sum
(target: at most 0.60 with ``-j 2`` on a 2-core machine), the verdict counts of each way (they must
agree) and the load average before and after (the machine may be shared).

    .venv/bin/python bench/bench_ci.py [--jobs 2] [--examples N] [--bulk-examples N] [--seed N]
"""

from __future__ import annotations

import argparse
import json
import os
import shutil
import subprocess
import sys
import tempfile
import time
import tomllib
import xml.etree.ElementTree as ET
from pathlib import Path

from memcheck.examples import examples_dir

BIN = Path(sys.executable).parent
TARGET = 0.60


def _project(root: Path) -> list[str]:
    """A fresh copy of the examples under ``root/rtl``; the contract paths, relative to ``root``."""
    shutil.copytree(examples_dir(), root / "rtl", ignore=shutil.ignore_patterns("__pycache__", "*.py"))
    index = tomllib.loads((root / "rtl" / "index.toml").read_text(encoding="utf-8"))["example"]
    return [f"rtl/{e['contract']}" for e in index]


def _timed(cmd: list[str], cwd: Path) -> tuple[float, subprocess.CompletedProcess[str]]:
    t0 = time.perf_counter()
    proc = subprocess.run(cmd, cwd=cwd, capture_output=True, text=True, check=False)
    return time.perf_counter() - t0, proc


def singles(budget: list[str], work: Path) -> tuple[float, dict[str, int]]:
    root = work / "single"
    contracts = _project(root)
    total = 0.0
    counts = {"pass": 0, "fail": 0, "error": 0}
    for c in contracts:
        seconds, proc = _timed([str(BIN / "memcheck"), "check", c, "-q", *budget], root)
        verdict = {0: "pass", 1: "fail"}.get(proc.returncode, "error")
        counts[verdict] += 1
        total += seconds
        print(f"  {c:<50} {verdict:<5} {seconds:7.1f} s", flush=True)
    return total, counts


def many(budget: list[str], jobs: int, work: Path) -> tuple[float, dict[str, int]]:
    root = work / "many"
    contracts = _project(root)
    cmd = [str(BIN / "memcheck"), "check", *contracts, "-j", str(jobs), "-q", "--json", "r.json", *budget]
    seconds, _ = _timed(cmd, root)
    counts: dict[str, int] = json.loads((root / "r.json").read_text(encoding="utf-8"))["counts"]
    return seconds, counts


def plugin(budget: list[str], jobs: int, work: Path) -> tuple[float, dict[str, int]]:
    root = work / "pytest"
    _project(root)
    (root / "pytest.ini").write_text("[pytest]\nmemcheck_contracts = rtl/**/contract.toml\n", encoding="utf-8")
    opts = ["--memcheck-" + a[2:] if a.startswith("--") else a for a in budget]
    cmd = [sys.executable, "-m", "pytest", "-n", str(jobs), "-q", "-p", "no:cacheprovider", "--junitxml", "r.xml"]
    seconds, _ = _timed([*cmd, "rtl", *opts], root)
    suite = ET.parse(root / "r.xml").getroot()[0]
    n = {k: int(suite.get(k, "0")) for k in ("tests", "failures", "errors", "skipped")}
    return seconds, {
        "pass": n["tests"] - n["failures"] - n["errors"] - n["skipped"],
        "fail": n["failures"],
        "error": n["errors"],
    }


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--jobs", type=int, default=2)
    ap.add_argument("--examples", type=int, default=100)
    ap.add_argument("--bulk-examples", type=int, default=20)
    ap.add_argument("--seed", type=int, default=1)
    args = ap.parse_args()
    budget = ["--examples", str(args.examples), "--bulk-examples", str(args.bulk_examples), "--seed", str(args.seed)]
    print(
        f"bench_ci: {args.examples} examples, {args.bulk_examples} bulk examples, seed {args.seed}, "
        f"-j {args.jobs}; {os.cpu_count()} processors; load average before {os.getloadavg()[0]:.2f}"
    )
    with tempfile.TemporaryDirectory(prefix="bench_ci_") as tmp:
        work = Path(tmp)
        print("single runs, one after another:")
        total, single_counts = singles(budget, work)
        print(f"sum of single runs: {total:.1f} s; verdicts {single_counts}")
        t_many, many_counts = many(budget, args.jobs, work)
        print(
            f"memcheck check (all contracts) -j {args.jobs}: {t_many:.1f} s = {t_many / total:.2f} of the sum; "
            f"{many_counts}"
        )
        t_py, py_counts = plugin(budget, args.jobs, work)
        print(f"pytest -n {args.jobs} with the plugin: {t_py:.1f} s = {t_py / total:.2f} of the sum; {py_counts}")
    ok = max(t_many, t_py) / total <= TARGET
    print(f"target: each at most {TARGET:.2f} of the sum -> {'met' if ok else 'NOT met'}")
    print(f"verdicts agree: {single_counts == many_counts == py_counts}; load average after {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
