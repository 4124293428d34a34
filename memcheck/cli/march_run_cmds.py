"""``memcheck march run``: one March test alone on wrapper RTL, reporting its first failing operation.

Exit codes: 0 every read matched, 1 a read failed, 2 bad input or tool failure. The simulator side
is imported only when the command runs.
"""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

import click

from memcheck.cli import EXIT_FAIL, EXIT_OK
from memcheck.cli._options import address_order_options
from memcheck.cli.march_cmds import march_group
from memcheck.errors import MemcheckError
from memcheck.march.backgrounds import BACKGROUND_NAMES
from memcheck.march.orders import parse_layout


def _write_json(path: str, obj: dict[str, Any]) -> None:
    from memcheck._atomic import write_text_atomic

    write_text_atomic(path, json.dumps(obj, indent=1) + "\n")


@march_group.command("run")
@click.argument("contract_file", type=click.Path(dir_okay=False))
@click.argument("name_or_notation")
@address_order_options
@click.option(
    "--backgrounds",
    default="standard",
    show_default=True,
    help=f"Comma-separated data backgrounds: {', '.join(BACKGROUND_NAMES)}, std0..stdK or a hex word.",
)
@click.option(
    "--layout",
    help="Physical array ROWSxCOLS (rows x cols = words), for row-fast/col-fast orders and physical backgrounds.",
)
@click.option(
    "--seed",
    type=click.IntRange(min=0),
    default=None,
    help="Start of the LFSR order (--order lfsr); default: a fresh one, printed.",
)
@click.option(
    "--port",
    help="NAME of a port that reads and writes, or WRITER,READER; default: the first "
    "readwrite port, else the first write and the first read port.",
)
@click.option(
    "--pause-cycles",
    type=click.IntRange(min=0),
    default=100,
    show_default=True,
    help="Quiet cycles each delay element (Del) becomes on RTL.",
)
@click.option(
    "--max-ops",
    type=click.IntRange(min=1),
    default=50_000_000,
    show_default=True,
    help="Refuse streams longer than this: a safety limit on run time (memory does not grow with "
    "the stream; RTL simulation runs some 10 to 100 thousand operations a second).",
)
@click.option("--json", "json_file", type=click.Path(dir_okay=False), help="Write the JSON report here.")
@click.option(
    "--out",
    "out_dir",
    type=click.Path(file_okay=False),
    help="Folder for the replay file, waveform and text report [default: memcheck-out/NAME/march; "
    "the build is shared with memcheck check].",
)
@click.option(
    "--stall-timeout",
    type=click.FloatRange(min=0.5),
    default=30.0,
    show_default=True,
    help="Seconds without progress before the simulation is declared stalled.",
)
@click.option("--no-waveform", is_flag=True, help="Do not write the waveform of the failing run.")
@click.option("--quiet", "-q", is_flag=True, help="Print only the summary.")
def march_run(
    contract_file: str,
    name_or_notation: str,
    order: str,
    any_order: str,
    backgrounds: str,
    layout: str | None,
    seed: int | None,
    port: str | None,
    pause_cycles: int,
    max_ops: int,
    json_file: str | None,
    out_dir: str | None,
    stall_timeout: float,
    no_waveform: bool,
    quiet: bool,
) -> int:
    """Run NAME_OR_NOTATION (library name or March notation) alone on the RTL of CONTRACT_FILE.

    One operation per clock cycle under Icarus Verilog; every read is compared with the contract's
    reference model and with the March expectation. Reports pass, or the first failing operation:
    element, operation, address, background, expected and got, cycle, with a replay file and a
    waveform. Exit 0 pass, 1 failure (modelled behaviour only; not sign-off), 2 bad input.
    """
    from memcheck.sim.march_run import MarchRunOptions, run_march

    try:
        opts = MarchRunOptions(
            order=order,
            backgrounds=backgrounds,
            layout=parse_layout(layout) if layout else None,
            any_order=any_order,
            seed=seed,
            port=port,
            pause_cycles=pause_cycles,
            max_ops=max_ops,
            out_dir=Path(out_dir) if out_dir else None,
            stall_seconds=stall_timeout,
            waveform=not no_waveform,
        )
        if not quiet:
            click.echo(
                f"memcheck march run {contract_file} {name_or_notation!r}: order {order}"
                + (f", seed {seed}" if order == "lfsr" and seed is not None else "")
                + f", backgrounds {backgrounds}"
            )
        result = run_march(contract_file, name_or_notation, opts)
    except MemcheckError as exc:
        if json_file:
            from memcheck.report.text import DISCLAIMER

            _write_json(
                json_file,
                {
                    "verdict": "error",
                    "tool": "memcheck",
                    "contract": contract_file,
                    "test": name_or_notation,
                    "first_failure": None,
                    "error": str(exc),
                    "note": DISCLAIMER,
                },
            )
        raise
    assert result.out_dir is not None
    from memcheck._atomic import write_text_atomic

    text = result.render()
    write_text_atomic(result.out_dir / "report.txt", text + "\n")
    if json_file:
        _write_json(json_file, result.to_json())
    click.echo(result.summary() if quiet else text)
    return EXIT_OK if result.passed else EXIT_FAIL
