"""``memcheck march synthesize``: the shortest March test for chosen fault classes, with its proof."""

from __future__ import annotations

import json

import click
from rich.console import Console
from rich.table import Table

from memcheck._atomic import write_text_atomic
from memcheck.cli import EXIT_FAIL, EXIT_OK
from memcheck.cli._options import address_order_options, resolve_seed, seed_option
from memcheck.cli.march_cmds import march_group
from memcheck.faults import DISCLAIMER
from memcheck.march.orders import parse_layout
from memcheck.synthesis import DEFAULT_BEAM_WIDTH, DEFAULT_MAX_LENGTH, DEFAULT_WORDS, SynthesisResult, synthesize


def _coverage_table(result: SynthesisResult) -> Table:
    t = Table(title="coverage on the memory (guaranteed detection, every power-up state)")
    for col in ("class", "instances", "detected", "coverage %"):
        t.add_column(col, justify="left" if col == "class" else "right")
    assert result.report is not None
    for c in result.report.classes:
        t.add_row(c.cls, f"{c.faults:,}", f"{c.detected:,}", f"{100 * c.coverage:.1f}")
    return t


def _proof_lines(result: SynthesisResult) -> list[str]:
    p = result.proof
    counts = ", ".join(f"{n}:{c}" for n, c in enumerate(p.states_per_length, start=1))
    lines = ["search space: " + "; ".join(p.space) + "."]
    if p.complete_below > 1:
        lines.append(
            f"proof: every length 1..{p.complete_below - 1} was searched exhaustively and no test in this space "
            "detects every instance."
        )
    lines.append(f"distinct states first reached per length: {counts or 'none'}; {p.seconds:.2f} s.")
    return lines


def _show_test(result: SynthesisResult) -> None:
    t = result.test
    assert t is not None
    classes = ",".join(result.classes)
    if result.minimal:
        click.echo(f"shortest test for {classes}: {t.length}n" + (f" + {t.delays} delay(s)" if t.delays else ""))
    else:
        p = result.proof
        click.echo(
            f"shortest test found for {classes}: {t.length}n (by the {result.found_by}; not proven shortest: the "
            f"{p.cut_by} cut the exact search, which ruled out every length ≤ {p.complete_below - 1})"
        )
    if result.report is not None and len(result.report.backgrounds) > 1:
        bgs = result.report.backgrounds
        click.echo(f"  run once per background ({', '.join(bgs)}): {t.length * len(bgs)} operations per word")
    click.echo(f"  {t.to_unicode()}")
    click.echo(f"  {t.to_ascii()}")
    click.echo("⇕ elements were confirmed in both address directions.")
    Console().print(_coverage_table(result))


def _beam_line(result: SynthesisResult) -> str | None:
    b = result.beam
    if b is None:
        return None
    states = f"{b.width} state{'s' if b.width != 1 else ''}"
    head = f"beam search (best {states} per length, elements of up to {b.max_element} operations)"
    if b.length is not None:
        return (
            f"{head}: found {b.length}n in {b.seconds:.2f} s, an upper bound; the exact search then tried every "
            "shorter length."
        )
    cut = f", cut by the {b.cut_by}" if b.cut_by else ""
    return f"{head}: found no test in {b.seconds:.2f} s{cut}."


def _report(result: SynthesisResult, max_length: int) -> int:
    classes = ",".join(result.classes)
    p = result.proof
    if result.test is not None:
        _show_test(result)
    elif p.cut_by is not None:
        if p.complete_below > 1:
            click.echo(
                f"the {p.cut_by} cut the search: no test of length ≤ {p.complete_below - 1} detects every instance "
                f"of {classes}; longer lengths were not searched to the end, so no shortest test is proven."
            )
        else:
            click.echo(f"the {p.cut_by} cut the search before any length was searched to the end; no test is proven.")
    else:
        click.echo(f"no test of length ≤ {max_length} detects every instance of {classes} (searched exhaustively).")
    fb = result.fallback
    if fb is not None and not result.minimal:
        click.echo(f"shortest library test that detects them here: {fb.name} ({fb.length}n) {fb.to_unicode()}")
    beam = _beam_line(result)
    for line in [*_proof_lines(result), *([beam] if beam else [])]:
        click.echo(line)
    if result.test is not None:
        click.echo(DISCLAIMER)
    return EXIT_OK if result.minimal else EXIT_FAIL


@march_group.command("synthesize")
@click.option("--faults", "classes", required=True, help="Fault classes, comma-separated (e.g. SAF,AF,TF,CFin).")
@click.option("--words", type=int, default=DEFAULT_WORDS, show_default=True, help="Words in the memory.")
@click.option("--width", type=int, default=1, show_default=True, help="Bits per word (1 = bit-oriented).")
@address_order_options
@click.option(
    "--backgrounds",
    default=None,
    help=(
        "Data backgrounds, at most 7, e.g. standard on words up to 64 bits (the test runs once per "
        "background; default: solid)."
    ),
)
@click.option(
    "--universe",
    default="all",
    show_default=True,
    metavar="all|neighbours",
    help="Instances to detect: every one, or two-cell and decoder faults between physical neighbours only.",
)
@click.option("--layout", default=None, metavar="RxC", help="Physical layout (needed for --universe neighbours).")
@click.option("--max-length", type=int, default=DEFAULT_MAX_LENGTH, show_default=True, help="Longest test tried.")
@click.option(
    "--time-limit",
    type=float,
    default=None,
    help="Stop the search after S seconds (the beam search takes at most half; the exact search the rest).",
)
@click.option(
    "--beam-width",
    type=click.IntRange(min=0),
    default=DEFAULT_BEAM_WIDTH,
    show_default=True,
    help="States the beam search keeps per length (0: exact search only).",
)
@seed_option
@click.option("--json", "json_path", type=click.Path(dir_okay=False), help="Write the result as JSON (atomically).")
def synthesize_cmd(
    classes: str,
    words: int,
    width: int,
    order: str,
    any_order: str,
    backgrounds: str | None,
    universe: str,
    layout: str | None,
    max_length: int,
    time_limit: float | None,
    beam_width: int,
    seed: int | None,
    json_path: str | None,
) -> int:
    """Search the shortest March test that detects every instance of the fault classes on the memory.

    Exit codes: 0 a shortest test was found (minimal within the search space), 1 none of length up to
    --max-length, or the time or memory limit cut the exact search (the shortest test found so far is
    still printed), 2 bad input.
    """
    used_seed = resolve_seed(seed)
    click.echo(
        f"synthesizing for {classes} on {words} x {width}, order {order}, seed {used_seed} (⇕ elements are "
        f"checked walking both ways, so --any-order {any_order} does not change the answer)"
    )
    result = synthesize(
        classes,
        words=words,
        width=width,
        order=order,
        backgrounds=backgrounds if backgrounds is not None else ("solid" if width > 1 else None),
        seed=used_seed,
        max_length=max_length,
        time_limit=time_limit,
        beam_width=beam_width,
        universe=universe,
        layout=parse_layout(layout) if layout else None,
    )
    code = _report(result, max_length)
    if json_path:
        write_text_atomic(json_path, json.dumps(result.to_json(), indent=2, ensure_ascii=False) + "\n")
        click.echo(f"JSON written to {json_path}")
    return code
