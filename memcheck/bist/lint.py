"""Lint and synthesise generated Verilog: ``verilator --lint-only -Wall`` and a Yosys generic
synthesis (``synth -top``, ``check -assert``, ``stat``), reporting warnings, latches and cell count.

Both tools come from the system's packages (``tools/ensure-eda.sh``); neither is needed to generate.
"""

from __future__ import annotations

import re
import shutil
import subprocess
import tempfile
import time
from dataclasses import dataclass, field
from pathlib import Path

from memcheck.errors import BistError

_MODULE = re.compile(r"^\s*module\s+([A-Za-z_][A-Za-z0-9_$]*)", re.MULTILINE)
_CELLS = re.compile(r"Number of cells:\s+(\d+)")
_CELL_TYPE = re.compile(r"^\s+(\$\S+)\s+(\d+)\s*$", re.MULTILINE)


@dataclass(frozen=True)
class LintReport:
    """Findings for one file. ``clean`` means no Verilator warning, no Yosys warning, no latch and
    ``check -assert`` passed."""

    path: Path
    top: str
    verilator: tuple[str, ...]
    yosys: tuple[str, ...]
    latches: int
    cells: int
    check_passed: bool
    cell_types: dict[str, int] = field(default_factory=dict)
    seconds: float = 0.0

    @property
    def clean(self) -> bool:
        return not self.verilator and not self.yosys and self.latches == 0 and self.check_passed

    def render(self) -> str:
        lines = [
            f"{self.path}: top {self.top}",
            f"verilator --lint-only -Wall: {len(self.verilator)} warning(s)",
            *(f"  {w}" for w in self.verilator),
            f"yosys synth: {self.cells} cells, {self.latches} latch(es), check -assert "
            + ("passed" if self.check_passed else "FAILED"),
            *(f"  {w}" for w in self.yosys),
            "clean" if self.clean else "NOT clean",
        ]
        return "\n".join(lines)


def _tool(name: str) -> str:
    path = shutil.which(name)
    if path is None:
        raise BistError(
            f"{name} is not on PATH; install the Debian/Ubuntu package '{name}' (make setup runs "
            "tools/ensure-eda.sh, which does it) and retry"
        )
    return path


def find_top(text: str, path: Path) -> str:
    """The first module declared in ``text``."""
    m = _MODULE.search(text)
    if m is None:
        raise BistError(f"{path} declares no Verilog module")
    return m.group(1)


def run_verilator(path: Path, top: str, timeout: float = 300) -> tuple[str, ...]:
    """Warnings and errors of ``verilator --lint-only -Wall`` (first line of each message)."""
    proc = subprocess.run(
        [_tool("verilator"), "--lint-only", "-Wall", "--top-module", top, str(path)],
        capture_output=True,
        text=True,
        timeout=timeout,
    )
    found = tuple(
        line.strip()
        for line in proc.stderr.splitlines()
        if line.startswith(("%Warning", "%Error")) and not line.startswith("%Error: Exiting due to")
    )
    if proc.returncode != 0 and not found:
        return (f"%Error: verilator exited with {proc.returncode}: {proc.stderr.strip()[:500]}",)
    return found


def run_yosys(path: Path, top: str, timeout: float = 900) -> tuple[tuple[str, ...], int, int, bool, dict[str, int]]:
    """Synthesise with Yosys: (warnings, latches, cells, check passed, cells per type)."""
    with tempfile.TemporaryDirectory(prefix="memcheck-yosys-") as tmp:
        log = Path(tmp) / "yosys.log"
        stat = Path(tmp) / "stat.txt"
        script = f"read_verilog {path}; synth -top {top}; check -assert; tee -q -o {stat} stat"
        proc = subprocess.run(
            [_tool("yosys"), "-q", "-l", str(log), "-p", script], capture_output=True, text=True, timeout=timeout
        )
        text = log.read_text(errors="replace") if log.exists() else proc.stderr
        stat_text = stat.read_text(errors="replace") if stat.exists() else ""
    warnings = tuple(sorted({line.strip() for line in text.splitlines() if line.startswith("Warning:")}))
    if proc.returncode != 0:
        errors = [line.strip() for line in text.splitlines() if line.startswith("ERROR")] or [proc.stderr.strip()]
        if not any("check -assert" in e or "Found and reported" in e for e in errors):
            raise BistError(f"yosys could not synthesise {path}: {' '.join(errors)[:1500]}")
        return warnings + tuple(errors), 0, 0, False, {}
    types = {name: int(n) for name, n in _CELL_TYPE.findall(stat_text)}
    latches = max(
        sum(n for name, n in types.items() if "LATCH" in name.upper()),
        sum(1 for line in text.splitlines() if "Latch inferred" in line),
    )
    m = _CELLS.search(stat_text)
    return warnings, latches, int(m.group(1)) if m else 0, True, types


def lint_file(path: str | Path, top: str | None = None) -> LintReport:
    """Run both tools on a Verilog file (``top``: the first module when None)."""
    p = Path(path)
    try:
        text = p.read_text(errors="replace")
    except OSError as exc:
        raise BistError(f"{p}: cannot read the Verilog file ({exc.strerror or exc})") from None
    top = top or find_top(text, p)
    t0 = time.perf_counter()
    verilator = run_verilator(p, top)
    warnings, latches, cells, ok, types = run_yosys(p, top)
    return LintReport(p, top, verilator, warnings, latches, cells, ok, types, time.perf_counter() - t0)
