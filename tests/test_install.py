"""The package as a user gets it: build the wheel, install it into a fresh virtual environment and run
``memcheck march list`` and ``memcheck demo`` from there (the example wrappers ship in the wheel).

The fresh environment has no pip of its own and no network install: the wheel goes in with
``--no-deps`` through this environment's pip, and a ``.pth`` line lends it this environment's
site-packages for the runtime dependencies (numpy, click, cocotb...). A ``.pth`` path line does not
run the editable-install hook, and the environment's own site-packages come first, so ``memcheck``
is imported from the wheel; the test checks that.
"""

from __future__ import annotations

import shutil
import subprocess
import sys
import sysconfig
import venv
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def _run(argv: list[str], cwd: Path, timeout: float = 300) -> subprocess.CompletedProcess[str]:
    proc = subprocess.run(argv, cwd=cwd, capture_output=True, text=True, timeout=timeout)
    assert proc.returncode == 0, f"{argv}: {proc.stdout[-2000:]}\n{proc.stderr[-2000:]}"
    return proc


def _build_wheel(tmp: Path) -> Path:
    """Build from a copy of the sources, so the build leaves nothing in the worktree."""
    src = tmp / "src"
    src.mkdir()
    for name in ("pyproject.toml", "README.md", "LICENSE"):
        shutil.copy(ROOT / name, src / name)
    shutil.copytree(ROOT / "memcheck", src / "memcheck", ignore=shutil.ignore_patterns("__pycache__", "*.pyc"))
    _run([sys.executable, "-m", "pip", "wheel", "--no-deps", "-q", "-w", str(tmp / "dist"), str(src)], tmp)
    (wheel,) = (tmp / "dist").glob("memcheck-*.whl")
    return wheel


def _fresh_env(tmp: Path, wheel: Path) -> Path:
    env = tmp / "env"
    venv.EnvBuilder(with_pip=False).create(env)
    python = env / "bin" / "python"
    site = _run([str(python), "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"], tmp).stdout.strip()
    (Path(site) / "lend_runtime_deps.pth").write_text(sysconfig.get_paths()["purelib"] + "\n")
    _run([sys.executable, "-m", "pip", "--python", str(python), "install", "-q", "--no-deps", str(wheel)], tmp)
    return env


@pytest.mark.slow
@pytest.mark.icarus
def test_wheel_install_runs_march_list_and_the_demo(tmp_path: Path) -> None:
    wheel = _build_wheel(tmp_path)
    env = _fresh_env(tmp_path, wheel)
    work = tmp_path / "elsewhere"  # not a source checkout: the examples must come from the package
    work.mkdir()
    where = _run(
        [str(env / "bin" / "python"), "-c", "import memcheck.examples as e; print(e.__file__, e.examples_dir())"],
        work,
    ).stdout.split()
    assert all(Path(p).is_relative_to(env) for p in where), where  # the wheel's code and examples, not the tree's
    exe = str(env / "bin" / "memcheck")
    listing = _run([exe, "march", "list"], work).stdout
    assert "March C-" in listing and "MATS+" in listing
    demo = _run([exe, "demo", "--examples", "5", "--bulk-examples", "0", "--seed", "1"], work, timeout=600).stdout
    assert "the conforming wrapper passes and the buggy one fails" in demo
