"""Measured figures held against what a reader would otherwise assume: published claims and the
universe a figure is over.

* :func:`check_claims`: each fault class a test's source claims, confirmed when the simulation
  detects every instance on this geometry, contradicted otherwise (with the measured figure and one
  escaping instance with its witness), not measured when the class was not simulated.
* :func:`universe_hint`: the ``all`` universe counts every pair of cells, most of them far apart;
  on a bit-interleaved layout a test can do much better there than on physically adjacent cells,
  where real coupling defects sit. When a layout is known, the neighbours figure is measured too and
  a strong difference is reported in one line.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Literal

from memcheck.faults.coverage import CoverageReport, coverage
from memcheck.faults.figures import percent
from memcheck.faults.universe import TWO_CELL_CLASSES

ClaimStatus = Literal["confirmed", "contradicted", "not measured"]
#: Percentage points between the ``all`` and ``neighbours`` figures that earn a hint.
HINT_POINTS = 5.0
#: Largest memory (cells) for which the neighbours figure is measured just for the hint, for orders
#: whose neighbour pairs are walked (``lfsr``, ``gray``, ``complement``); the other orders count them
#: in closed form (:mod:`memcheck.faults.lattice`), at any size.
HINT_MAX_CELLS = 1 << 22
_COUNTED_ORDERS = ("linear", "row-fast", "col-fast")


@dataclass(frozen=True)
class ClaimCheck:
    cls: str
    status: ClaimStatus
    measured: str  # percentage text, "" when not measured
    example: str = ""  # an escaping instance and its witness, for a contradicted claim

    def describe(self) -> str:
        if self.status == "confirmed":
            return f"claimed {self.cls} - measured 100%: confirmed"
        if self.status == "not measured":
            return f"claimed {self.cls} - not measured (class not simulated)"
        return f"claimed {self.cls} - measured {self.measured}%: contradicted; see escapes" + (
            f" (e.g. {self.example})" if self.example else ""
        )


def check_claims(report: CoverageReport, claims: Sequence[str]) -> list[ClaimCheck]:
    """One :class:`ClaimCheck` per claimed class, in claim order."""
    measured = {c.cls: c for c in report.classes}
    out = []
    for cls in claims:
        c = measured.get(cls)
        if c is None or c.faults == 0:
            out.append(ClaimCheck(cls, "not measured", ""))
        elif c.detected == c.faults:
            out.append(ClaimCheck(cls, "confirmed", "100"))
        else:
            example = next((g.example for g in report.escapes if g.cls == cls and g.example is not None), None)
            text = "" if example is None else example.describe(report.test)
            out.append(ClaimCheck(cls, "contradicted", percent(c.detected, c.faults), text))
    return out


def universe_hint(report: CoverageReport) -> str | None:
    """One line when the ``all`` figure of a two-cell or decoder class differs from the
    ``neighbours`` figure by at least :data:`HINT_POINTS` (needs a layout; None otherwise)."""
    setup = report.setup
    if report.universe.kind != "all" or setup.layout is None:
        return None
    if setup.cells > HINT_MAX_CELLS and setup.order not in _COUNTED_ORDERS:
        return None
    classes = [c.cls for c in report.classes if c.cls in (*TWO_CELL_CLASSES, "AF") and c.faults]
    if not classes:
        return None
    near = coverage(report.test, setup, classes=classes, universe="neighbours")
    diffs = []
    for cls in classes:
        a, n = report[cls], near[cls]
        if abs(100 * (a.coverage - n.coverage)) >= HINT_POINTS:
            diffs.append(f"{cls} {percent(n.detected, n.faults)}% (here {percent(a.detected, a.faults)}%)")
    if not diffs:
        return None
    return (
        "hint: between physically adjacent cells (--universe neighbours, layout "
        f"{setup.layout[0]}x{setup.layout[1]}) {report.label} measures " + ", ".join(diffs) + "; the all universe "
        "counts mostly far-apart cell pairs, while coupling defects sit between neighbours (docs/faults.md)"
    )
