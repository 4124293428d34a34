"""Grouped bar chart of coverage per fault class, one bar per test, readable without the table.

Solid bars are guaranteed detections; the hatched extension on top is "detected only from some
power-up states"; sample universes get Wilson 95% error bars. Bar labels follow
:mod:`memcheck.faults.figures` (100 only when nothing escapes, 0 only when nothing is detected).
"""

from __future__ import annotations

import io
from collections.abc import Sequence
from pathlib import Path

from memcheck._atomic import write_bytes_atomic
from memcheck.faults.coverage import DISCLAIMER, CoverageReport
from memcheck.faults.figures import percent


def plot_coverage(reports: Sequence[CoverageReport], path: str | Path) -> Path:
    """Write a PNG (or any format matplotlib knows from the suffix) atomically; returns the path."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    from matplotlib.patches import Patch

    classes = [c.cls for c in reports[0].classes]
    n = len(reports)
    width = 0.8 / n
    fig, ax = plt.subplots(figsize=(min(18.0, max(8.0, 0.45 * len(classes) * (1 + 0.35 * (n - 1)) + 2)), 5.2), dpi=110)
    colors = plt.get_cmap("tab10")
    for i, rep in enumerate(reports):
        xs = [j + (i - (n - 1) / 2) * width for j in range(len(classes))]
        det = [100 * rep[c].coverage for c in classes]
        part = [100 * rep[c].partial / rep[c].faults if rep[c].faults else 0.0 for c in classes]
        color = colors(i % 10)
        ax.bar(xs, det, width * 0.95, color=color, label=f"{rep.label} ({rep.test.length}n)")
        ax.bar(xs, part, width * 0.95, bottom=det, color="white", edgecolor=color, hatch="///", linewidth=0.6)
        if rep.universe.kind == "sample":
            lo = [max(0.0, det[j] - 100 * (rep[c].ci95 or (0, 0))[0]) for j, c in enumerate(classes)]
            hi = [max(0.0, 100 * (rep[c].ci95 or (0, 0))[1] - det[j]) for j, c in enumerate(classes)]
            ax.errorbar(xs, det, yerr=[lo, hi], fmt="none", ecolor="black", elinewidth=0.8, capsize=2)
        labels = [percent(rep[c].detected, rep[c].faults) for c in classes]
        for x, d, p, label in zip(xs, det, part, labels, strict=True):
            ax.text(
                x,
                min(d + p, 100) + 1.5,
                label,
                ha="center",
                va="bottom",
                fontsize=6.5,
                rotation=90 if n > 2 else 0,
            )
    handles, _ = ax.get_legend_handles_labels()
    handles.append(
        Patch(facecolor="white", edgecolor="grey", hatch="///", label="detected only from some power-up states")
    )
    s = reports[0].setup
    layout = f", layout {s.layout[0]}x{s.layout[1]}" if s.layout else ""
    ax.set_title(
        f"Fault coverage, {s.words} words x {s.width} bit{'s' if s.width > 1 else ''}{layout}, "
        f"{s.order} order, backgrounds {', '.join(reports[0].backgrounds)}, "
        f"universe {reports[0].universe.label}",
        fontsize=10,
    )
    ax.set_xticks(range(len(classes)), classes, rotation=45, ha="right")
    ax.set_ylabel("guaranteed detection (% of instances)")
    ax.set_ylim(0, 118)
    ax.axhline(100, color="grey", linewidth=0.5, linestyle=":")
    ax.legend(handles=handles, fontsize=8, loc="upper left", ncol=min(n + 1, 4), frameon=False)
    fig.text(0.01, 0.01, DISCLAIMER, fontsize=6.5, color="dimgray", wrap=True)
    fig.tight_layout(rect=(0, 0.04, 1, 1))
    target = Path(path)
    buf = io.BytesIO()
    fig.savefig(buf, format=(target.suffix.lstrip(".") or "png"))
    plt.close(fig)
    return write_bytes_atomic(target, buf.getvalue())
