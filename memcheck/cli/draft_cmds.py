"""``memcheck contract draft``: a contract skeleton from a top module's pins.

Icarus elaborates the top (the simulator side, imported only when the command runs); the guessing
is pure (:mod:`memcheck.contract.draft`).
"""

from __future__ import annotations

from pathlib import Path

import click

from memcheck._atomic import write_text_atomic
from memcheck.cli.contract_cmds import contract_group
from memcheck.contract.draft import DraftPin, build_draft, relative_sources, render_draft
from memcheck.errors import UsageError


@contract_group.command("draft")
@click.argument("sources", nargs=-1, required=True, type=click.Path(dir_okay=False))
@click.option("--top", required=True, help="The wrapper module whose pins become the contract's ports.")
@click.option(
    "-o",
    "--output",
    type=click.Path(dir_okay=False),
    default=None,
    help="Contract file to write (atomically); omitted: print to standard output.",
)
@click.option("-I", "--include-dir", "include_dirs", multiple=True, type=click.Path(file_okay=False))
@click.option("--force", is_flag=True, help="Replace an existing output file.")
def draft(sources: tuple[str, ...], top: str, output: str | None, include_dirs: tuple[str, ...], force: bool) -> None:
    """Draft a contract from the pins of module TOP in SOURCES (Verilog files).

    Every guessed line is marked "check this"; behaviour keys hold their defaults with what each
    means. The draft passes `memcheck contract validate` as written.
    """
    out = Path(output) if output else None
    if out is not None and out.exists() and not force:
        raise UsageError(f"{out} already exists; pass --force to replace it, or choose another -o file.")
    from memcheck.sim.plumbing.elaborate import top_ports

    ports = top_ports([Path(s) for s in sources], top, [Path(d) for d in include_dirs])
    d = build_draft([DraftPin(p.name, p.direction, p.width) for p in ports], top)
    folder = out.parent if out is not None else Path.cwd()
    text = render_draft(d, relative_sources([Path(s) for s in sources], folder))
    if out is None:
        click.echo(text, nl=False)
        return
    write_text_atomic(out, text)
    click.echo(f"wrote {out}: {len(d.ports)} port(s), {d.words} x {d.width}; check every line marked 'check this'.")
