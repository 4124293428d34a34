"""``memcheck march list|show|patterns``: the March library and its operation streams.

``march run`` (march_run_cmds) and ``march coverage`` (fault_cmds) register on the same group;
``memcheck patterns`` and ``memcheck coverage`` stay as hidden top-level aliases.
"""

from __future__ import annotations

import sys

import click
from rich.console import Console
from rich.table import Table

from memcheck.cli import cli
from memcheck.cli._options import add_hidden_alias, address_order_options, resolve_seed, seed_option
from memcheck.errors import UnknownAlgorithm, UsageError
from memcheck.march.backgrounds import BACKGROUND_NAMES
from memcheck.march.expand import expand
from memcheck.march.export import FORMATS, hex_layout, iter_export, write_export
from memcheck.march.library import ALGORITHMS, FAULT_CLASSES, get_algorithm, resolve_test
from memcheck.march.orders import parse_layout


def layout_and_words(layout: str | None, words: int | None) -> tuple[tuple[int, int] | None, int]:
    """``--layout`` parsed and ``--words`` (rows x cols of the layout when omitted)."""
    lay = parse_layout(layout) if layout else None
    if words is None:
        if lay is None:
            raise UsageError("give --words N (or a --layout ROWSxCOLS to take the word count from)")
        words = lay[0] * lay[1]
    return lay, words


@cli.group("march")
def march_group() -> None:
    """March tests: the library, operation streams, fault coverage and runs on RTL."""


@march_group.command("list")
def march_list() -> None:
    """List the library: name, length, claimed fault classes and source."""
    t = Table(title="March algorithms (claims are the authors', not measured)")
    for col in ("name", "length", "claimed fault classes", "source"):
        t.add_column(col)
    for a in ALGORITHMS:
        t.add_row(a.name, a.length_text, " ".join(a.claims), a.source.short())
    Console().print(t)


@march_group.command("show")
@click.argument("name")
def march_show(name: str) -> None:
    """Show one algorithm (library NAME or notation): notation, length, source and claimed coverage."""
    try:
        alg = get_algorithm(name)
    except UnknownAlgorithm:
        test = resolve_test(name)  # notation, or the UnknownAlgorithm error again
        footer = ""
        d = test.delays
        rows = [
            ("custom test", ""),
            ("notation", test.to_unicode()),
            ("ascii", test.to_ascii()),
            ("length", f"{test.length}n" + (f" + {d} delay{'s' if d > 1 else ''}" if d else "")),
        ]
    else:
        test = alg.test
        rows = [
            (alg.name, ""),
            ("notation", test.to_unicode()),
            ("ascii", test.to_ascii()),
            ("length", alg.length_text),
            ("source", alg.source.cite()),
            ("claimed", ", ".join(f"{c} ({FAULT_CLASSES[c]})" for c in alg.claims)),
        ]
        if alg.notes:
            rows.append(("notes", alg.notes))
        footer = (
            "Claims are as published; memcheck's fault simulator measures coverage under its own fault "
            "models. Not sign-off."
        )
    for key, value in rows:
        click.echo(f"{key:<10}{value}" if value else key)
    if footer:
        click.echo(footer)


@march_group.command("patterns")
@click.argument("name_or_notation")
@click.option("--words", type=click.IntRange(min=1), help="Number of words (default: rows x cols of --layout).")
@click.option("--width", type=click.IntRange(1, 1024), required=True, help="Bits per word (1..1024).")
@click.option("--layout", help="Physical array ROWSxCOLS with column multiplexing, e.g. 256x4.")
@address_order_options
@click.option(
    "--backgrounds",
    default="solid",
    show_default=True,
    help=f"Comma-separated data backgrounds: {', '.join(BACKGROUND_NAMES)}, std0..stdK or a hex word.",
)
@seed_option
@click.option(
    "--format",
    "fmt",
    default="hex",
    show_default=True,
    type=click.Choice(FORMATS),
    help="hex loads with Verilog $readmemh; csv and json are for scripts.",
)
@click.option("-o", "--output", type=click.Path(dir_okay=False), help="Write here (atomically) instead of stdout.")
def patterns(
    name_or_notation: str,
    words: int | None,
    width: int,
    layout: str | None,
    order: str,
    any_order: str,
    backgrounds: str,
    seed: int | None,
    fmt: str,
    output: str | None,
) -> None:
    """Expand NAME_OR_NOTATION (library name or March notation) into its operation stream."""
    lay, words = layout_and_words(layout, words)
    seed = resolve_seed(seed)
    test = resolve_test(name_or_notation)
    stream = expand(
        test,
        words,
        width,
        layout=lay,
        order=order,
        backgrounds=backgrounds,
        any_order=any_order,
        seed=seed,
    )
    click.echo(f"{click.get_current_context().command_path}: seed {seed}", err=True)
    lay_h = hex_layout(stream)
    summary = (
        f"{test.name or 'custom test'}: {stream.total_ops} operations = {test.length} x {words} words x "
        f"{len(stream.backgrounds)} background(s) [{', '.join(b.name for b in stream.backgrounds)}], "
        f"order {order}"
    )
    if order == "lfsr":
        summary += f" (LFSR start state {stream.order.lfsr_start})"
    if fmt == "hex":
        summary += f"; hex lines are {lay_h.line_bits} bits"
    if output:
        write_export(stream, output, fmt)
        click.echo(f"{summary}; written to {output}", err=True)
    else:
        out = sys.stdout.buffer
        for piece in iter_export(stream, fmt):
            out.write(piece)
        out.flush()
        click.echo(summary, err=True)


add_hidden_alias(cli, patterns)
