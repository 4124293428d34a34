"""``memcheck march list|show|patterns``: the March library and its operation streams.

``march run`` (march_run_cmds) and ``march coverage`` (fault_cmds) register on the same group;
``memcheck patterns`` and ``memcheck coverage`` stay as hidden top-level aliases.
"""

from __future__ import annotations

import sys
from collections.abc import Callable
from typing import Any, TypeVar

import click

from memcheck.cli import cli
from memcheck.cli._options import add_hidden_alias, address_order_options, resolve_seed, seed_option
from memcheck.cli._params import SIZE, SizeType, format_bytes, parse_size
from memcheck.cli._signals import terminate_as_interrupt
from memcheck.cli._tables import Grid, render
from memcheck.errors import BudgetError, UsageError
from memcheck.faults.geometry import Arrangement
from memcheck.march.backgrounds import BACKGROUND_NAMES
from memcheck.march.checks import notation_warnings
from memcheck.march.expand import expand
from memcheck.march.export import FORMATS, estimate_bytes, hex_layout, iter_export, write_export
from memcheck.march.library import ALGORITHMS, FAULT_CLASSES, get_algorithm
from memcheck.march.notation import MarchTest
from memcheck.march.orders import parse_layout
from memcheck.march.timing import DEFAULT_CLOCK_MHZ, DEFAULT_PAUSE_MS, march_time
from memcheck.march.userlib import UserTest, find_user_test, load_user_library, resolve_named

_F = TypeVar("_F", bound=Callable[..., Any])
#: Default ``--max-output`` of ``march patterns`` (bytes): 1 GiB.
DEFAULT_MAX_OUTPUT = 1 << 30


def layout_and_words(layout: str | None, words: int | None) -> tuple[tuple[int, int] | None, int]:
    """``--layout`` parsed (K/M suffixes allowed: ``32Kx32K``) and ``--words`` (rows x cols of the
    layout when omitted)."""
    lay = None
    if layout:
        rows, sep, cols = layout.lower().partition("x")
        try:
            lay = (parse_size(rows, "layout rows"), parse_size(cols, "layout columns")) if sep else None
        except UsageError:
            lay = None
        if lay is None:
            lay = parse_layout(layout)  # the standard message for anything else
    if words is None:
        if lay is None:
            raise UsageError("give --words N (or a --layout ROWSxCOLS to take the word count from)")
        words = lay[0] * lay[1]
    return lay, words


def default_backgrounds(width: int) -> str:
    """The one default of every command: solid for 1-bit words, the standard set for wider words."""
    spec = Arrangement(1, width).background_spec
    return spec if isinstance(spec, str) else ",".join(spec)


#: ``--library FILE``: a user test library whose names work as TEST (every command that takes a test).
dft_library_option = click.option(
    "--library",
    type=click.Path(dir_okay=False),
    default=None,
    help="A user test library (TOML, [[test]] name/notation/claims); its names work as TEST.",
)


def dft_test_options(f: _F) -> _F:
    """``--library FILE``, ``--name NAME``, ``--clock-mhz F`` and ``--pause-ms T``."""
    f = click.option(
        "--pause-ms",
        type=click.FloatRange(min=0),
        default=DEFAULT_PAUSE_MS,
        show_default=True,
        help="Length of one delay element in the test-time figure.",
    )(f)
    f = click.option(
        "--clock-mhz",
        type=click.FloatRange(min=0, min_open=True),
        default=DEFAULT_CLOCK_MHZ,
        show_default=True,
        help="Test clock of the test-time figure (one operation per cycle).",
    )(f)
    f = click.option("--name", default=None, help="Name shown for a custom (notation) test.")(f)
    return dft_library_option(f)


def load_tests(
    texts: tuple[str, ...], library: str | None, name: str | None
) -> tuple[tuple[UserTest, ...], list[MarchTest]]:
    """The user library (if any) and each TEST resolved; ``name`` names a single unnamed test."""
    lib = load_user_library(library) if library else ()
    tests = [resolve_named(t, lib) for t in texts]
    if name is not None:
        if len(tests) != 1:
            raise UsageError("--name names one test; for several use NAME=NOTATION for each")
        tests = [MarchTest(tests[0].elements, name=name)]
    return lib, tests


