"""``memcheck bist faulty-memory`` and ``memcheck bist campaign``: fault coverage measured on RTL."""

from __future__ import annotations

import json
import sys
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import Any

import click

from memcheck._atomic import write_text_atomic
from memcheck.bist.campaign import CampaignSpec, render, run_campaign
from memcheck.bist.campaign.faillog import write_campaign_log
from memcheck.bist.campaign.verilator import SIMULATORS
from memcheck.bist.faulty_memory import MemoryShape, faulty_memory_verilog
from memcheck.cli import EXIT_FAIL, EXIT_OK
from memcheck.cli._options import address_order_options, resolve_seed, seed_option
from memcheck.cli.bist_cmds import bist_group
from memcheck.cli.march_cmds import dft_library_option, load_tests
from memcheck.errors import BistError
from memcheck.march.orders import parse_layout


def _words_layout(words: int | None, layout: str | None) -> tuple[int, tuple[int, int] | None]:
    lay = parse_layout(layout) if layout else None
    if words is None:
        if lay is None:
            raise BistError("give --words N (or --layout ROWSxCOLS)")
        return lay[0] * lay[1], lay
    if lay is not None and lay[0] * lay[1] != words:
        raise BistError(f"layout {lay[0]}x{lay[1]} has {lay[0] * lay[1]} words, not --words {words}")
    return words, lay


@bist_group.command("faulty-memory")
@click.option("--words", type=int, default=None, help="Words of the memory (or rows x cols of --layout).")
@click.option("--width", type=int, default=1, show_default=True, help="Bits per word.")
@click.option("--layout", default=None, help="Physical ROWSxCOLS (must give --words words).")
@click.option("--copies", type=int, default=1, show_default=True, help="Faulty copies side by side (COPIES).")
@click.option("--read-latency", type=int, default=1, show_default=True, help="READ_LATENCY default (0 to 4).")
@click.option("--retention", type=int, default=100, show_default=True, help="Idle cycles that make a DRF cell decay.")
@click.option("--module", default="faulty_sram", show_default=True, help="Verilog module name.")
@click.option("-o", "--output", type=click.Path(dir_okay=False), default=None, help="Output file (default MODULE.v).")
def bist_faulty_memory(
    words: int | None,
    width: int,
    layout: str | None,
    copies: int,
    read_latency: int,
    retention: int,
    module: str,
    output: str | None,
) -> None:
    """A behavioural SRAM whose faults are read at run time from a fault table (+faults=FILE)."""
    n, _ = _words_layout(words, layout)
    if not 1 <= n <= 1 << 24 or not 1 <= width <= 1024:
        raise BistError(f"the faulty memory is 1..16777216 words of 1..1024 bits, not {n} x {width}")
    from memcheck.bist.microcode import _check_module

    _check_module(module)
    text = faulty_memory_verilog(MemoryShape(n, width, read_latency, copies, retention, module))
    path = write_text_atomic(Path(output or f"{module}.v"), text)
    click.echo(
        f"{module}: {n} x {width}, {copies} faulty copies, READ_LATENCY {read_latency}, retention {retention} "
        f"idle cycles; wrote {path}. Run with +faults=TABLE.hex (fault table format: docs/bist.md); drive split "
        "high on the first operation of each March element (dynamic faults pair operations within one element)."
    )


@contextmanager
def _progress(enabled: bool) -> Iterator[Callable[[int, int], None] | None]:
    if not enabled:
        yield None
        return
    from rich.console import Console
    from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn, TimeElapsedColumn

    with Progress(
        TextColumn("simulations"),
        BarColumn(),
        MofNCompleteColumn(),
        TimeElapsedColumn(),
        console=Console(stderr=True),
        transient=True,
    ) as prog:
        task = prog.add_task("campaign", total=None)

        def update(done: int, total: int) -> None:
            prog.update(task, completed=done, total=total)

        yield update


