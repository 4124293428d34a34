"""Build the user's RTL with the generated harness, once per contract and source set.

A build folder is named after a hash of everything that shapes the compiled design (sources and
include files by content, parameters, defines, the contract's pins and geometry), so phases,
examples, repeated checks and replays reuse it, and a parameter change never reuses a stale build
(cocotb's runner skips recompiling when only parameters change). Two steps, both through cocotb's
Icarus runner:

1. the user's top alone: compile errors come out in the compiler's own words, and the top's
   ports and widths are read back (see pins.py) and checked against the contract;
2. the harness around the top: the simulation image used by every run.
"""

from __future__ import annotations

import contextlib
import fcntl
import hashlib
import shutil
import subprocess
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

from memcheck.contract import Contract, RtlSpec
from memcheck.errors import SimulationError
from memcheck.sim.plumbing.harness import HARNESS_TOP, harness_text
from memcheck.sim.plumbing.pins import PinCheck, check_pins, read_ports
from memcheck.sim.plumbing.words import HarnessLayout

#: Bump when the harness or build steps change, so old build folders are not reused.
BUILD_FORMAT = 6
_MAX_ERROR_LINES = 40


@dataclass(frozen=True)
class Build:
    """A compiled simulation image: the harness around the user's top."""

    contract: Contract
    folder: Path
    layout: HarnessLayout
    pins: PinCheck
    #: True when the simulation image was already up to date (nothing was compiled for it).
    reused: bool = False

    @property
    def sim_dir(self) -> Path:
        return self.folder / "sim"

    @property
    def top(self) -> str:
        assert self.contract.rtl is not None
        return self.contract.rtl.top


def require_icarus() -> None:
    """Raise a clear error when Icarus Verilog is missing."""
    missing = [t for t in ("iverilog", "vvp") if shutil.which(t) is None]
    if missing:
        raise SimulationError(
            f"Icarus Verilog is not installed ({' and '.join(missing)} not found on PATH). Install it with "
            "your package manager (Debian/Ubuntu: 'sudo apt-get install iverilog'), or run 'make setup'."
        )


def _rtl(contract: Contract) -> RtlSpec:
    if contract.rtl is None:
        raise SimulationError("the contract has no [rtl] table, so there is no RTL to check.")
    for src in contract.rtl.sources:
        if not src.is_file():
            raise SimulationError(f"RTL source {src} does not exist (listed in [rtl] sources).")
    return contract.rtl


def build_key(contract: Contract) -> str:
    """Hash of everything that shapes the compiled design."""
    rtl = _rtl(contract)
    h = hashlib.sha256()
    h.update(f"format {BUILD_FORMAT}\n".encode())
    h.update(repr((contract.memory, contract.ports, contract.reset, contract.port_clocks)).encode())
    h.update(repr((contract.timing, contract.power, sorted(rtl.tie.items()))).encode())
    h.update(repr((rtl.top, sorted(rtl.parameters.items()), sorted(rtl.defines.items()))).encode())
    for src in rtl.sources:
        h.update(str(src.resolve()).encode() + b"\0" + src.read_bytes() + b"\0")
    for inc in rtl.include_dirs:
        h.update(str(inc.resolve()).encode() + b"\0")
        if inc.is_dir():
            for f in sorted(p for p in inc.iterdir() if p.is_file()):
                with contextlib.suppress(OSError):
                    h.update(f.name.encode() + b"\0" + f.read_bytes() + b"\0")
    return h.hexdigest()[:16]


@contextlib.contextmanager
def _locked(folder: Path) -> Iterator[None]:
    """Serialise builds of one folder across processes (parallel tests, parallel checks)."""
    folder.mkdir(parents=True, exist_ok=True)
    with (folder / ".lock").open("w") as fh:
        fcntl.flock(fh, fcntl.LOCK_EX)
        try:
            yield
        finally:
            fcntl.flock(fh, fcntl.LOCK_UN)


def timescale_of(contract: Contract) -> tuple[str, str]:
    """``[timing] timescale`` as (unit, precision): the timescale of RTL files without a `timescale."""
    unit, precision = contract.timing.timescale.replace(" ", "").split("/")
    return unit, precision


def _compile(
    rtl: RtlSpec,
    sources: list[Path],
    top: str,
    build_dir: Path,
    log: Path,
    *,
    parameters: bool,
    timescale: tuple[str, str],
) -> None:
    from memcheck.sim.plumbing.icarus import CommandFailed, QuietIcarus

    runner = QuietIcarus()
    try:
        runner.build(
            sources=sources,
            hdl_toplevel=top,
            build_dir=build_dir,
            includes=list(rtl.include_dirs),
            defines=dict(rtl.defines),
            parameters=dict(rtl.parameters) if parameters else {},
            timescale=timescale,
            log_file=log,
        )
    except CommandFailed:
        text = log.read_text(encoding="utf-8", errors="replace") if log.is_file() else ""
        lines = [ln for ln in text.splitlines() if ln.strip()]
        if len(lines) > _MAX_ERROR_LINES:
            lines = [*lines[:_MAX_ERROR_LINES], f"... ({len(lines) - _MAX_ERROR_LINES} more lines in {log})"]
        detail = "\n".join(f"  {ln}" for ln in lines) or "  (no compiler output)"
        raise SimulationError(f"the RTL of {rtl.top!r} does not compile; iverilog says:\n{detail}") from None
    except (OSError, ValueError) as exc:
        raise SimulationError(f"cannot run iverilog: {exc}") from None


def build(contract: Contract, cache_root: Path) -> Build:
    """Compile (or reuse) the simulation image for ``contract`` under ``cache_root``."""
    require_icarus()
    rtl = _rtl(contract)
    folder = Path(cache_root).resolve() / f"{rtl.top}-{build_key(contract)}"
    with _locked(folder):
        probe = folder / "probe"
        scale = timescale_of(contract)
        _compile(rtl, list(rtl.sources), rtl.top, probe, folder / "probe.log", parameters=True, timescale=scale)
        ports = read_ports(probe / "sim.vvp", rtl.top)
        pins = check_pins(contract, ports, rtl.top)
        layout = HarnessLayout.build(contract, pins.widths)
        text = harness_text(contract, layout, rtl.top, rtl.parameters)
        harness = folder / f"{HARNESS_TOP}.v"
        if not harness.is_file() or harness.read_text(encoding="utf-8") != text:
            harness.write_text(text, encoding="utf-8")
        image = folder / "sim" / "sim.vvp"
        before = image.stat().st_mtime_ns if image.is_file() else None
        _compile(
            rtl,
            [*rtl.sources, harness],
            HARNESS_TOP,
            folder / "sim",
            folder / "build.log",
            parameters=False,
            timescale=scale,
        )
        reused = before is not None and image.is_file() and image.stat().st_mtime_ns == before
    return Build(contract=contract, folder=folder, layout=layout, pins=pins, reused=reused)


def iverilog_version() -> str:
    """First line of ``iverilog -V`` (for reports)."""
    try:
        out = subprocess.run(["iverilog", "-V"], capture_output=True, text=True, timeout=10, check=False)
    except (OSError, subprocess.TimeoutExpired):
        return "unknown"
    return (out.stdout.splitlines() or ["unknown"])[0].strip()
