"""A bitmap picture of the array with the failing cells marked (PNG, written atomically).

With a layout of R rows x C column-mux words, word ``w`` sits at row ``w // C`` and bit ``b`` at
physical column ``b * C + w % C`` (as in :mod:`memcheck.faults.universe`); without one, the picture
is words (rows) x bits (columns).
"""

from __future__ import annotations

import io
from collections.abc import Sequence
from pathlib import Path

from memcheck._atomic import write_bytes_atomic
from memcheck.faults.geometry import Arrangement
from memcheck.faults.instances import Cell


def position(cell: Cell, setup: Arrangement) -> tuple[int, int]:
    """(row, column) of ``cell`` in the picture."""
    if setup.layout is None:
        return cell.word, cell.bit
    cols = setup.layout[1]
    return cell.word // cols, cell.bit * cols + cell.word % cols


def plot_bitmap(cells: Sequence[Cell], setup: Arrangement, path: str | Path, title: str = "") -> Path:
    """Write the array picture with ``cells`` marked; returns the path."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    from matplotlib.patches import Rectangle
    from matplotlib.ticker import MaxNLocator

    rows, cols = (
        (setup.words, setup.width) if setup.layout is None else (setup.layout[0], setup.layout[1] * setup.width)
    )
    fig, ax = plt.subplots(figsize=(7.0, 7.0), dpi=110)
    ax.add_patch(Rectangle((-0.5, -0.5), cols, rows, facecolor="#eeeeee", edgecolor="grey", linewidth=0.8))
    pts = [position(c, setup) for c in cells]
    if pts:
        size = max(4.0, min(80.0, 40000.0 / max(rows, cols)))
        ax.scatter([p[1] for p in pts], [p[0] for p in pts], s=size, marker="s", color="crimson", label="failing cell")
        ax.legend(loc="upper right", fontsize=8)
    ax.set_xlim(-0.5 - cols * 0.02, cols - 0.5 + cols * 0.02)
    ax.set_ylim(rows - 0.5 + rows * 0.02, -0.5 - rows * 0.02)
    ax.set_xlabel("physical column" if setup.layout else "bit")
    ax.set_ylabel("row" if setup.layout else "word")
    ax.set_aspect("auto")
    ax.xaxis.set_major_locator(MaxNLocator(integer=True))
    ax.yaxis.set_major_locator(MaxNLocator(integer=True))
    ax.set_title(title or f"{len(cells)} failing cell(s) in {rows} x {cols} cells", fontsize=10)
    fig.tight_layout()
    buf = io.BytesIO()
    target = Path(path)
    fig.savefig(buf, format=(target.suffix.lstrip(".") or "png"))
    plt.close(fig)
    return write_bytes_atomic(target, buf.getvalue())
