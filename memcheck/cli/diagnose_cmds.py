"""``memcheck diagnose``: from a fail log to failing cells, a bitmap and the ranked single faults."""

from __future__ import annotations

import json

import click

from memcheck._atomic import write_text_atomic
from memcheck.cli import cli
from memcheck.cli._options import address_order_options, resolve_seed, seed_option
from memcheck.cli._params import SIZE
from memcheck.cli.march_cmds import dft_library_option, layout_and_words, load_tests
from memcheck.diagnose import DISCLAIMER, Diagnosis, diagnose, plot_bitmap, read_fail_log
from memcheck.faults.geometry import Arrangement
from memcheck.faults.universe import parse_classes


def _lines(d: Diagnosis, top: int) -> list[str]:
    out = [
        f"{len(d.observed)} failing read(s){' (first fail only)' if d.first_fail else ''}; "
        f"{len(d.failing_cells)} failing cell(s): "
        + ", ".join(f"word {c.word} bit {c.bit}" for c in d.failing_cells[:20])
        + (" ..." if len(d.failing_cells) > 20 else ""),
        f"{d.candidates:,} candidate instances simulated in {d.seconds:.2f} s (aggressors and decoder partners from "
        + ("the whole memory)" if d.whole_memory else "the failing words and their neighbours)"),
    ]
    if not d.groups:
        out.append("no single modelled fault explains any of these failing reads")
    for g in d.groups[:top]:
        how = "exact match" if g.exact else f"similarity {g.similarity:.3f}"
        state = ", ".join(f"{k}={v}" for k, v in g.power_up)
        out.append(f"#{g.rank} {how} (power-up {state}) - {', '.join(sorted({m.cls for m in g.members}))}")
        if len(g.members) > 1:
            out.append(f"   {len(g.members)} instances indistinguishable under this test:")
        out += [f"   {m.describe()}" for m in g.members[:6]]
        if len(g.members) > 6:
            out.append(f"   ... and {len(g.members) - 6} more (all in --json)")
    ties = [g for g in d.groups if g.rank == 1]
    if len(ties) > 1:
        out.append(f"{len(ties)} groups share rank 1: this fail log cannot tell them apart.")
    out.append(DISCLAIMER)
    return out


@cli.command("diagnose")
@click.argument("test")
@click.argument("faillog", type=click.Path(dir_okay=False))
@click.option("--words", type=SIZE, help="Number of words, K/M/G suffixes allowed (default: rows x cols of --layout).")
@click.option("--width", type=click.IntRange(1, 1024), default=1, show_default=True, help="Bits per word.")
@click.option("--layout", default=None, metavar="RxC", help="Physical layout: rows x column-mux words.")
@address_order_options
@click.option(
    "--backgrounds", default=None, help="Data backgrounds the test ran, comma-separated (default as coverage)."
)
@seed_option
@click.option(
    "--faults",
    "fault_classes",
    default=None,
    metavar="CLASSES",
    help="Fault classes the candidates come from, comma-separated (default all, static and dynamic).",
)
@dft_library_option
@click.option("--first-fail", is_flag=True, help="FAILLOG holds only the first failing read (a first-fail BIST).")
@click.option(
    "--first-reads",
    type=click.IntRange(min=1),
    default=None,
    metavar="N",
    help="FAILLOG holds only the first N failing reads (a fail log cut at --fail-log-limit).",
)
@click.option("--top", type=click.IntRange(min=1), default=8, show_default=True, help="Groups to print.")
@click.option("--png", "png_file", type=click.Path(dir_okay=False), default=None, help="Write the array bitmap (PNG).")
@click.option("--json", "json_file", type=click.Path(dir_okay=False), default=None, help="Write a JSON report.")
def diagnose_cmd(
    test: str,
    faillog: str,
    words: int | None,
    width: int,
    layout: str | None,
    order: str,
    any_order: str,
    backgrounds: str | None,
    seed: int | None,
    fault_classes: str | None,
    library: str | None,
    first_fail: bool,
    first_reads: int | None,
    top: int,
    png_file: str | None,
    json_file: str | None,
) -> None:
    """Diagnose a failing memory: read FAILLOG (CSV element,op,address,background,expected,actual; see
    docs/diagnose.md; `march run --fail-log` and `bist campaign --fail-log` write it) of TEST run on
    --words x --width bits, print the failing cells and the single
    fault instances that explain the failures, ranked (exact match first, then similarity)."""
    lay, n = layout_and_words(layout, words)
    used_seed = resolve_seed(seed)
    click.echo(f"memcheck diagnose: seed {used_seed}")
    setup = Arrangement(
        n,
        width,
        layout=lay,
        order=order,
        backgrounds=backgrounds,
        seed=used_seed,
        any_order="down" if any_order == "down" else "up",
    )
    _, (t,) = load_tests((test,), library, None)
    rows = read_fail_log(faillog)
    d = diagnose(t, setup, rows, first_fail=first_fail, classes=parse_classes(fault_classes), first_reads=first_reads)
    for line in _lines(d, top):
        click.echo(line)
    if png_file:
        plot_bitmap(d.failing_cells, setup, png_file, f"{t.name or 'test'}: {len(d.failing_cells)} failing cell(s)")
        click.echo(f"wrote {png_file}")
    if json_file:
        doc = {"seed": used_seed, **d.to_json()}
        write_text_atomic(json_file, json.dumps(doc, indent=2, ensure_ascii=False) + "\n")
        click.echo(f"wrote {json_file}")