@bist_group.command("campaign")
@click.argument("test")
@click.option("--words", type=int, default=None, help="Words of the memory (or rows x cols of --layout).")
@click.option("--width", type=int, default=1, show_default=True, help="Bits per word.")
@click.option("--layout", default=None, help="Physical ROWSxCOLS (needed for the neighbours universe).")
@click.option("--backgrounds", default=None, help="Data backgrounds (default: solid for 1 bit, else standard).")
@click.option("--faults", "classes", default=None, help="Fault classes, comma-separated (default: every class).")
@click.option("--universe", default="all", show_default=True, help="all, neighbours, sample:K[:neighbours].")
@click.option("--copies", type=int, default=None, help="Faulty copies per simulation (default: from memory size).")
@click.option("--pause-cycles", type=int, default=100, show_default=True, help="Engine pause = retention time.")
@click.option(
    "--read-latency",
    type=int,
    default=1,
    show_default=True,
    help="READ_LATENCY of the engine and the faulty memory (0 to 4).",
)
@click.option(
    "--simulator",
    type=click.Choice(SIMULATORS),
    default="auto",
    show_default=True,
    help="Icarus or Verilator; auto takes Verilator (when installed) for campaigns large enough to repay its compile.",
)
@click.option("--workers", type=click.IntRange(min=1), default=None, help="Local worker processes (default: cores).")
@click.option("--scheduler", default=None, help="Dask scheduler ADDRESS (tcp://host:8786) instead of local workers.")
@click.option("--json", "json_file", type=click.Path(dir_okay=False), default=None, help="Write a JSON report.")
@click.option(
    "--fail-log",
    "fail_log",
    type=click.Path(dir_okay=False),
    default=None,
    help="Write one instance's first failing read as a fail log that memcheck diagnose reads back.",
)
@click.option(
    "--fail-log-instance",
    type=click.IntRange(min=0),
    default=None,
    help="Which instance --fail-log writes, from 0 in plan order (default: the first that failed).",
)
@dft_library_option
@seed_option
@address_order_options
def bist_campaign(test: str, json_file: str | None, fail_log: str | None, **kw: Any) -> int:
    """Measure TEST's fault coverage on RTL (the generated engine against faulty memory copies) and compare
    it instance by instance with the fault simulator. Exit 1 on any disagreement."""
    seed = resolve_seed(kw.pop("seed"))
    words, layout = _words_layout(kw.pop("words"), kw.pop("layout"))
    workers, scheduler = kw.pop("workers"), kw.pop("scheduler")
    if workers is not None and scheduler is not None:
        raise BistError("--workers and --scheduler do not go together: local processes or a Dask cluster")
    library = kw.pop("library")
    _, (resolved,) = load_tests((test,), library, None)
    spec = CampaignSpec(
        resolved,
        words,
        kw["width"],
        layout,
        kw["order"],
        kw["any_order"],
        kw["backgrounds"],
        kw["classes"],
        kw["universe"],
        seed,
        kw["copies"],
        kw["pause_cycles"],
        kw["read_latency"],
        kw["simulator"],
    )
    where = f"Dask scheduler {scheduler}" if scheduler else f"{workers or 'all'} local worker processes"
    click.echo(f"memcheck bist campaign: {test} on {words} x {kw['width']}, order {kw['order']}, seed {seed}, {where}")
    with _progress(sys.stderr.isatty()) as progress:
        report = run_campaign(spec, workers=workers, scheduler=scheduler, progress=progress)
    click.echo(render(report))
    if json_file:
        write_text_atomic(Path(json_file), json.dumps(report.to_json(), indent=2, ensure_ascii=False) + "\n")
        click.echo(f"wrote {json_file}")
    if fail_log:
        index, o, rows = write_campaign_log(report, fail_log, test, kw["fail_log_instance"], library)
        click.echo(
            f"wrote {fail_log}: instance {index} {o.fault.describe()} ({len(rows)} failing read; first-fail log)"
        )
    return EXIT_OK if report.agree else EXIT_FAIL
