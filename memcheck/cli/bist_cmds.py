"""``memcheck bist generate|verify|lint``: hardware March BIST engines, proven equal to the Python stream."""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import Any, TypeVar

import click

from memcheck._atomic import write_text_atomic
from memcheck.bist.adapter import adapter_verilog, choose_port, half_period_ns, wrapper_unit
from memcheck.bist.lint import lint_file
from memcheck.bist.microcode import EnginePlan, plan_engine
from memcheck.bist.testbench import TbUnit, testbench_verilog
from memcheck.bist.verify import VerifyResult, run_on_wrapper, verify_engine
from memcheck.cli import EXIT_FAIL, EXIT_OK, cli
from memcheck.cli._options import address_order_options, resolve_seed, seed_option
from memcheck.cli.march_cmds import dft_library_option, load_tests
from memcheck.contract import Contract, PortSpec, load_contract
from memcheck.errors import BistError
from memcheck.march.orders import parse_layout

_F = TypeVar("_F", bound=Callable[..., Any])


@cli.group("bist")
def bist_group() -> None:
    """Hardware BIST: generate a March test engine in Verilog, verify it against the Python stream, lint it.

    Verdicts cover the modelled behaviour (the March test as memcheck expands it), not sign-off.
    """


def engine_options(f: _F) -> _F:
    """Options shared by ``generate`` and ``verify``: what the engine runs and on which memory."""
    opts = [
        click.option("--words", type=int, default=None, help="Words of the memory (from the contract if given)."),
        click.option("--width", type=int, default=None, help="Bits per word (from the contract if given)."),
        click.option(
            "--backgrounds",
            default=None,
            help="Data backgrounds: solid, checkerboard, row-stripe, col-stripe, standard, stdK or 0x.. words "
            "(default: solid for 1-bit words, else standard, as every command).",
        ),
        click.option(
            "--layout", default=None, help="Physical ROWSxCOLS (COLS a power of two) for stripes/checkerboard."
        ),
        click.option(
            "--pause-cycles", type=int, default=100, show_default=True, help="Quiet cycles per delay element."
        ),
        click.option(
            "--read-latency", type=int, default=None, help="READ_LATENCY default of the engine (1; or the contract's)."
        ),
        click.option("--module", "module", default="march_bist", show_default=True, help="Verilog module name."),
        click.option("--contract", "contract_path", type=click.Path(dir_okay=False), default=None, help="Contract."),
        click.option("--port", default=None, help="Contract port the engine drives (default: first readwrite port)."),
        seed_option,
        address_order_options,
        dft_library_option,
    ]
    for opt in reversed(opts):
        f = opt(f)
    return f


def _plan(test: str, kw: dict[str, Any]) -> tuple[EnginePlan, Contract | None, PortSpec | None]:
    contract: Contract | None = None
    port: PortSpec | None = None
    words, width, latency = kw["words"], kw["width"], kw["read_latency"]
    if kw["contract_path"] is not None:
        contract = load_contract(kw["contract_path"])
        port = choose_port(contract, kw["port"])
        m = contract.memory
        for name, given, real in (("--words", words, m.words), ("--width", width, m.width)):
            if given is not None and given != real:
                raise BistError(f"{name} {given} disagrees with the contract's memory ({m.words} x {m.width})")
        if latency is not None and latency != m.read_latency:
            raise BistError(f"--read-latency {latency} disagrees with the contract's read_latency = {m.read_latency}")
        words, width, latency = m.words, m.width, m.read_latency
    elif kw["port"] is not None:
        raise BistError("--port names a port of a contract; give the contract with --contract")
    if words is None or width is None:
        raise BistError("give the memory's --words and --width (or a --contract that has them)")
    _, (resolved,) = load_tests((test,), kw["library"], None)
    plan = plan_engine(
        resolved,
        words,
        width,
        order=kw["order"],
        any_order=kw["any_order"],
        backgrounds=kw["backgrounds"],
        layout=parse_layout(kw["layout"]) if kw["layout"] else None,
        seed=kw["seed"],
        pause_cycles=kw["pause_cycles"],
        read_latency=1 if latency is None else latency,
        module=kw["module"],
    )
    return plan, contract, port


