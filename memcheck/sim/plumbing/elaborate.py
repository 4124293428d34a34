"""Elaborate a top module alone with Icarus and read its pins (for ``memcheck contract draft``).

The same first step as a check's build (:func:`memcheck.sim.plumbing.build.build`): compile the
user's RTL with the top, read the ports back from the ``.vvp`` file (:mod:`.pins`). When the top
is not there, a second compile without a top lists the modules the sources do define.
"""

from __future__ import annotations

import re
import subprocess
import tempfile
from collections.abc import Sequence
from pathlib import Path

from memcheck.contract import DEFAULT_TIMESCALE, RtlSpec
from memcheck.errors import SimulationError
from memcheck.sim.plumbing.build import _compile, require_icarus
from memcheck.sim.plumbing.pins import TopPort, read_ports

_MODULE = re.compile(r'^\S+ \.scope module, "(?:[^"\\]|\\.)*" "((?:[^"\\]|\\.)*)" \d+ \d+(, .*)?;$')
_NO_ROOT = "Unable to find the root module"


def top_ports(sources: Sequence[Path], top: str, include_dirs: Sequence[Path] = ()) -> list[TopPort]:
    """The ports of ``top`` as Icarus elaborates it, in declaration order.

    Raises :class:`SimulationError` with the compiler's lines when the RTL does not compile, and
    with the modules found when there is no module ``top``.
    """
    for src in sources:
        if not Path(src).is_file():
            raise SimulationError(f"RTL source {src} does not exist.")
    require_icarus()
    rtl = RtlSpec(sources=tuple(Path(s) for s in sources), top=top, include_dirs=tuple(include_dirs))
    unit, precision = DEFAULT_TIMESCALE.replace(" ", "").split("/")
    with tempfile.TemporaryDirectory(prefix="memcheck-draft-") as tmp:
        work = Path(tmp)
        try:
            _compile(
                rtl,
                list(rtl.sources),
                top,
                work / "probe",
                work / "probe.log",
                parameters=False,
                timescale=(unit, precision),
            )
        except SimulationError:
            log = (work / "probe.log").read_text(encoding="utf-8", errors="replace")
            if _NO_ROOT not in log:
                raise
            found = modules_found(rtl, work)
            raise SimulationError(
                f"the sources define no module named {top!r}; modules found: {', '.join(found) or '(none)'}. "
                "Pass one of them with --top."
            ) from None
        return list(read_ports(work / "probe" / "sim.vvp", top).values())


def modules_found(rtl: RtlSpec, work: Path) -> list[str]:
    """Every module the sources define, root modules first (an elaboration without a top)."""
    out = work / "all.vvp"
    cmd = ["iverilog", "-g2012", "-o", str(out), *(f"-I{d}" for d in rtl.include_dirs), *map(str, rtl.sources)]
    try:
        subprocess.run(cmd, capture_output=True, text=True, timeout=120, check=False)
        lines = out.read_text(encoding="utf-8", errors="replace").splitlines() if out.is_file() else []
    except (OSError, subprocess.TimeoutExpired):
        lines = []
    roots: list[str] = []
    others: list[str] = []
    for line in lines:
        m = _MODULE.match(line)
        if m:
            (others if m.group(2) else roots).append(m.group(1))
    return list(dict.fromkeys([*roots, *others]))
