"""``memcheck check``, ``memcheck replay`` and ``memcheck demo``: prove wrapper RTL against its contract.

Exit codes: 0 the RTL conforms (replay: the trace now conforms), 1 a difference was found,
2 bad input or tool failure. The simulator side is imported only when a command runs.
"""

from __future__ import annotations

import random
import sys
import tomllib
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from pathlib import Path
from typing import TYPE_CHECKING, Any

import click

from memcheck.cli import EXIT_ERROR, EXIT_FAIL, EXIT_OK, cli
from memcheck.errors import MemcheckError
from memcheck.examples import examples_dir

if TYPE_CHECKING:
    from memcheck.sim.api import CheckResult

_PHASES = ("smoke", "sweep", "property")
_DEFAULT_EXAMPLES = 300
_DEFAULT_BULK = 100


def _echo(text: str = "", *, err: bool = False) -> None:
    click.echo(text, err=err)


@contextmanager
def _progress(enabled: bool, label: str) -> Iterator[Callable[[dict[str, Any]], None] | None]:
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
            phase = str(rec.get("phase", ""))
            what = str(rec.get("what", ""))
            total = rec.get("total")
            done = rec.get("done")
            desc = what + (f" {done}/{total}" if total and done is not None else "")
            prog.update(
                task,
                phase=phase,
                description=desc[:60],
                total=float(total) if total else None,
                completed=float(done or 0),
            )

        yield update


def _parse_phases(text: str) -> tuple[str, ...]:
    phases = tuple(p.strip() for p in text.split(",") if p.strip())
    bad = [p for p in phases if p not in _PHASES]
    if bad or not phases:
        raise click.BadParameter(
            f"{', '.join(bad) or '(empty)'}; allowed: a comma list of {', '.join(_PHASES)}", param_hint="--phases"
        )
    return phases


def run_check(
    contract_file: str,
    *,
    examples: int,
    seed: int | None,
    json_file: str | None,
    junit_file: str | None,
    out_dir: str | None,
    phases: tuple[str, ...],
    march: str,
    backgrounds: str,
    stall_timeout: float,
    waveform: bool,
    quiet: bool,
    sweep_ops: int = 2_000_000,
    show_report: bool = True,
    bulk_examples: int = _DEFAULT_BULK,
) -> CheckResult:
    """The check command's work, shared with the demo; writes reports, errors included."""
    from memcheck.report import error_dict, render_report, write_json, write_junit, write_reports
    from memcheck.sim.api import CheckOptions, check_contract

    if seed is None:
        seed = random.SystemRandom().randrange(1 << 32)
    interactive = sys.stderr.isatty() and not quiet
    if not quiet:
        _echo(f"memcheck check {contract_file}: seed {seed}, {examples} examples, {bulk_examples} bulk examples")
    opts = CheckOptions(
        examples=examples,
        bulk_examples=bulk_examples,
        seed=seed,
        phases=phases,
        march=march,
        backgrounds=backgrounds,
        out_dir=Path(out_dir) if out_dir else None,
        stall_seconds=stall_timeout,
        waveform=waveform,
        sweep_max_ops=sweep_ops,
    )
    try:
        with _progress(interactive, "checking") as update:
            result = check_contract(contract_file, opts, on_progress=update)
    except MemcheckError as exc:
        ctx = click.get_current_context(silent=True)
        sim_tb = getattr(exc, "sim_traceback", "")
        if sim_tb and ctx is not None and (ctx.find_root().obj or {}).get("debug"):
            _echo(f"traceback in the simulation:\n{sim_tb}", err=True)
        if json_file or junit_file:
            rep = error_dict(contract_file, str(exc), seed)
            if json_file:
                write_json(json_file, rep)
            if junit_file:
                write_junit(junit_file, rep, str(exc))
        raise
    assert result.out_dir is not None
    write_reports(result, json_file=json_file, junit_file=junit_file, text_file=result.out_dir / "report.txt")
    if show_report:
        _echo(result.summary() if quiet else render_report(result))
    return result


