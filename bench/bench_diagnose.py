"""Diagnosis benchmark: a 1 Mbit memory with 10 failing read operations (target <= 10 s).

The fail log comes from five injected stuck-at-0 cells under March C- (two failing reads each,
predicted by :mod:`memcheck.diagnose.predict`); the same job is timed on a bit-oriented
1,048,576 x 1 memory (1024 x 1024 layout) and a word-oriented 16,384 x 64 one (512 x 32 layout).

Run: .venv/bin/python bench/bench_diagnose.py
"""

from __future__ import annotations

import resource
import time

from memcheck.diagnose import FailRow, diagnose
from memcheck.diagnose.predict import collect, fault_words, predict
from memcheck.faults.geometry import Arrangement
from memcheck.faults.instances import Cell, CellFault
from memcheck.faults.primitives import model_named
from memcheck.march.library import resolve_test

TARGET_S = 10.0


def _log(setup: Arrangement, cells: list[Cell]) -> list[FailRow]:
    test = resolve_test("March C-")
    faults = [CellFault(model_named("SA0"), c) for c in cells]
    events = collect(test, setup, {c.word for c in cells})
    rows = [r for f in faults for r in predict(f, events.of(fault_words(f)), setup.width)[0]]
    return sorted(rows, key=lambda r: (r.background, r.element, r.address))


def main() -> None:
    test = resolve_test("March C-")
    for label, setup in (
        ("1,048,576 x 1, layout 1024x1024", Arrangement(1 << 20, 1, layout=(1024, 1024), backgrounds="solid")),
        ("16,384 x 64, layout 512x32", Arrangement(1 << 14, 64, layout=(512, 32), backgrounds="solid")),
    ):
        w = setup.words
        cells = [Cell(w // 7, 0), Cell(w // 3, 0), Cell(w // 2 + 5, setup.width - 1), Cell(w - 9, 0), Cell(123, 0)]
        rows = _log(setup, cells)
        t0 = time.perf_counter()
        d = diagnose(test, setup, rows)
        dt = time.perf_counter() - t0
        top = d.top[0]
        print(
            f"diagnose March C- on {label} ({setup.cells:,} bits), {len(rows)} failing reads: "
            f"{dt:.2f} s (target <= {TARGET_S:.0f} s: {'met' if dt <= TARGET_S else 'MISSED'}); "
            f"{d.candidates:,} candidates, {len(d.groups)} groups explain something, "
            f"best similarity {top.similarity:.2f} ({', '.join(sorted({m.cls for m in top.members}))})"
        )
    peak = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    print(f"peak resident memory {peak:.0f} MiB")


if __name__ == "__main__":
    main()
