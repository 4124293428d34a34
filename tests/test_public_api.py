"""The public API imports without a simulator and exposes what the docs promise."""

from __future__ import annotations

import re
import subprocess
import sys
import types
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def test_import_memcheck_does_not_import_cocotb() -> None:
    code = (
        "import sys, memcheck, memcheck.strategies, memcheck.march, memcheck.faults, memcheck.cli\n"
        "bad = [m for m in sys.modules if m.split('.')[0] in ('cocotb', 'cocotb_tools', 'pygpi')]\n"
        "print(','.join(bad))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""


def test_all_lists_exactly_the_public_names() -> None:
    """``__all__`` names every public object of the package namespace and nothing else (no stale entry,
    no export forgotten), so ``from memcheck import *`` and the docs agree with the code."""
    import memcheck

    bound = {
        name
        for name, value in vars(memcheck).items()
        if not name.startswith("_") and not isinstance(value, types.ModuleType) and name != "annotations"
    }
    assert set(memcheck.__all__) - {"__version__"} == bound
    assert len(memcheck.__all__) == len(set(memcheck.__all__))


def _doc_imports() -> list[tuple[str, str]]:
    """Every ``from memcheck... import ...`` line of the Python examples in README.md and docs/."""
    found = []
    for path in sorted([ROOT / "README.md", *(ROOT / "docs").glob("*.md")]):
        for line in path.read_text(encoding="utf-8").splitlines():
            if re.match(r"\s*from memcheck[\w.]* import [\w, ]+$", line):
                found.append((path.name, line.strip()))
    return found


@pytest.mark.parametrize(("doc", "statement"), _doc_imports())
def test_every_import_shown_in_the_docs_works(doc: str, statement: str) -> None:
    exec(compile(statement, doc, "exec"), {})  # raises ImportError when a documented name is gone


def test_the_docs_show_imports() -> None:
    docs = {doc for doc, _ in _doc_imports()}
    assert {"faults.md", "march.md", "model.md"} <= docs  # the scan above really reads the examples
