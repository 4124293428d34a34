"""``memcheck march coverage`` (alias ``memcheck coverage``): which faults a March test detects on a
given memory, and why some escape."""

from __future__ import annotations

import json

import click

from memcheck._atomic import write_text_atomic
from memcheck.cli import cli
from memcheck.cli._coverage_text import claims_of, class_grid, compare_grid, escape_lines
from memcheck.cli._options import add_hidden_alias, address_order_options, resolve_seed, seed_option
from memcheck.cli._params import SIZE, SizeType
from memcheck.cli._tables import TABLE_FORMATS, render, terminal_width
from memcheck.cli.march_cmds import (
    dft_test_options,
    layout_and_words,
    load_tests,
    march_group,
    warn,
)
from memcheck.errors import UsageError
from memcheck.faults.budget import DEFAULT_MAX_MEMORY, check_budget, estimate_coverage
from memcheck.faults.checks import check_claims, universe_hint
from memcheck.faults.coverage import DISCLAIMER, CoverageReport, coverage
from memcheck.faults.geometry import Arrangement
from memcheck.faults.universe import CLASSES, parse_classes, parse_universe
from memcheck.march.backgrounds import resolve_backgrounds
from memcheck.march.timing import march_time
from memcheck.march.userlib import UserTest


def _report_lines(rep: CoverageReport, fmt: str, clock: float, pause: float, library: tuple[UserTest, ...]) -> str:
    """Heading (notation, test time, compute time), the class table, claims checked."""
    tt = march_time(rep.test, rep.setup.words, len(rep.backgrounds), clock, pause)
    lines = [
        f"\n{rep.label}  {rep.notation}",
        f"  {rep.test.length}n; {tt.text()}; computed in {rep.seconds:.2f} s",
        render(class_grid(rep), fmt),
    ]
    checks = [c for c in check_claims(rep, claims_of(rep.test, library)) if c.status != "not measured"]
    if checks:
        lines.append("Claims against this measurement (this geometry and fault models only):")
        lines += [f"  {c.describe()}" for c in checks]
    return "\n".join(lines)


@march_group.command("coverage")
@click.argument("tests", nargs=-1, required=True, metavar="TEST")
@click.option("--words", type=SIZE, help="Number of words, K/M/G suffixes allowed (default: rows x cols of --layout).")
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
    "--universe",
    default="all",
    show_default=True,
    metavar="all|neighbours|sample:K[:neighbours]",
    help="Which instances to count.",
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
@click.option(
    "--format", "fmt", type=click.Choice(TABLE_FORMATS), default="text", show_default=True, help="Table format."
)
@click.option(
    "--max-memory",
    type=SizeType(1),
    default=DEFAULT_MAX_MEMORY,
    show_default="4G",
    help="Refuse a job whose estimated memory is larger (bytes, K/M/G suffixes).",
)
@dft_test_options
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
    fmt: str,
    max_memory: int,
    library: str | None,
    name: str | None,
    clock_mhz: float,
    pause_ms: float,
    json_file: str | None,
    plot_file: str | None,
) -> None:
    """Fault coverage of a March TEST (library name, NAME=NOTATION or notation) on a memory of
    --words x --width bits.

    Prints a table per fault class (instances, detected, escaped, partial = detected only from some
    power-up states, coverage %), the test time, the published claims checked against the
    measurement, then the fault models that escape with one example and its witness. Give several
    TESTs with --compare to see them side by side.
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
    user_lib, resolved = load_tests(tests, library, name)
    nbg = len(resolve_backgrounds(setup.background_spec, width, lay))
    check_budget(estimate_coverage(setup, uni, classes, nbg), max_memory, "this coverage job", "--max-memory")
    for t in resolved:
        warn(t)
    reports = [coverage(t, setup, classes=classes, universe=uni) for t in resolved]
    first = reports[0]
    lay_text = f", layout {lay[0]}x{lay[1]}" if lay else ""
    click.echo(
        f"memory {words:,} words x {width} bit{'s' if width > 1 else ''}{lay_text}; order {order} (⇕ {any_order}); "
        f"backgrounds {', '.join(first.backgrounds)}; universe {uni.label}"
    )
    for rep in reports:
        click.echo(_report_lines(rep, fmt, clock_mhz, pause_ms, user_lib))
        for line in escape_lines(rep, max_escapes, min(120, terminal_width())):
            click.echo(line)
        hint = universe_hint(rep) if fmt == "text" else None
        if hint:
            click.echo(hint)
    if len(reports) > 1:
        click.echo(
            "\nCoverage % side by side (guaranteed detection; detected only from some power-up states in brackets):"
        )
        click.echo(render(compare_grid(reports), fmt))
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
