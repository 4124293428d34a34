"""``memcheck march list|show|patterns``: output and exit codes (bad input: tests/test_cli_bad_args.py)."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from memcheck.cli import main
from memcheck.march import ALGORITHMS, expand, render
from memcheck.march.timing import march_time


def run(capsys: pytest.CaptureFixture[str], *args: str) -> tuple[int, str, str]:
    rc = main(list(args))
    out = capsys.readouterr()
    return rc, out.out, out.err


def test_march_list_names_every_algorithm(capsys: pytest.CaptureFixture[str]) -> None:
    rc, out, _ = run(capsys, "march", "list")
    assert rc == 0
    for a in ALGORITHMS:
        assert a.name in out
    assert "22n" in out and "10n" in out


def test_march_show(capsys: pytest.CaptureFixture[str]) -> None:
    rc, out, _ = run(capsys, "march", "show", "march c-")
    assert rc == 0
    assert "{⇕(w0); ⇑(r0,w1); ⇑(r1,w0); ⇓(r0,w1); ⇓(r1,w0); ⇕(r0)}" in out
    assert "10n" in out and "van de Goor" in out and "1993" in out and "CFid" in out
    assert "Not sign-off" in out
    rc, out, _ = run(capsys, "march", "show", "{up(w0); del; down(r0,w1)}")
    assert rc == 0 and "3n + 1 delay" in out


def test_patterns_stdout_matches_the_api(capsys: pytest.CaptureFixture[str]) -> None:
    rc, out, err = run(
        capsys,
        "patterns",
        "MATS+",
        "--words",
        "8",
        "--width",
        "16",
        "--backgrounds",
        "solid,checkerboard",
        "--format",
        "csv",
    )
    assert rc == 0
    assert out == render(expand("MATS+", 8, 16, backgrounds="solid,checkerboard"), "csv")
    assert "80 operations = 5 x 8 words x 2 background(s)" in err


def test_patterns_to_file_with_notation_layout_and_lfsr(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    target = tmp_path / "p.json"
    rc, _, err = run(
        capsys,
        "patterns",
        "{up(w0); down(r0,w1); any(r1)}",
        "--layout",
        "4x2",
        "--width",
        "8",
        "--order",
        "lfsr",
        "--seed",
        "11",
        "--format",
        "json",
        "-o",
        str(target),
    )
    assert rc == 0
    doc = json.loads(target.read_text())
    assert doc["words"] == 8 and doc["layout"] == [4, 2] and doc["order"] == "lfsr" and doc["seed"] == 11
    assert doc["operations"] == 4 * 8 * 4  # the default for 8-bit words is the standard set: std0..std3
    assert "seed 11" in err  # the seed of the pseudo-random order is printed


def test_console_script_exit_codes(tmp_path: Path) -> None:
    exe = [sys.executable, "-m", "memcheck"]
    ok = subprocess.run(
        [*exe, "patterns", "March C-", "--words", "16", "--width", "8", "--seed", "5", "-o", str(tmp_path / "c.hex")],
        capture_output=True,
        text=True,
        timeout=60,
    )
    assert ok.returncode == 0, ok.stderr
    stream = expand("March C-", 16, 8, seed=5, backgrounds="standard")
    # the CLI's hex file is the library's export with the test time (100 MHz default) in its header
    assert (tmp_path / "c.hex").read_text() == render(stream, "hex", march_time(stream.test, 16, 4))
    bad = subprocess.run(
        [*exe, "patterns", "{up(r2)}", "--words", "16", "--width", "8"], capture_output=True, text=True, timeout=60
    )
    assert bad.returncode == 2 and "expected 0 or 1" in bad.stderr and "Traceback" not in bad.stderr
