"""``memcheck check A.toml B.toml ... [-j N]``: several contracts in one command.

Each contract is checked in a worker process of its own (``-j`` of them at a time), with one seed
for all, and writes to its own output folder (``memcheck-out/<name>``, names made distinct when two
files share one), so builds never collide. The command prints a line as each contract finishes,
the report of every contract that failed or could not run, then one summary table (contract,
verdict, trace length, time); it exits with the worst verdict (0 all conform, 1 a difference, 2 an
error). ``--json`` and ``--junit`` cover every contract. One contract alone keeps the single-check
command's behaviour and output (:mod:`memcheck.cli.check_cmds`).
"""

from __future__ import annotations

import os
import time
from collections.abc import Iterator, Sequence
from concurrent.futures import Future, ProcessPoolExecutor, as_completed
from pathlib import Path

import click

from memcheck._outdirs import distinct_out_dirs
from memcheck.errors import MemcheckError, UsageError
from memcheck.report.many import EXIT_BY_VERDICT, ContractOutcome, worst_verdict, write_many_reports
from memcheck.sim.options import SimOptions


def check_one(contract: str, options: SimOptions) -> ContractOutcome:
    """Check one contract (in a worker process): never raises for bad input, which becomes an
    "error" outcome carrying the message, so the other contracts still run."""
    from memcheck.report import render_report, report_dict, write_reports
    from memcheck.sim import check_contract

    t0 = time.perf_counter()
    try:
        result = check_contract(contract, options)
    except MemcheckError as exc:
        message = str(exc)
        return ContractOutcome(
            contract, "error", time.perf_counter() - t0, None, _error(contract, message, options), message
        )
    except Exception as exc:  # a bug of ours must not hide the other contracts' verdicts
        message = f"{contract}: internal error ({exc.__class__.__name__}: {exc}); rerun it alone with --debug"
        return ContractOutcome(
            contract, "error", time.perf_counter() - t0, None, _error(contract, message, options), message
        )
    text = render_report(result)
    if result.out_dir is not None:
        write_reports(result, text_file=result.out_dir / "report.txt")
    trace = None if result.failure is None else len(result.failure.trace)
    return ContractOutcome(contract, str(result.verdict), result.seconds, trace, report_dict(result), text)


def _error(contract: str, message: str, options: SimOptions) -> dict[str, object]:
    from memcheck.report import error_dict

    return error_dict(contract, message, options.seed)


def plan(contracts: Sequence[str], options: SimOptions) -> list[SimOptions]:
    """Each contract's options: the shared ones with its own output folder (``--out`` is their parent).

    Raises
    ------
    UsageError
        The same contract file named twice.
    """
    from memcheck.sim.session import DEFAULT_OUT

    paths = [Path(c) for c in contracts]
    seen: dict[Path, str] = {}
    for c, p in zip(contracts, paths, strict=True):
        if p.resolve() in seen:
            raise UsageError(f"the contract {c} is named twice (also as {seen[p.resolve()]}); name each contract once.")
        seen[p.resolve()] = c
    base = Path(options.out_dir) if options.out_dir is not None else DEFAULT_OUT
    return [options.replace(out_dir=d, build_dir=None) for d in distinct_out_dirs(paths, base)]


def _run(contracts: Sequence[str], plans: Sequence[SimOptions], jobs: int) -> Iterator[ContractOutcome]:
    """Outcomes in the order they finish."""
    if jobs <= 1:
        for c, o in zip(contracts, plans, strict=True):
            yield check_one(c, o)
        return
    with ProcessPoolExecutor(max_workers=jobs) as pool:
        futures: list[Future[ContractOutcome]] = [
            pool.submit(check_one, c, o) for c, o in zip(contracts, plans, strict=True)
        ]
        try:
            for f in as_completed(futures):
                yield f.result()
        except BaseException:  # Ctrl-C or SIGTERM: start no further contract
            pool.shutdown(wait=False, cancel_futures=True)
            raise


def default_jobs(count: int) -> int:
    """Worker processes when ``-j`` is not given: the processors this process may use, at most one per contract."""
    cpus = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else (os.cpu_count() or 1)
    return max(1, min(count, cpus))


def summary_table(outcomes: Sequence[ContractOutcome], width: int) -> str:
    """The summary table (contract, verdict, trace length, time) drawn with rich, as text."""
    from rich import box
    from rich.console import Console
    from rich.table import Table

    table = Table(box=box.SIMPLE_HEAD, show_edge=False, pad_edge=False)
    table.add_column("contract", overflow="fold")
    table.add_column("verdict")
    table.add_column("trace (cycles)", justify="right")
    table.add_column("time (s)", justify="right")
    for o in outcomes:
        trace = "-" if o.trace_cycles is None else str(o.trace_cycles)
        table.add_row(o.contract, o.verdict, trace, f"{o.seconds:.1f}")
    console = Console(width=width, no_color=True, highlight=False, force_terminal=False, record=True)
    with console.capture() as cap:
        console.print(table)
    return cap.get().rstrip()


def run_many(
    contracts: Sequence[str],
    options: SimOptions,
    *,
    jobs: int | None,
    json_file: str | None,
    junit_file: str | None,
    quiet: bool,
) -> int:
    """The many-contract command's work; returns the exit code (the worst verdict's)."""
    import memcheck.sim.jobs.check  # noqa: F401  (the sim extra, missing: one sentence; forked workers inherit it)
    from memcheck.cli._tables import terminal_width

    assert options.seed is not None
    plans = plan(contracts, options)
    workers = default_jobs(len(contracts)) if jobs is None else min(jobs, len(contracts))
    click.echo(
        f"memcheck check: {len(contracts)} contracts, seed {options.seed}, {options.examples} examples, "
        f"{options.bulk_examples} bulk examples, {workers} worker process(es)"
    )
    t0 = time.perf_counter()
    done: dict[str, ContractOutcome] = {}
    for o in _run(contracts, plans, workers):
        done[o.contract] = o
        if not quiet:
            click.echo(f"[{len(done)}/{len(contracts)}] {o.verdict:<5} {o.contract} ({o.seconds:.1f} s)")
    outcomes = [done[c] for c in contracts]
    seconds = time.perf_counter() - t0
    write_many_reports(outcomes, options.seed, seconds, json_file=json_file, junit_file=junit_file)
    if not quiet:
        for o in outcomes:
            if o.verdict != "pass":
                click.echo(f"\n=== {o.contract}: {o.verdict}\n{o.text}")
    click.echo("\n" + summary_table(outcomes, terminal_width()))
    counts = {v: sum(o.verdict == v for o in outcomes) for v in ("pass", "fail", "error")}
    click.echo(
        f"\n{counts['pass']} conform, {counts['fail']} differ, {counts['error']} could not run; "
        f"{seconds:.1f} s with {workers} worker process(es); seed {options.seed}"
    )
    return EXIT_BY_VERDICT[worst_verdict(outcomes)]
