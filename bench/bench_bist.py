"""Benchmark: the generated March BIST engine of every library algorithm on a 1K x 32 memory.

For each algorithm prints the stream length (operations per run), the cycles of one run
(operations + pause cycles + READ_LATENCY + 1; solid background, READ_LATENCY 1, 100 cycles per
delay element), the cell count after Yosys' generic synthesis (``synth``) for the linear order with
the solid background and for the lfsr order with the standard backgrounds, and the wall time of
generation + Verilator lint + Yosys synthesis of the first engine. Every engine must be lint clean
and latch free; the script says so when one is not.

    .venv/bin/python bench/bench_bist.py [--words N] [--width W] [--algorithms "MATS+,March C-"]
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

from memcheck._atomic import write_text_atomic
from memcheck.bist.lint import lint_file
from memcheck.bist.microcode import plan_engine
from memcheck.bist.verilog import engine_verilog
from memcheck.march import algorithm_names


def measure(name: str, words: int, width: int, order: str, backgrounds: str, work: Path) -> tuple[int, int, int, float]:
    """(operations, cycles, cells, seconds for generate + lint + synthesis) of one engine."""
    t0 = time.perf_counter()
    plan = plan_engine(name, words, width, order=order, backgrounds=backgrounds, seed=1, pause_cycles=100)
    path = write_text_atomic(work / f"{plan.module}.v", engine_verilog(plan))
    report = lint_file(path)
    seconds = time.perf_counter() - t0
    if not report.clean:
        print(f"  NOT CLEAN: {name} {order} {backgrounds}\n{report.render()}")
    return plan.operations, plan.cycles(), report.cells, seconds


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--words", type=int, default=1024)
    ap.add_argument("--width", type=int, default=32)
    ap.add_argument("--algorithms", default=",".join(algorithm_names()))
    args = ap.parse_args()
    names = [a.strip() for a in args.algorithms.split(",") if a.strip()]
    print(f"BIST engines for {args.words} x {args.width} (READ_LATENCY 1, 100 cycles per delay element)")
    cols = ("stream ops", 10), ("cycles", 8), ("cells lin/solid", 15), ("cells lfsr/std", 14), ("gen+lint+synth s", 16)
    print(f"{'algorithm':<10} " + " ".join(f"{c:>{w}}" for c, w in cols))
    total = 0.0
    with tempfile.TemporaryDirectory(prefix="bench-bist-") as tmp:
        work = Path(tmp)
        for name in names:
            ops, cycles, cells, secs = measure(name, args.words, args.width, "linear", "solid", work)
            _, _, cells_std, secs2 = measure(name, args.words, args.width, "lfsr", "standard", work)
            total += secs + secs2
            print(f"{name:<10} {ops:>10} {cycles:>8} {cells:>15} {cells_std:>14} {secs:>16.2f}")
    print(f"total wall time {total:.1f} s for {2 * len(names)} engines (shared machine; figures vary with load)")


if __name__ == "__main__":
    main()
