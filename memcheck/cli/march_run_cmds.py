"""``memcheck march run``: one March test alone on wrapper RTL, reporting its first failing operation.

Exit codes: 0 every read matched, 1 a read failed, 2 bad input or tool failure. The simulator side
is imported only when the command runs.
"""

from __future__ import annotations

from typing import Any

import click

from memcheck.cli import EXIT_FAIL, EXIT_OK
from memcheck.cli._options import address_order_options, resolve_seed, seed_option
from memcheck.cli._sim_options import (
    DEFAULTS,
    interactive,
    output_options,
    pause_cycles_option,
    progress_line,
    write_error_reports,
)
from memcheck.cli.march_cmds import dft_library_option, load_tests, march_group
from memcheck.diagnose.from_runs import FAIL_LOG_LIMIT
from memcheck.errors import MemcheckError
from memcheck.march.backgrounds import BACKGROUND_NAMES
from memcheck.march.orders import parse_layout


@march_group.command("run")
@click.argument("contract_file", type=click.Path(dir_okay=False))
@click.argument("name_or_notation")
@address_order_options
@click.option(
    "--backgrounds",
    default=DEFAULTS.backgrounds,
    help=f"Comma-separated data backgrounds: {', '.join(BACKGROUND_NAMES)}, std0..stdK or a hex word "
    "(default: solid for 1-bit words, else standard, as every command).",
)
@click.option(
    "--layout",
    help="Physical array ROWSxCOLS (rows x cols = words), for row-fast/col-fast orders and physical backgrounds.",
)
@seed_option
@click.option(
    "--port",
    help="NAME of a port that reads and writes, or WRITER,READER; default: the first "
    "readwrite port, else the first write and the first read port.",
)
@pause_cycles_option
@dft_library_option
@click.option(
    "--fail-log",
    "fail_log",
    type=click.Path(dir_okay=False),
    default=None,
    help="Write every failing March read as a fail log (docs/diagnose.md) that memcheck diagnose reads "
    "back; the run then goes on past its first failure.",
)
@click.option(
    "--fail-log-limit",
    "fail_log_limit",
    type=click.IntRange(min=1),
    default=FAIL_LOG_LIMIT,
    show_default=True,
    help="Most rows the --fail-log holds (the first failing reads; the log says when it is cut).",
)
@click.option(
    "--max-ops",
    type=click.IntRange(min=1),
    default=DEFAULTS.max_ops,
    show_default=True,
    help="Refuse streams longer than this: a safety limit on run time (memory does not grow with "
    "the stream; RTL simulation runs some 10 to 100 thousand operations a second).",
)
@output_options(
    "Folder for the replay file, waveform and text report [default: memcheck-out/NAME/march; "
    "the build is shared with memcheck check].",
    "Do not write the waveform of the failing run.",
)
def march_run(
    contract_file: str,
    name_or_notation: str,
    layout: str | None,
    seed: int | None,
    json_file: str | None,
    no_waveform: bool,
    quiet: bool,
    library: str | None,
    fail_log: str | None,
    fail_log_limit: int,
    **fields: Any,
) -> int:
    """Run NAME_OR_NOTATION (library name or March notation) alone on the RTL of CONTRACT_FILE.

    One operation per clock cycle under Icarus Verilog; every read is compared with the contract's
    reference model and with the March expectation. Reports pass, or the first failing operation:
    element, operation, address, background, expected and got, cycle, with a replay file and a
    waveform. Exit 0 pass, 1 failure (modelled behaviour only; not sign-off), 2 bad input.
    """
    from memcheck.diagnose.from_runs import write_march_run_log
    from memcheck.report import error_dict, render_march_report, write_reports
    from memcheck.sim import run_march

    seed = resolve_seed(seed)
    try:
        opts = DEFAULTS.replace(
            layout=parse_layout(layout) if layout else None, seed=seed, waveform=not no_waveform, **fields
        )
        _, (test,) = load_tests((name_or_notation,), library, None)
        if not quiet:
            bgs = opts.backgrounds or "default (solid for 1-bit words, else standard)"
            click.echo(
                f"memcheck march run {contract_file} {name_or_notation!r}: order {opts.order}, seed {seed}, "
                f"backgrounds {bgs}"
            )
        with progress_line(interactive(quiet), "march run") as update:
            result = run_march(
                contract_file, test, opts, on_progress=update, fail_reads=fail_log_limit if fail_log else 0
            )
    except MemcheckError as exc:
        rep = error_dict(contract_file, str(exc), seed, job="march run", test=name_or_notation)
        write_error_reports(json_file, None, rep, str(exc))
        raise
    assert result.out_dir is not None
    write_reports(result, json_file=json_file, text_file=result.out_dir / "report.txt")
    click.echo(result.summary() if quiet else render_march_report(result))
    if fail_log:
        rows = write_march_run_log(result, fail_log, name_or_notation, library)
        total = int(str(result.extra.get("failing_reads_total", len(rows))))
        cut = f"; the first {len(rows)} of {total}: --fail-log-limit" if total > len(rows) else ""
        click.echo(f"wrote {fail_log} ({len(rows)} failing read{'s' if len(rows) != 1 else ''}{cut})")
    return EXIT_OK if result.passed else EXIT_FAIL
