"""Text of ``march coverage``: per-class tables, compare tables, escapes and claims, all figures
through :mod:`memcheck.faults.figures` (100 only when nothing escapes, 0 only when nothing is
detected; intervals with enough digits to show their bounds)."""

from __future__ import annotations

import contextlib
import textwrap

from memcheck.cli._tables import Grid
from memcheck.errors import FaultModelError, UnknownAlgorithm
from memcheck.faults.coverage import ClassCoverage, CoverageReport
from memcheck.faults.figures import interval, percent
from memcheck.faults.primitives import model_named
from memcheck.march.library import get_algorithm
from memcheck.march.notation import MarchTest
from memcheck.march.userlib import UserTest, find_user_test


def coverage_text(c: ClassCoverage) -> str:
    return percent(c.detected, c.faults)


def ci_text(c: ClassCoverage) -> str:
    return "" if c.ci95 is None else interval(*c.ci95)


def class_grid(rep: CoverageReport) -> Grid:
    """instances, detected, escaped, partial, coverage % (and the 95% interval of a sample)."""
    sample = rep.universe.kind == "sample"
    header = ("class", "instances", "detected", "escaped", "partial", "coverage %") + (("95% CI",) if sample else ())
    rows = []
    for c in rep.classes:
        row = (c.cls, f"{c.faults:,}", f"{c.detected:,}", f"{c.escaped:,}", f"{c.partial:,}", coverage_text(c))
        rows.append(row + ((ci_text(c),) if sample else ()))
    return Grid(header, tuple(rows), (False, *([True] * (len(header) - 1))))


def test_heading(rep: CoverageReport) -> str:
    return f"{rep.label} ({rep.test.length}n)"


def compare_grid(reports: list[CoverageReport]) -> Grid:
    """Classes as rows, tests as columns (transposed to tests as rows when too wide); a cell is the
    coverage, the share detected only from some power-up states in brackets, and a sample's interval."""
    rows = []
    for i, c in enumerate(reports[0].classes):
        cells = []
        for r in reports:
            rc = r.classes[i]
            text = coverage_text(rc)
            if rc.partial and rc.faults:
                text += f" ({percent(rc.partial, rc.faults)})"
            if rc.ci95 is not None:
                text += f" [{ci_text(rc)}]"
            cells.append(text)
        rows.append((c.cls, *cells))
    header = ("class", *(test_heading(r) for r in reports))
    return Grid(header, tuple(rows), (False, *([True] * len(reports))), transposable=True)


def escape_lines(rep: CoverageReport, limit: int, width: int = 100) -> list[str]:
    """The fault models that escape, each with one example and the witness of why."""
    groups = list(rep.escapes)
    if not groups or limit <= 0:
        return []
    lines = [
        f"Escapes: {len(groups)} fault model(s) are not always detected"
        + (f" (first {limit} shown; --escapes N for more)" if len(groups) > limit else "")
        + ":"
    ]
    for g in groups[:limit]:
        notation = ""
        with contextlib.suppress(FaultModelError):
            notation = " " + model_named(g.model).notation
        where = "" if g.scope == "-" else f", {g.scope}"
        lines.append(
            f"  {g.cls} {g.model}{notation}{where}: {g.escaped:,} escaped, {g.partial:,} detected only "
            "from some power-up states"
        )
        if g.example is not None:
            texts = [f"e.g. {g.example.fault.describe()}"]
            if g.example.witness is not None:
                texts.append(g.example.witness.describe(rep.test))
            lines += [textwrap.fill(t, width, initial_indent="    ", subsequent_indent="      ") for t in texts]
    return lines


def claims_of(test: MarchTest, library: tuple[UserTest, ...] = ()) -> tuple[str, ...]:
    """The classes the test's source claims: a published entry's, or a user-library entry's."""
    if not test.name:
        return ()
    user = find_user_test(test.name, library)
    if user is not None:
        return user.claims
    try:
        alg = get_algorithm(test.name)
    except UnknownAlgorithm:
        return ()
    return alg.claims if alg.test == test else ()
