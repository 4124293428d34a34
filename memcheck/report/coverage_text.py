"""The coverage table of a check's text report: every cover point with its hit count, holes first."""

from __future__ import annotations

from memcheck.cover import Coverage

_CHECKED = {"yes": "checked", "partly": "partly checked", "no": "exercised only"}


def render_coverage(coverage: Coverage) -> str:
    """A table of hits, whether the contract makes the point checkable, scope and point; holes first.

    A point marked "exercised only" is driven but the contract leaves its result unknown, so nothing
    about it is compared; its note says why."""
    rows = [("hits", "result", "scope", "cover point")]
    notes: list[str] = []
    for r in coverage.ordered():
        p = r.point
        what = p.what
        if r.missing:
            what += f" (never: {', '.join(r.missing)})"
        if p.note:
            what += f" [{p.note}]"
        rows.append(("HOLE" if r.hole else str(r.hits), _CHECKED[p.checked], p.scope, what))
    widths = [max(len(row[i]) for row in rows) for i in range(3)]
    lines = [f"Coverage: {coverage.summary()} (holes first)"]
    for row in rows:
        lines.append("  " + "  ".join(cell.ljust(widths[i]) for i, cell in enumerate(row[:3])) + "  " + row[3])
    return "\n".join(lines + notes)