@cli.command("check")
@click.argument("contract_file", type=click.Path(dir_okay=False))
@click.option(
    "--examples",
    type=click.IntRange(min=0),
    default=_DEFAULT_EXAMPLES,
    show_default=True,
    help="Short Hypothesis examples in the property phase (a handful of operations each).",
)
@click.option(
    "--bulk-examples",
    type=click.IntRange(min=0),
    default=_DEFAULT_BULK,
    show_default=True,
    help="Bulk Hypothesis examples in the property phase (thousands of operations each; more = deeper and slower).",
)
@click.option(
    "--seed",
    type=click.IntRange(min=0, max=(1 << 64) - 1),
    default=None,
    help="Seed of the property phase; default: a fresh one, printed so the run can be repeated.",
)
@click.option("--json", "json_file", type=click.Path(dir_okay=False), help="Write the JSON report here.")
@click.option("--junit", "junit_file", type=click.Path(dir_okay=False), help="Write JUnit XML here (for CI).")
@click.option(
    "--out",
    "out_dir",
    type=click.Path(file_okay=False),
    help="Folder for the build, replay file, waveform and text report [default: memcheck-out/NAME].",
)
@click.option("--phases", default=",".join(_PHASES), show_default=True, help="Phases to run, comma separated.")
@click.option("--march", default="March C-", show_default=True, help="March test of the sweep phase.")
@click.option("--backgrounds", default="standard", show_default=True, help="Data backgrounds of the sweep.")
@click.option(
    "--sweep-ops",
    type=click.IntRange(min=0),
    default=2_000_000,
    show_default=True,
    help="Skip the sweep when it would take more operations than this.",
)
@click.option(
    "--stall-timeout",
    type=click.FloatRange(min=0.5),
    default=30.0,
    show_default=True,
    help="Seconds without progress before the simulation is declared stalled.",
)
@click.option("--no-waveform", is_flag=True, help="Do not write the waveform of a failing trace.")
@click.option("--quiet", "-q", is_flag=True, help="Print only the summary.")
def check(
    contract_file: str,
    examples: int,
    bulk_examples: int,
    seed: int | None,
    json_file: str | None,
    junit_file: str | None,
    out_dir: str | None,
    phases: str,
    march: str,
    backgrounds: str,
    sweep_ops: int,
    stall_timeout: float,
    no_waveform: bool,
    quiet: bool,
) -> int:
    """Prove the RTL named by CONTRACT_FILE against the contract under Icarus Verilog.

    Runs a smoke phase, a March sweep and Hypothesis property examples (short ones, then bulk ones of
    thousands of operations); on a difference prints the
    shortest trace found with expected and actual data bit by bit, writes a replay file and a waveform,
    and exits 1. Exit 0: conforms (for the modelled behaviour only; not sign-off). Exit 2: bad input.
    """
    result = run_check(
        contract_file,
        examples=examples,
        seed=seed,
        json_file=json_file,
        junit_file=junit_file,
        out_dir=out_dir,
        phases=_parse_phases(phases),
        march=march,
        backgrounds=backgrounds,
        stall_timeout=stall_timeout,
        waveform=not no_waveform,
        quiet=quiet,
        sweep_ops=sweep_ops,
        bulk_examples=bulk_examples,
    )
    return EXIT_OK if result.passed else EXIT_FAIL


@cli.command("replay")
@click.argument("replay_file", type=click.Path(dir_okay=False))
@click.option(
    "--out",
    "out_dir",
    type=click.Path(file_okay=False),
    help="Folder for the build and waveform [default: the replay file's folder].",
)
@click.option("--no-waveform", is_flag=True, help="Do not write the waveform.")
def replay(replay_file: str, out_dir: str | None, no_waveform: bool) -> int:
    """Re-run the trace in REPLAY_FILE against the contract's current RTL.

    Exit 1 while the trace still shows a difference, 0 once it conforms (for example after a fix).
    """
    from memcheck.report import render_failure
    from memcheck.report.text import start_description
    from memcheck.sim.api import replay_file as run_replay

    res = run_replay(replay_file, out_dir=Path(out_dir) if out_dir else None, waveform=not no_waveform)
    f = res.replay.failure
    _echo(f"memcheck replay {replay_file}: {len(f.trace)} cycles against {res.replay.contract_path}")
    if res.contract_changed:
        _echo("note: the contract file changed since the replay file was written.")
    _echo(
        render_failure(
            res.contract, res.checked, start_text=start_description(f.preamble, res.checked.start, res.contract)
        )
    )
    if res.checked.ok:
        _echo("\nThe trace now conforms to the contract.")
    elif res.reproduced:
        _echo("\nReproduced: the same mismatch as recorded.")
    else:
        _echo("\nA difference remains, but not the one recorded (the RTL or the contract changed).")
    if res.waveform_file:
        _echo(f"waveform of the trace alone: {res.waveform_file}")
    return EXIT_OK if res.checked.ok else EXIT_FAIL


DEMO_PAIR = ("packet_buffer", "packet_buffer_lane_bug")


@cli.command("demo")
@click.option("--examples", type=click.IntRange(min=0), default=_DEFAULT_EXAMPLES, show_default=True)
@click.option("--bulk-examples", type=click.IntRange(min=0), default=_DEFAULT_BULK, show_default=True)
@click.option("--seed", type=click.IntRange(min=0), default=1, show_default=True)
@click.option("--out", "out_dir", type=click.Path(file_okay=False), default="memcheck-out/demo", show_default=True)
def demo(examples: int, bulk_examples: int, seed: int, out_dir: str) -> int:
    """Check one conforming and one buggy example wrapper, and show the minimal failing trace."""
    root = examples_dir()
    index = {e["name"]: e for e in tomllib.loads((root / "index.toml").read_text(encoding="utf-8"))["example"]}
    good, bad = (index[n] for n in DEMO_PAIR)
    ok = True
    for ex in (good, bad):
        contract = root / ex["contract"]
        _echo(f"\n=== {ex['name']}: {ex['scenario']}" + (f" (seeded bug: {ex['bug']})" if ex["bug"] else ""))
        result = run_check(
            str(contract),
            examples=examples,
            seed=seed,
            json_file=None,
            junit_file=None,
            out_dir=str(Path(out_dir) / ex["name"]),
            phases=_PHASES,
            march="March C-",
            backgrounds="standard",
            stall_timeout=30.0,
            waveform=True,
            quiet=False,
            bulk_examples=bulk_examples,
        )
        ok = ok and result.verdict == ex["expect"]
    _echo(
        "\nThe demo found what it should: the conforming wrapper passes and the buggy one fails."
        if ok
        else "\nUnexpected verdict: see above."
    )
    return EXIT_OK if ok else EXIT_ERROR
