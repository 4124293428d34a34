"""Prove a generated engine equal to the Python expansion: simulate it in Icarus Verilog against a
behavioural memory and compare every cycle's memory pins with ``memcheck patterns``' hex stream.

:func:`verify_engine` runs one engine (``memcheck bist verify``); :func:`run_units` runs many engines
in one compile and one simulation (the test suite batches configurations that way).
"""

from __future__ import annotations

import re
import shutil
import subprocess
import tempfile
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path

from memcheck._atomic import write_text_atomic
from memcheck.bist.adapter import adapter_verilog, half_period_ns, wrapper_unit
from memcheck.bist.microcode import EnginePlan
from memcheck.bist.testbench import TbUnit, testbench_verilog
from memcheck.bist.verilog import engine_verilog
from memcheck.contract import Contract, PortSpec
from memcheck.errors import BistError
from memcheck.march import Pause, write_export
from memcheck.ops import OpKind

_LINE = re.compile(r"^memcheck-bist (\S+) (PASS|FAIL|DIFF|TIMEOUT)\b(.*)$")
_KV = re.compile(r"(\w+)=(\S+)")


@dataclass(frozen=True)
class UnitResult:
    """What one unit's checker printed: ``verdict`` is PASS, FAIL, DIFF, TIMEOUT or MISSING."""

    name: str
    verdict: str
    detail: str = ""
    values: dict[str, str] = field(default_factory=dict)

    def int_value(self, key: str) -> int:
        return int(self.values[key], 16 if key.startswith("fail_") and key not in _DECIMAL else 10)


_DECIMAL = frozenset({"fail_element", "fail_op", "fail_background"})


def _tool(name: str) -> str:
    path = shutil.which(name)
    if path is None:
        raise BistError(
            f"{name} (Icarus Verilog) is not on PATH; install the Debian/Ubuntu package 'iverilog' "
            "(make setup does it) and retry"
        )
    return path


def simulate(
    top: str,
    sources: Sequence[Path],
    work: Path,
    plusargs: Sequence[str] = (),
    *,
    flags: Sequence[str] = (),
    timeout: float = 600,
) -> str:
    """Compile ``sources`` with ``iverilog`` (top module ``top``, extra ``flags`` such as ``-DNAME=1``)
    and run them; the simulator's output."""
    exe = work / "sim.vvp"
    cmd = [_tool("iverilog"), "-g2005", "-s", top, "-o", str(exe), *flags, *map(str, sources)]
    comp = subprocess.run(cmd, capture_output=True, text=True, timeout=timeout)
    if comp.returncode != 0:
        raise BistError(f"iverilog could not compile the engine and testbench: {comp.stderr.strip()[:2000]}")
    run = subprocess.run([_tool("vvp"), "-n", str(exe), *plusargs], capture_output=True, text=True, timeout=timeout)
    if run.returncode != 0:
        raise BistError(f"vvp failed ({run.returncode}): {(run.stderr or run.stdout).strip()[:2000]}")
    return run.stdout


def parse_results(output: str, names: Sequence[str]) -> dict[str, UnitResult]:
    """The final line of each unit in a testbench's output (MISSING when a unit printed none)."""
    found: dict[str, UnitResult] = {}
    for line in output.splitlines():
        m = _LINE.match(line.strip())
        if m and m.group(1) not in found:
            found[m.group(1)] = UnitResult(m.group(1), m.group(2), m.group(3).strip(), dict(_KV.findall(m.group(3))))
    return {n: found.get(n, UnitResult(n, "MISSING", output[-500:])) for n in names}


def run_units(
    units: Sequence[tuple[EnginePlan, str]],
    work: Path,
    *,
    plusargs: Sequence[str] = (),
    with_stream: bool = True,
) -> dict[str, UnitResult]:
    """Simulate several engines side by side in one testbench (unit name -> result).

    Each plan's module name must be unique; with ``with_stream`` every unit's operations are compared
    with its ``memcheck patterns`` hex stream, written beside the sources.
    """
    work.mkdir(parents=True, exist_ok=True)
    tb_units = []
    sources = []
    for plan, name in units:
        src = write_text_atomic(work / f"{plan.module}.v", engine_verilog(plan))
        sources.append(src)
        stream_file = None
        if with_stream:
            hex_path = work / f"{name}.hex"
            write_export(plan.stream, hex_path, "hex")
            stream_file = str(hex_path)
        tb_units.append(TbUnit(plan, name, stream_file))
    tb = write_text_atomic(work / "bist_tb.v", testbench_verilog("bist_tb", tb_units))
    out = simulate("bist_tb", [tb, *sources], work, plusargs)
    return parse_results(out, [n for _, n in units])


