"""Click options shared by the commands that run RTL (``check``, ``march run``, ``demo``).

Each flag is named after the :class:`~memcheck.sim.options.SimOptions` field it sets
(``--stall-timeout`` -> ``stall_timeout``, ``--sweep-ops`` -> ``sweep_ops``; ``--out`` sets
``out_dir`` and ``--no-waveform`` clears ``waveform``), and its default is that field's default:
nothing is typed twice. Importing this module does not import the simulator side.
"""

from __future__ import annotations

import sys
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from typing import Any, TypeVar

import click

from memcheck.sim.options import SimOptions

_F = TypeVar("_F", bound=Callable[..., Any])
DEFAULTS = SimOptions()


def output_options(out_help: str, waveform_help: str) -> Callable[[_F], _F]:
    """``--json``, ``--out``, ``--stall-timeout``, ``--no-waveform`` and ``--quiet``."""

    def wrap(f: _F) -> _F:
        for option in reversed(
            [
                click.option(
                    "--json", "json_file", type=click.Path(dir_okay=False), help="Write the JSON report here."
                ),
                click.option("--out", "out_dir", type=click.Path(file_okay=False), help=out_help),
                click.option(
                    "--stall-timeout",
                    type=click.FloatRange(min=0.5),
                    default=DEFAULTS.stall_timeout,
                    show_default=True,
                    help="Seconds without progress before the simulation is declared stalled.",
                ),
                click.option("--no-waveform", is_flag=True, help=waveform_help),
                click.option("--quiet", "-q", is_flag=True, help="Print only the summary."),
            ]
        ):
            f = option(f)
        return f

    return wrap


def pause_cycles_option(f: _F) -> _F:
    """``--pause-cycles``: quiet cycles a delay element (Del) of a March test becomes on RTL."""
    return click.option(
        "--pause-cycles",
        type=click.IntRange(min=0),
        default=DEFAULTS.pause_cycles,
        show_default=True,
        help="Quiet cycles each delay element (Del) of the March test becomes on RTL.",
    )(f)


def interactive(quiet: bool) -> bool:
    """Show a progress line (on a terminal, unless ``--quiet``)."""
    return sys.stderr.isatty() and not quiet


@contextmanager
def progress_line(enabled: bool, label: str) -> Iterator[Callable[[dict[str, Any]], None] | None]:
    """A rich progress line on a terminal; nothing otherwise."""
    if not enabled:
        yield None
        return
    from rich.console import Console
    from rich.progress import BarColumn, Progress, TextColumn, TimeElapsedColumn

    console = Console(stderr=True)
    with Progress(
        TextColumn("[bold]{task.fields[phase]:<9}"),
        BarColumn(),
        TextColumn("{task.description}"),
        TimeElapsedColumn(),
        console=console,
        transient=True,
    ) as prog:
        task = prog.add_task(label, total=None, phase="build")

        def update(rec: dict[str, Any]) -> None:
            total = rec.get("total")
            done = rec.get("done")
            desc = str(rec.get("what", "")) + (f" {done}/{total}" if total and done is not None else "")
            prog.update(
                task,
                phase=str(rec.get("phase", "")),
                description=desc[:60],
                total=float(total) if total else None,
                completed=float(done or 0),
            )

        yield update


def write_error_reports(json_file: str | None, junit_file: str | None, report: dict[str, Any], message: str) -> None:
    """The error reports asked for, when a job could not run."""
    from memcheck.report import write_json, write_junit

    if json_file:
        write_json(json_file, report)
    if junit_file:
        write_junit(junit_file, report, message)