def warn(test: MarchTest) -> None:
    for w in notation_warnings(test):
        click.echo(f"warning: {w}", err=True)


@cli.group("march")
def march_group() -> None:
    """March tests: the library, operation streams, fault coverage and runs on RTL."""


@march_group.command("list")
@click.option("--library", type=click.Path(dir_okay=False), default=None, help="Also list a user test library (TOML).")
def march_list(library: str | None) -> None:
    """List the library: name, length, claimed fault classes and source."""
    rows = [(a.name, a.length_text, " ".join(a.claims), a.source.short()) for a in ALGORITHMS]
    for u in load_user_library(library) if library else ():
        rows.append((u.name, f"{u.test.length}n", " ".join(u.claims), f"user library: {u.source or library}"))
    click.echo("March algorithms (claims are the authors', not measured; march coverage measures them)")
    click.echo(render(Grid(("name", "length", "claimed fault classes", "source"), tuple(rows))))


def _show_rows(test: MarchTest, lib: tuple[UserTest, ...]) -> tuple[list[tuple[str, str]], tuple[str, ...], str]:
    """Rows of ``march show`` for a test, its claims and the footer."""
    d = test.delays
    length = f"{test.length}n" + (f" + {d} delay{'s' if d > 1 else ''}" if d else "")
    user = find_user_test(test.name, lib) if test.name else None
    alg = None
    if user is None and test.name:
        alg = get_algorithm(test.name) if test.name in {a.name for a in ALGORITHMS} else None
    rows = [(test.name or "custom test", ""), ("notation", test.to_unicode()), ("ascii", test.to_ascii())]
    if alg is not None and alg.test == test:
        rows += [("length", alg.length_text), ("source", alg.source.cite())]
        claims = alg.claims
        if alg.notes:
            rows.append(("notes", alg.notes))
    else:
        rows.append(("length", length))
        claims = user.claims if user is not None else ()
        if user is not None and user.source:
            rows.append(("source", f"user library: {user.source}"))
    if claims:
        rows.append(("claimed", ", ".join(f"{c} ({FAULT_CLASSES[c]})" for c in claims)))
    footer = (
        "Claims are as published; memcheck's fault simulator measures coverage under its own fault "
        "models (give --words to check them here). Not sign-off."
        if claims
        else ""
    )
    return rows, claims, footer


@march_group.command("show")
@click.argument("test_name", metavar="NAME")
@click.option("--words", type=SIZE, default=None, help="Check the claims and give the test time on this many words.")
@click.option("--width", type=click.IntRange(1, 1024), default=1, show_default=True, help="Bits per word.")
@click.option("--layout", default=None, metavar="RxC", help="Physical layout: rows x column-mux words.")
@click.option("--backgrounds", default=None, help="Data backgrounds (default: solid for 1 bit, else standard).")
@dft_test_options
def march_show(
    test_name: str,
    words: int | None,
    width: int,
    layout: str | None,
    backgrounds: str | None,
    library: str | None,
    name: str | None,
    clock_mhz: float,
    pause_ms: float,
) -> None:
    """Show one test (library NAME, user-library name, NAME=NOTATION or notation): notation, length,
    source and claimed coverage; with --words (or --layout) also the test time and each claim
    confirmed or contradicted by memcheck's fault simulation on that geometry."""
    lib, (test,) = load_tests((test_name,), library, name)
    rows, claims, footer = _show_rows(test, lib)
    for key, value in rows:
        click.echo(f"{key:<10}{value}" if value else key)
    warn(test)
    if words is not None or layout is not None:
        _measure_claims(test, claims, words, width, layout, backgrounds, (clock_mhz, pause_ms))
    if footer:
        click.echo(footer)