@dataclass(frozen=True)
class VerifyResult:
    """Outcome of :func:`verify_engine`: ``equal`` when every cycle matched and ``done`` rose on time."""

    plan: EnginePlan
    unit: UnitResult

    @property
    def equal(self) -> bool:
        return self.unit.verdict == "PASS"

    def render(self) -> str:
        p = self.plan
        head = (
            f"{p.module}: {p.test.name or 'custom test'} on {p.words} x {p.width}, order {p.stream.order.kind}, "
            f"backgrounds {', '.join(b.name for b in p.backgrounds)}: {p.operations} operations, "
            f"{p.cycles()} cycles"
        )
        if self.equal:
            return (
                f"{head}\nequal: every cycle's memory operation matches the Python expansion (memcheck patterns), "
                f"done in cycle {p.cycles()}, no failure on a fault-free behavioural memory"
            )
        return f"{head}\nDIFFERENT: {describe_difference(p, self.unit)}"


def describe_difference(plan: EnginePlan, unit: UnitResult) -> str:
    """One paragraph naming the first difference a checker reported."""
    if unit.verdict == "FAIL":
        return f"the engine flagged a failure where none was expected ({unit.detail})"
    if unit.verdict != "DIFF" or "line" not in unit.values:
        return f"{unit.verdict}: {unit.detail}"
    line = int(unit.values["line"])
    where = _line_to_step(plan, line)
    return f"at cycle {unit.values.get('cycle', '?')}, stream line {line} ({where}): {unit.detail}"


def _line_to_step(plan: EnginePlan, line: int) -> str:
    """Name the stream hex line ``line`` (operations and pause lines counted together)."""
    seen = 0
    for item in plan.stream:
        if isinstance(item, Pause):
            if seen == line:
                return f"pause of element {item.element}, background {plan.backgrounds[item.background].name}"
            seen += 1
            continue
        if line < seen + len(item):
            i = line - seen
            el = plan.test.elements[item.element]
            op = "write" if item.op[i] == OpKind.WRITE else "read"
            return (
                f"element {item.element} {el.to_ascii()} operation {int(item.step[i])} ({op}) at address "
                f"{int(item.address[i]):#x}, background {plan.backgrounds[item.background].name}"
            )
        seen += len(item)
    return "after the end of the stream"


def verify_engine(plan: EnginePlan, work: Path | None = None) -> VerifyResult:
    """Simulate ``plan``'s engine on a behavioural memory and compare it with the Python expansion."""
    if work is None:
        with tempfile.TemporaryDirectory(prefix="memcheck-bist-") as tmp:
            return verify_engine(plan, Path(tmp))
    res = run_units([(plan, "engine")], work)
    return VerifyResult(plan, res["engine"])


def run_on_wrapper(
    plan: EnginePlan, contract: Contract, port: PortSpec, work: Path, *, with_stream: bool = True
) -> UnitResult:
    """Run the engine through the adapter on the contract's wrapper RTL (other ports idle)."""
    if contract.rtl is None:
        raise BistError(f"{contract.path or 'the contract'} names no RTL ([rtl] sources and top)")
    work.mkdir(parents=True, exist_ok=True)
    engine = write_text_atomic(work / f"{plan.module}.v", engine_verilog(plan))
    adapter = write_text_atomic(work / f"{plan.module}_adapter.v", adapter_verilog(plan, contract, port))
    stream_file = None
    if with_stream:
        write_export(plan.stream, work / "engine.hex", "hex")
        stream_file = str(work / "engine.hex")
    unit = TbUnit(plan, "engine", stream_file, wrapper_unit(plan, contract, port, "engine"))
    pre = 3 if contract.reset is None else max(3, contract.reset.cycles + 1)
    tb = write_text_atomic(
        work / "bist_tb.v", testbench_verilog("bist_tb", [unit], pre, half_period_ns(contract, port))
    )
    rtl = contract.rtl
    flags = [f"-I{d}" for d in rtl.include_dirs] + [f"-D{k}={v}" for k, v in rtl.defines.items()]
    out = simulate("bist_tb", [tb, engine, adapter, *rtl.sources], work, flags=flags)
    return parse_results(out, ["engine"])["engine"]