def _resolve_seed(kw: dict[str, Any]) -> str:
    if kw["order"] != "lfsr":
        return ""
    kw["seed"] = resolve_seed(kw["seed"])
    return f", seed {kw['seed']}"


def _summary(plan: EnginePlan, seed_text: str) -> str:
    s = plan.stream
    return (
        f"{plan.module}: {plan.test.name or 'custom test'} on {plan.words} x {plan.width}, order {s.order.kind}"
        f"{seed_text}, backgrounds {', '.join(b.name for b in plan.backgrounds)}; {plan.operations} operations + "
        f"{plan.pause_total} pause cycles; a run takes {plan.cycles()} cycles (READ_LATENCY = {plan.read_latency})"
    )


@bist_group.command("generate")
@click.argument("test")
@engine_options
@click.option("-o", "--output", type=click.Path(dir_okay=False), default=None, help="Engine file (default MODULE.v).")
@click.option("--testbench", is_flag=True, help="Also write a self-checking testbench (MODULE_tb.v).")
def bist_generate(test: str, output: str | None, testbench: bool, **kw: Any) -> None:
    """Write a synthesizable Verilog-2005 March BIST engine for TEST (a library name or notation)."""
    from memcheck.bist.verilog import engine_verilog

    seed_text = _resolve_seed(kw)
    plan, contract, port = _plan(test, kw)
    click.echo(_summary(plan, seed_text))
    out = Path(output) if output else Path(f"{plan.module}.v")
    files = [write_text_atomic(out, engine_verilog(plan))]
    unit = TbUnit(plan, "engine")
    pre, half = 3, "5"
    if contract is not None and port is not None:
        half = half_period_ns(contract, port)
        files.append(
            write_text_atomic(out.with_name(f"{plan.module}_adapter.v"), adapter_verilog(plan, contract, port))
        )
        if testbench:
            unit = TbUnit(plan, "engine", None, wrapper_unit(plan, contract, port, "engine"))
            pre = 3 if contract.reset is None else max(3, contract.reset.cycles + 1)
    if testbench:
        tb = testbench_verilog(f"{plan.module}_tb", [unit], pre, half)
        files.append(write_text_atomic(out.with_name(f"{plan.module}_tb.v"), tb))
    for f in files:
        click.echo(f"wrote {f}")
    if testbench:
        rtl = [str(s) for s in contract.rtl.sources] if contract is not None and contract.rtl is not None else []
        srcs = " ".join([str(f) for f in files[::-1]] + rtl)
        click.echo(
            f"run: iverilog -g2005 -s {plan.module}_tb -o {plan.module}_tb.vvp {srcs} && vvp {plan.module}_tb.vvp"
        )


@bist_group.command("verify")
@click.argument("test")
@engine_options
@click.option("--keep", type=click.Path(file_okay=False), default=None, help="Keep the sources and stream here.")
def bist_verify(test: str, keep: str | None, **kw: Any) -> int:
    """Simulate the engine for TEST in Icarus and compare every memory operation, cycle by cycle, with
    the Python expansion (memcheck patterns). Exit 0 when equal, 1 at the first difference."""
    seed_text = _resolve_seed(kw)
    plan, contract, port = _plan(test, kw)
    click.echo(_summary(plan, seed_text))
    if contract is not None and port is not None:
        import tempfile

        with tempfile.TemporaryDirectory(prefix="memcheck-bist-") as tmp:
            unit = run_on_wrapper(plan, contract, port, Path(keep) if keep else Path(tmp))
        res = VerifyResult(plan, unit)
        text = res.render().replace("a fault-free behavioural memory", f"port {port.name} of the wrapper")
    else:
        res = verify_engine(plan, Path(keep) if keep else None)
        text = res.render()
    click.echo(text.split("\n", 1)[1])
    return EXIT_OK if res.equal else EXIT_FAIL


@bist_group.command("lint")
@click.argument("file", type=click.Path(dir_okay=False))
@click.option("--top", default=None, help="Top module (default: the first module in FILE).")
def bist_lint(file: str, top: str | None) -> int:
    """Lint FILE with verilator --lint-only -Wall and synthesise it with Yosys (synth, check -assert,
    stat): warnings, latches (none allowed) and cell count. Exit 0 when clean, 1 otherwise."""
    report = lint_file(file, top)
    click.echo(report.render())
    return EXIT_OK if report.clean else EXIT_FAIL
