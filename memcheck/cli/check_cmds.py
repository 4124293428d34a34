"""``memcheck check``, ``memcheck replay`` and ``memcheck demo``: prove wrapper RTL against its contract.

Exit codes: 0 the RTL conforms (replay: the trace now conforms), 1 a difference was found,
2 bad input or tool failure. The simulator side is imported only when a command runs.
"""

from __future__ import annotations

import tomllib
from pathlib import Path
from typing import TYPE_CHECKING, Any

import click

from memcheck.cli import EXIT_ERROR, EXIT_FAIL, EXIT_OK, cli
from memcheck.cli._options import resolve_seed, seed_option
from memcheck.cli._sim_options import (
    DEFAULTS,
    interactive,
    output_options,
    pause_cycles_option,
    progress_line,
    write_error_reports,
)
from memcheck.errors import MemcheckError
from memcheck.examples import examples_dir
from memcheck.sim.options import SimOptions

if TYPE_CHECKING:
    from memcheck.records import CheckResult

_PHASES = DEFAULTS.phases


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
    options: SimOptions,
    *,
    json_file: str | None = None,
    junit_file: str | None = None,
    quiet: bool = False,
    show_report: bool = True,
) -> CheckResult:
    """The check command's work, shared with the demo; writes reports, errors included."""
    from memcheck.report import error_dict, render_report, write_reports
    from memcheck.sim import check_contract

    opts = options.replace(seed=resolve_seed(options.seed))
    if not quiet:
        click.echo(
            f"memcheck check {contract_file}: seed {opts.seed}, {opts.examples} examples, "
            f"{opts.bulk_examples} bulk examples"
        )
    try:
        with progress_line(interactive(quiet), "checking") as update:
            result = check_contract(contract_file, opts, on_progress=update)
    except MemcheckError as exc:
        ctx = click.get_current_context(silent=True)
        sim_tb = getattr(exc, "sim_traceback", "")
        if sim_tb and ctx is not None and (ctx.find_root().obj or {}).get("debug"):
            click.echo(f"traceback in the simulation:\n{sim_tb}", err=True)
        write_error_reports(json_file, junit_file, error_dict(contract_file, str(exc), opts.seed), str(exc))
        raise
    assert result.out_dir is not None
    write_reports(result, json_file=json_file, junit_file=junit_file, text_file=result.out_dir / "report.txt")
    if show_report:
        click.echo(result.summary() if quiet else render_report(result))
    return result


