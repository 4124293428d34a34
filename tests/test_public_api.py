"""The public API imports without a simulator and exposes what the docs promise."""

from __future__ import annotations

import subprocess
import sys


def test_import_memcheck_does_not_import_cocotb() -> None:
    code = (
        "import sys, memcheck, memcheck.strategies, memcheck.march, memcheck.faults, memcheck.cli\n"
        "bad = [m for m in sys.modules if m.split('.')[0] in ('cocotb', 'cocotb_tools', 'pygpi')]\n"
        "print(','.join(bad))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


def test_public_names_resolve() -> None:
    import memcheck

    for name in memcheck.__all__:
        assert hasattr(memcheck, name), name
