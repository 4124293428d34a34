"""Plain tables that fit the terminal, or go into a test plan as CSV or Markdown.

A :class:`Grid` is a header row and text rows. :func:`render` draws it for ``--format text`` within
the terminal width (``COLUMNS`` wins, as :func:`shutil.get_terminal_size` reads it): a table wider
than that is first transposed when :attr:`Grid.transposable` (a compare table then has tests as
rows), and what is still too wide is cut into column blocks, each repeating the first column, so no
cell is ever shortened. ``csv`` and ``markdown`` give the whole table, unwrapped.
"""

from __future__ import annotations

import csv
import io
import shutil
from collections.abc import Sequence
from dataclasses import dataclass

from memcheck.errors import UsageError

TABLE_FORMATS: tuple[str, ...] = ("text", "csv", "markdown")
_GAP = "  "


@dataclass(frozen=True)
class Grid:
    """Header and rows of text; ``right[i]`` right-aligns column ``i`` (numbers)."""

    header: tuple[str, ...]
    rows: tuple[tuple[str, ...], ...]
    right: tuple[bool, ...] = ()
    transposable: bool = False

    def transposed(self) -> Grid:
        cols = [self.header, *self.rows]
        header = tuple(c[0] for c in cols)
        rows = tuple(tuple(c[i] for c in cols) for i in range(1, len(self.header)))
        return Grid(header, rows, (False, *([True] * (len(header) - 1))), False)


def terminal_width() -> int:
    """The terminal's width in columns (``COLUMNS`` honoured; 100 when there is no terminal)."""
    return max(20, shutil.get_terminal_size((100, 24)).columns)


def _widths(g: Grid) -> list[int]:
    return [max(len(r[i]) for r in (g.header, *g.rows)) for i in range(len(g.header))]


def _line(cells: Sequence[str], widths: Sequence[int], right: Sequence[bool]) -> str:
    out = []
    for i, (c, w) in enumerate(zip(cells, widths, strict=True)):
        out.append(c.rjust(w) if i < len(right) and right[i] else c.ljust(w))
    return _GAP.join(out).rstrip()


def _blocks(widths: Sequence[int], limit: int) -> list[list[int]]:
    """Column indices per block: column 0 in every block, then as many as fit."""
    blocks: list[list[int]] = []
    cur = [0]
    used = widths[0]
    for i in range(1, len(widths)):
        if len(cur) > 1 and used + len(_GAP) + widths[i] > limit:
            blocks.append(cur)
            cur, used = [0], widths[0]
        cur.append(i)
        used += len(_GAP) + widths[i]
    blocks.append(cur)
    return blocks


def _text(g: Grid, limit: int) -> str:
    widths = _widths(g)
    if sum(widths) + len(_GAP) * (len(widths) - 1) > limit and g.transposable:
        g = g.transposed()
        widths = _widths(g)
    parts = []
    for block in _blocks(widths, limit):
        w = [widths[i] for i in block]
        right = [i < len(g.right) and g.right[i] for i in block]
        lines = [_line([g.header[i] for i in block], w, right), _GAP.join("-" * x for x in w)]
        lines += [_line([r[i] for i in block], w, right) for r in g.rows]
        parts.append("\n".join(lines))
    return "\n\n".join(parts)


def _markdown(g: Grid) -> str:
    def esc(c: str) -> str:
        return c.replace("|", "\\|")

    lines = ["| " + " | ".join(esc(c) for c in g.header) + " |"]
    lines.append(
        "|" + "|".join(("---:" if i < len(g.right) and g.right[i] else "---") for i in range(len(g.header))) + "|"
    )
    lines += ["| " + " | ".join(esc(c) for c in r) + " |" for r in g.rows]
    return "\n".join(lines)


def render(g: Grid, fmt: str = "text", width: int | None = None) -> str:
    """The table as ``text`` (fits ``width``, default the terminal's), ``csv`` or ``markdown``."""
    if fmt == "csv":
        buf = io.StringIO()
        writer = csv.writer(buf, lineterminator="\n")
        writer.writerow(g.header)
        writer.writerows(g.rows)
        return buf.getvalue().rstrip("\n")
    if fmt == "markdown":
        return _markdown(g)
    if fmt == "text":
        return _text(g, terminal_width() if width is None else width)
    raise UsageError(f"unknown table format {fmt!r}; choose one of {', '.join(TABLE_FORMATS)}")
