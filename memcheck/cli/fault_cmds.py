"""``memcheck march coverage`` (alias ``memcheck coverage``): which faults a March test detects on a
given memory, and why some escape."""

from __future__ import annotations

import contextlib
import json
import textwrap

import click
from rich.console import Console
from rich.table import Table

from memcheck._atomic import write_text_atomic
from memcheck.cli import cli
from memcheck.cli._options import add_hidden_alias, address_order_options, resolve_seed, seed_option
from memcheck.cli.march_cmds import layout_and_words, march_group
from memcheck.errors import FaultModelError, UsageError
from memcheck.faults.coverage import DISCLAIMER, CoverageReport, coverage
from memcheck.faults.geometry import Arrangement
from memcheck.faults.primitives import model_named
from memcheck.faults.universe import CLASSES, parse_classes, parse_universe


def _pct(x: float) -> str:
    return f"{100 * x:.1f}"


def _class_table(rep: CoverageReport) -> Table:
    sample = rep.universe.kind == "sample"
    t = Table()
    for col in ("class", "instances", "detected", "escaped", "partial", "coverage %") + (("95% CI",) if sample else ()):
        t.add_column(col, justify="left" if col == "class" else "right")
    for c in rep.classes:
        row = [c.cls, f"{c.faults:,}", f"{c.detected:,}", f"{c.escaped:,}", f"{c.partial:,}", _pct(c.coverage)]
        if sample:
            lo, hi = c.ci95 or (0.0, 1.0)
            row.append(f"{_pct(lo)}-{_pct(hi)}")
        style = None if c.coverage == 1.0 else ("yellow" if c.coverage > 0 else "red")
        t.add_row(*row, style=style)
    return t


def _escape_lines(rep: CoverageReport, limit: int) -> list[str]:
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
            lines.append(
                textwrap.fill(
                    f"e.g. {g.example.fault.describe()}", 100, initial_indent="    ", subsequent_indent="      "
                )
            )
            if g.example.witness is not None:
                lines.append(
                    textwrap.fill(
                        g.example.witness.describe(rep.test), 100, initial_indent="    ", subsequent_indent="      "
                    )
                )
    return lines


def _compare_table(reports: list[CoverageReport]) -> Table:
    t = Table()
    t.add_column("class")
    for r in reports:
        t.add_column(f"{r.label} ({r.test.length}n)", justify="right")
    for i, c in enumerate(reports[0].classes):
        cells = []
        for r in reports:
            rc = r.classes[i]
            part = f" ({_pct(rc.partial / rc.faults)})" if rc.partial and rc.faults else ""
            cells.append(_pct(rc.coverage) + part)
        t.add_row(c.cls, *cells)
    return t


@march_group.command("coverage")
@click.argument("tests", nargs=-1, required=True, metavar="TEST")
@click.option("--words", type=click.IntRange(min=1), help="Number of words (default: rows x cols of --layout).")
@click.option(
    "--width", type=click.IntRange(1, 1024), default=1, show_default=True, help="Bits per word (1 = bit-oriented)."
)
@click.option(
    "--layout",
    default=None,
    metavar="RxC",
    help="Physical layout: rows x column-mux words (needed for --universe neighbours).",
)
@address_order_options
@click.option(
    "--backgrounds",
    default=None,
    help="Data backgrounds, comma-separated (default: solid for 1-bit words, else the standard set).",
)
@click.option(
    "--faults",
    "fault_classes",
    default=None,
    metavar="CLASSES",
    help=f"Fault classes, comma-separated (default all: {','.join(CLASSES)}).",
)
@click.option(
    "--universe", default="all", show_default=True, metavar="all|neighbours|sample:K", help="Which instances to count."
)
@seed_option
@click.option(
    "--escapes",
    "max_escapes",
    type=click.IntRange(min=0),
    default=12,
    show_default=True,
    help="How many fault models with escapes to list (one example each).",
)
@click.option(
    "--compare", is_flag=True, help="Compare several TESTs side by side: memcheck march coverage A B C --compare ..."
)
@click.option("--json", "json_file", type=click.Path(dir_okay=False), default=None, help="Write a JSON report.")
@click.option(
    "--plot", "plot_file", type=click.Path(dir_okay=False), default=None, help="Write a grouped bar chart (PNG)."
)
def coverage_cmd(
    tests: tuple[str, ...],
    words: int | None,
    width: int,
    layout: str | None,
    order: str,
    any_order: str,
    backgrounds: str | None,
    fault_classes: str | None,
    universe: str,
    seed: int | None,
    max_escapes: int,
    compare: bool,
    json_file: str | None,
    plot_file: str | None,
) -> None:
    """Fault coverage of a March TEST (library name or notation) on a memory of --words x --width bits.

    Prints a table per fault class (instances, detected, escaped, partial = detected only from some
    power-up states, coverage %), then the fault models that escape with one example and its witness.
    Give several TESTs with --compare to see them side by side.
    """
    if len(tests) > 1 and not compare:
        raise UsageError(
            f"{len(tests)} tests given ({', '.join(tests)}); add --compare to compare them side "
            "by side, or quote a notation that contains spaces"
        )
    lay, words = layout_and_words(layout, words)
    used_seed = resolve_seed(seed)
    setup = Arrangement(
        words,
        width,
        layout=lay,
        order=order,
        backgrounds=backgrounds,
        seed=used_seed,
        any_order="down" if any_order == "down" else "up",
    )
    classes = parse_classes(fault_classes)
    uni = parse_universe(universe, used_seed)
    click.echo(f"{click.get_current_context().command_path}: seed {used_seed}")
    reports = [coverage(t, setup, classes=classes, universe=uni) for t in tests]
    console = Console(width=100)
    first = reports[0]
    bgs = ", ".join(first.backgrounds)
    lay_text = f", layout {lay[0]}x{lay[1]}" if lay else ""
    console.print(
        f"memory {words} words x {width} bit{'s' if width > 1 else ''}{lay_text}; order {order} (⇕ {any_order}); "
        f"backgrounds {bgs}; universe {uni.label}"
    )
    for rep in reports:
        click.echo(f"\n{rep.label}  {rep.notation}  ({rep.test.length}n, {rep.seconds:.2f} s)")
        console.print(_class_table(rep))
        for line in _escape_lines(rep, max_escapes):
            click.echo(line)
    if len(reports) > 1:
        click.echo(
            "\nCoverage % side by side (guaranteed detection; detected only from some power-up states in brackets):"
        )
        console.print(_compare_table(reports))
    click.echo(DISCLAIMER)
    if json_file:
        doc = first.to_json()
        if len(reports) > 1:
            doc["compared"] = [r.to_json() for r in reports[1:]]
        write_text_atomic(json_file, json.dumps(doc, indent=2, ensure_ascii=False) + "\n")
        click.echo(f"wrote {json_file}")
    if plot_file:
        from memcheck.faults.plot import plot_coverage

        plot_coverage(reports, plot_file)
        click.echo(f"wrote {plot_file}")


add_hidden_alias(cli, coverage_cmd)
