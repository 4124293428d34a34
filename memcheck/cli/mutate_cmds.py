"""``memcheck mutate``: how strong the check is on the user's own wrapper, measured with mutants.

Exit codes: 0 the run completed (and the kill rate reached ``--fail-under`` when given), 1 the kill
rate of non-equivalent mutants is below ``--fail-under``, 2 bad input or tool failure.
"""

from __future__ import annotations

import json

import click

from memcheck.cli import EXIT_FAIL, EXIT_OK, cli
from memcheck.cli._options import resolve_seed, seed_option
from memcheck.cli._sim_options import DEFAULTS
from memcheck.errors import MemcheckError
from memcheck.sim.options import SimOptions


@cli.command("mutate")
@click.argument("contract_file", type=click.Path(dir_okay=False))
@click.option(
    "--mutants",
    type=int,
    default=50,
    show_default=True,
    help="Mutants drawn among all candidates (all of them when there are fewer).",
)
@seed_option
@click.option("--workers", type=int, default=2, show_default=True, help="Worker processes checking mutants.")
@click.option("--json", "json_file", type=click.Path(dir_okay=False), help="Write the JSON report here.")
@click.option(
    "--out",
    "out_dir",
    type=click.Path(file_okay=False),
    help="Scratch folder for mutated sources, builds and checks [default: memcheck-out/NAME/mutate].",
)
@click.option(
    "--examples",
    type=click.IntRange(min=0),
    default=DEFAULTS.examples,
    show_default=True,
    help="Short Hypothesis examples of each mutant's check.",
)
@click.option(
    "--bulk-examples",
    type=click.IntRange(min=0),
    default=DEFAULTS.bulk_examples,
    show_default=True,
    help="Bulk Hypothesis examples of each mutant's check.",
)
@click.option(
    "--stall-timeout",
    type=click.FloatRange(min=0.5),
    default=DEFAULTS.stall_timeout,
    show_default=True,
    help="Seconds without progress before a mutant's simulation counts as hung (killed, 'hang').",
)
@click.option(
    "--fail-under",
    type=click.FloatRange(0, 100),
    default=None,
    help="Exit 1 when the kill rate of non-equivalent mutants is below this percentage.",
)
@click.option(
    "--only",
    "only",
    multiple=True,
    help="Run just this mutant id of an earlier run (M007; repeatable), with the same seed to repeat its check.",
)
@click.option("--quiet", "-q", is_flag=True, help="Print only the summary.")
def mutate(
    contract_file: str,
    mutants: int,
    seed: int | None,
    workers: int,
    json_file: str | None,
    out_dir: str | None,
    examples: int,
    bulk_examples: int,
    stall_timeout: float,
    fail_under: float | None,
    only: tuple[str, ...],
    quiet: bool,
) -> int:
    """Measure how strong the check is on the wrapper RTL of CONTRACT_FILE.

    Makes small faults (mutants) in the wrapper's own source files ([rtl] mutate, default: the file
    defining top; never the macro models), checks each with the normal check in worker processes, and
    reports killed, survived and not compiled mutants and the kill rate; each survivor is printed as a
    source diff with the reason it may be equivalent or a hole in the check. Mutants are written to a
    scratch folder, never over your sources.
    """
    from memcheck._atomic import write_text_atomic
    from memcheck.mutation import mutate_contract
    from memcheck.report import error_dict, write_json
    from memcheck.report.mutation_report import render_mutation_report, render_outcome

    seed = resolve_seed(seed)
    click.echo(f"memcheck mutate {contract_file}: seed {seed}, {mutants} mutants, {workers} worker(s)")
    opts = SimOptions(examples=examples, bulk_examples=bulk_examples, stall_timeout=stall_timeout)
    try:
        report = mutate_contract(
            contract_file,
            mutants=mutants,
            seed=seed,
            workers=workers,
            options=opts,
            out_dir=out_dir,
            on_outcome=None if quiet else lambda o: click.echo(render_outcome(o)),
            only=only,
        )
    except MemcheckError as exc:
        if json_file:
            write_json(json_file, error_dict(contract_file, str(exc), seed, job="mutate"))
        raise
    if json_file:
        write_text_atomic(json_file, json.dumps(report.to_json(), indent=2) + "\n")
    click.echo(report.summary() if quiet else "\n" + render_mutation_report(report))
    if not quiet and report.outcomes:
        budget = (
            ""
            if (examples, bulk_examples) == (DEFAULTS.examples, DEFAULTS.bulk_examples)
            else (f" --examples {examples} --bulk-examples {bulk_examples}")
        )
        ident = report.outcomes[0].ident
        click.echo(f"one mutant again: memcheck mutate {contract_file} --seed {seed}{budget} --only {ident}")
    rate = report.kill_rate_non_equivalent
    if fail_under is not None and rate is not None and 100 * rate < fail_under:
        click.echo(f"kill rate {100 * rate:.1f}% of the non-equivalent mutants is below --fail-under {fail_under:g}%")
        return EXIT_FAIL
    return EXIT_OK