def _measure_claims(
    test: MarchTest,
    claims: tuple[str, ...],
    words: int | None,
    width: int,
    layout: str | None,
    backgrounds: str | None,
    timing: tuple[float, float],
) -> None:
    from memcheck.faults.checks import check_claims
    from memcheck.faults.coverage import coverage

    lay, n = layout_and_words(layout, words)
    setup = Arrangement(n, width, layout=lay, backgrounds=backgrounds)
    nbg = len(setup.resolve().backgrounds)
    click.echo(f"{'time':<10}{march_time(test, n, nbg, *timing).text()}")
    if not claims:
        return
    rep = coverage(test, setup, classes=claims)
    where = f"{n:,} words x {width} bit(s)" + (f", layout {lay[0]}x{lay[1]}" if lay else "")
    click.echo(f"measured  on {where}, backgrounds {', '.join(rep.backgrounds)}, universe all:")
    for c in check_claims(rep, claims):
        click.echo(f"  {c.describe()}")


@march_group.command("patterns")
@click.argument("name_or_notation")
@click.option("--words", type=SIZE, help="Number of words, K/M/G suffixes allowed (default: rows x cols of --layout).")
@click.option("--width", type=click.IntRange(1, 1024), required=True, help="Bits per word (1..1024).")
@click.option("--layout", help="Physical array ROWSxCOLS with column multiplexing, e.g. 256x4.")
@address_order_options
@click.option(
    "--backgrounds",
    default=None,
    help=f"Comma-separated data backgrounds: {', '.join(BACKGROUND_NAMES)}, std0..stdK or a hex word "
    "(default: solid for 1-bit words, else standard, as march coverage).",
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
@click.option(
    "--max-output",
    type=SizeType(1),
    default=DEFAULT_MAX_OUTPUT,
    show_default="1G",
    help="Refuse to write more than this many bytes (estimated first).",
)
@click.option("--force", is_flag=True, help="Write whatever the estimated size.")
@dft_test_options
def patterns(
    name_or_notation: str,
    words: int | None,
    width: int,
    layout: str | None,
    order: str,
    any_order: str,
    backgrounds: str | None,
    seed: int | None,
    fmt: str,
    output: str | None,
    max_output: int,
    force: bool,
    library: str | None,
    name: str | None,
    clock_mhz: float,
    pause_ms: float,
) -> None:
    """Expand NAME_OR_NOTATION (library name, NAME=NOTATION or March notation) into its operation stream."""
    lay, words = layout_and_words(layout, words)
    seed = resolve_seed(seed)
    _, (test,) = load_tests((name_or_notation,), library, name)
    warn(test)
    stream = expand(
        test,
        words,
        width,
        layout=lay,
        order=order,
        backgrounds=backgrounds or default_backgrounds(width),
        any_order=any_order,
        seed=seed,
    )
    click.echo(f"{click.get_current_context().command_path}: seed {seed}", err=True)
    size = estimate_bytes(stream, fmt)
    if size > max_output and not force:
        raise BudgetError(
            f"this export would write about {format_bytes(size)} ({stream.total_ops:,} operations as {fmt}), more "
            f"than --max-output {format_bytes(max_output)}; add --force (or a larger --max-output) to write it anyway"
        )
    lay_h = hex_layout(stream)
    tt = march_time(test, words, len(stream.backgrounds), clock_mhz, pause_ms)
    summary = (
        f"{test.name or 'custom test'}: {stream.total_ops} operations = {test.length} x {words} words x "
        f"{len(stream.backgrounds)} background(s) [{', '.join(b.name for b in stream.backgrounds)}], "
        f"order {order}; {tt.text()}"
    )
    if order == "lfsr":
        summary += f" (LFSR start state {stream.order.lfsr_start})"
    if fmt == "hex":
        summary += f"; hex lines are {lay_h.line_bits} bits"
    with terminate_as_interrupt():
        if output:
            write_export(stream, output, fmt, tt)
            click.echo(f"{summary}; written to {output}", err=True)
            return
        out = sys.stdout.buffer
        for piece in iter_export(stream, fmt, tt):
            out.write(piece)
        out.flush()
    click.echo(summary, err=True)


add_hidden_alias(cli, patterns)
