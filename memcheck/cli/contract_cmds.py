"""``memcheck contract``: validate a contract file and show what it promises."""

from __future__ import annotations

import click
from rich.console import Console
from rich.markup import escape
from rich.table import Table

from memcheck.cli import cli
from memcheck.contract import Contract, key_explanations, load_contract


@cli.group("contract")
def contract_group() -> None:
    """Inspect memory contract files."""


def _writes(c: Contract) -> str:
    m = c.memory
    if m.bit_mask:
        return "bit mask"
    if m.lane_map is not None:
        return f"{m.lanes} lanes of {', '.join(map(str, m.lane_map))} bits (LSB first)"
    if m.lane_width:
        return f"{m.lanes} lanes of {m.lane_width} bits"
    return "whole-word"


@contract_group.command("validate")
@click.argument("contract_file", type=click.Path(dir_okay=False))
def validate(contract_file: str) -> None:
    """Check CONTRACT_FILE and summarise it; exit 2 with the first problem found."""
    c = load_contract(contract_file)
    m = c.memory
    console = Console()
    console.print(f"[bold]{contract_file}[/bold]: valid contract")
    t = Table(show_header=False, box=None)
    t.add_row("geometry", f"{m.words} words x {m.width} bits")
    t.add_row("writes", _writes(c))
    t.add_row("read latency", str(m.read_latency))
    for key in ("read_during_write", "collision", "write_collision", "initial", "idle_read_data"):
        t.add_row(key, str(getattr(m, key)))
    for p in c.ports:
        t.add_row(f"port {p.name}", f"{p.role}: " + ", ".join(f"{k}={v}" for k, v in p.pins().items()))
    if c.reset:
        t.add_row(
            "reset",
            f"{c.reset.signal} ({'active low' if c.reset.active_low else 'active high'}, {c.reset.cycles} cycles)",
        )
    for key, meaning in key_explanations(c):
        t.add_row(escape(key), escape(meaning))
    console.print(t)
    unchecked = c.unchecked_behaviours()
    if unchecked:
        console.print("Not promised by this contract (left unknown, so never checked):")
        for u in unchecked:
            console.print(f"  - {escape(u)}")