@cli.command("check")
@click.argument("contract_files", metavar="CONTRACT_FILE...", nargs=-1, required=True, type=click.Path(dir_okay=False))
@click.option(
    "--jobs",
    "-j",
    type=click.IntRange(min=1),
    default=None,
    help="Several contracts: worker processes at a time [default: the processors available].",
)
@click.option(
    "--examples",
    type=click.IntRange(min=0),
    default=DEFAULTS.examples,
    show_default=True,
    help="Short Hypothesis examples in the property phase (a handful of operations each).",
)
@click.option(
    "--bulk-examples",
    type=click.IntRange(min=0),
    default=DEFAULTS.bulk_examples,
    show_default=True,
    help="Bulk Hypothesis examples in the property phase (thousands of operations each; more = deeper and slower).",
)
@seed_option
@click.option("--junit", "junit_file", type=click.Path(dir_okay=False), help="Write JUnit XML here (for CI).")
@click.option("--phases", default=",".join(_PHASES), show_default=True, help="Phases to run, comma separated.")
@click.option("--march", default=DEFAULTS.march, show_default=True, help="March test of the sweep phase.")
@click.option(
    "--backgrounds",
    default=DEFAULTS.backgrounds,
    help="Data backgrounds of the sweep (default: solid for 1-bit words, else standard).",
)
@click.option(
    "--sweep-ops",
    type=click.IntRange(min=0),
    default=DEFAULTS.sweep_ops,
    show_default=True,
    help="Skip the sweep when it would take more operations than this.",
)
@click.option(
    "--directed-examples",
    type=click.IntRange(min=0),
    default=DEFAULTS.directed_examples,
    show_default=True,
    help="Directed examples the property phase may add for cover points the random examples left unhit.",
)
@click.option(
    "--require-coverage",
    is_flag=True,
    help="Exit 1 when any cover point of the contract was not hit (the holes are named).",
)
@pause_cycles_option
@output_options(
    "Folder for the build, replay file, waveform and text report [default: memcheck-out/NAME].",
    "Do not write the waveform of a failing trace.",
)
def check(
    contract_files: tuple[str, ...],
    jobs: int | None,
    phases: str,
    json_file: str | None,
    junit_file: str | None,
    out_dir: str | None,
    no_waveform: bool,
    quiet: bool,
    **fields: Any,
) -> int:
    """Prove the RTL named by CONTRACT_FILE against the contract under Icarus Verilog.

    Runs a smoke phase, a March sweep and Hypothesis property examples (short ones, then bulk ones of
    thousands of operations); on a difference prints the
    shortest trace found with expected and actual data bit by bit, writes a replay file and a waveform,
    and exits 1. Exit 0: conforms (for the modelled behaviour only; not sign-off). Exit 2: bad input.
    The report lists the cover points of the contract with their hit counts; holes change the exit
    code only with --require-coverage.

    Several CONTRACT_FILEs run in parallel worker processes (-j), one seed for all, each in its own
    output folder (under --out when given); one summary table; the exit code is the worst verdict's,
    and --json/--junit cover every contract.
    """
    opts = DEFAULTS.replace(phases=_parse_phases(phases), out_dir=out_dir, waveform=not no_waveform, **fields)
    if len(contract_files) > 1:
        from memcheck.cli.check_many import run_many

        many = opts.replace(seed=resolve_seed(opts.seed))
        return run_many(contract_files, many, jobs=jobs, json_file=json_file, junit_file=junit_file, quiet=quiet)
    result = run_check(contract_files[0], opts, json_file=json_file, junit_file=junit_file, quiet=quiet)
    if not result.passed:
        return EXIT_FAIL
    if opts.require_coverage and not result.covered and result.coverage is not None:
        click.echo(f"--require-coverage: cover points not hit: {result.coverage.hole_text()}.", err=True)
        return EXIT_FAIL
    return EXIT_OK


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
    from memcheck.sim import replay_file as run_replay

    res = run_replay(replay_file, out_dir=Path(out_dir) if out_dir else None, waveform=not no_waveform)
    f = res.failure
    click.echo(f"memcheck replay {replay_file}: {len(f.trace)} cycles against {res.contract_path}")
    if res.contract_changed:
        click.echo("note: the contract file changed since the replay file was written.")
    start = start_description(f.preamble, res.checked.start, res.contract)
    click.echo(render_failure(res.contract, res.checked, start_text=start))
    if res.checked.ok:
        click.echo("\nThe trace now conforms to the contract.")
    elif res.reproduced:
        click.echo("\nReproduced: the same mismatch as recorded.")
    else:
        click.echo("\nA difference remains, but not the one recorded (the RTL or the contract changed).")
    if res.waveform_file:
        click.echo(f"waveform of the trace alone: {res.waveform_file}")
    return EXIT_OK if res.checked.ok else EXIT_FAIL


DEMO_PAIR = ("packet_buffer", "packet_buffer_lane_bug")


@cli.command("demo")
@click.option("--examples", type=click.IntRange(min=0), default=DEFAULTS.examples, show_default=True)
@click.option("--bulk-examples", type=click.IntRange(min=0), default=DEFAULTS.bulk_examples, show_default=True)
@seed_option
@click.option("--out", "out_dir", type=click.Path(file_okay=False), default="memcheck-out/demo", show_default=True)
def demo(examples: int, bulk_examples: int, seed: int | None, out_dir: str) -> int:
    """Check one conforming and one buggy example wrapper, and show the minimal failing trace."""
    root = examples_dir()
    index = {e["name"]: e for e in tomllib.loads((root / "index.toml").read_text(encoding="utf-8"))["example"]}
    good, bad = (index[n] for n in DEMO_PAIR)
    seed = resolve_seed(seed)
    click.echo(f"memcheck demo: seed {seed}")
    ok = True
    for ex in (good, bad):
        click.echo(f"\n=== {ex['name']}: {ex['scenario']}" + (f" (seeded bug: {ex['bug']})" if ex["bug"] else ""))
        opts = DEFAULTS.replace(
            examples=examples, bulk_examples=bulk_examples, seed=seed, out_dir=Path(out_dir) / ex["name"]
        )
        result = run_check(str(root / ex["contract"]), opts)
        ok = ok and result.verdict == ex["expect"]
    click.echo(
        "\nThe demo found what it should: the conforming wrapper passes and the buggy one fails."
        if ok
        else "\nUnexpected verdict: see above."
    )
    return EXIT_OK if ok else EXIT_ERROR
