"""The import layers of memcheck hold: found by parsing every module's imports (function-level
imports included), not by importing anything."""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

PACKAGE = Path(__file__).resolve().parents[1] / "memcheck"


def _module_name(path: Path) -> str:
    parts = list(path.relative_to(PACKAGE.parent).with_suffix("").parts)
    if parts[-1] == "__init__":
        parts.pop()
    return ".".join(parts)


def _imports(path: Path) -> set[str]:
    """Every module ``path`` imports, anywhere in it, with relative imports resolved."""
    tree = ast.parse(path.read_text(encoding="utf-8"), filename=str(path))
    package = _module_name(path) if path.name == "__init__.py" else _module_name(path).rpartition(".")[0]
    out: set[str] = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            out.update(alias.name for alias in node.names)
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                up = package.split(".")[: len(package.split(".")) - node.level + 1]
                base = ".".join([*up, *([base] if base else [])])
            out.add(base)
            out.update(f"{base}.{alias.name}" for alias in node.names)
    return out


MODULES = {_module_name(p): _imports(p) for p in sorted(PACKAGE.rglob("*.py"))}


def _importers(prefix: str, within: str = "") -> dict[str, list[str]]:
    """Modules (under ``within``) importing ``prefix`` or anything below it."""
    return {
        mod: sorted(i for i in imps if i == prefix or i.startswith(prefix + "."))
        for mod, imps in MODULES.items()
        if mod.startswith(within) and any(i == prefix or i.startswith(prefix + ".") for i in imps)
    }


def test_the_parser_sees_function_level_imports() -> None:
    # So the checks below can fail: build.py imports the Icarus runner inside a function only.
    assert "memcheck.sim.plumbing.icarus" in MODULES["memcheck.sim.plumbing.build"]
    assert "memcheck.sim.plumbing.icarus" in _importers("memcheck.sim.plumbing.icarus")["memcheck.sim.plumbing.build"]


@pytest.mark.parametrize(
    ("importer", "imported"),
    [
        ("memcheck.sim", "memcheck.report"),
        ("memcheck.report", "memcheck.sim"),
        ("memcheck.records", "memcheck.sim"),
        ("memcheck.records", "memcheck.report"),
        ("memcheck.model", "memcheck.sim"),
        ("memcheck.march", "memcheck.sim"),
        ("memcheck.faults", "memcheck.sim"),
        ("memcheck.sim.checking", "memcheck.sim.plumbing"),
        ("memcheck.sim.checking", "memcheck.sim.jobs"),
        ("memcheck.sim.checking", "memcheck.sim.session"),
        ("memcheck.sim.plumbing", "memcheck.sim.jobs"),
        ("memcheck.sim.plumbing", "memcheck.sim.session"),
    ],
)
def test_lower_layers_never_import_higher_ones(importer: str, imported: str) -> None:
    found = {m: i for m, i in _importers(imported, importer).items() if not m.startswith(imported)}
    assert found == {}, f"{importer} must not import {imported}"


@pytest.mark.parametrize("library", ["cocotb", "cocotb_tools"])
def test_only_the_simulator_plumbing_imports_cocotb(library: str) -> None:
    users = set(_importers(library))
    assert users, f"nothing imports {library}: the parser is broken"
    outside = sorted(m for m in users if not m.startswith("memcheck.sim.plumbing"))
    assert outside == []
