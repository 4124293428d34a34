"""Issue 12 on the command line: validation, names and user libraries, one set of defaults, budget
refusals, SIGTERM clean-up, wide tables, claims checked and the universe hint."""

from __future__ import annotations

import csv
import io
import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from memcheck.cli import main

LIB = """
[[test]]
name = "Team 6n"
notation = "{any(w0); up(r0,w1); down(r1,w0); any(r0)}"
claims = ["SAF", "CFid"]
source = "test plan rev B"
"""


def run(capsys: pytest.CaptureFixture[str], *argv: str) -> tuple[int, str, str]:
    rc = main(list(argv))
    cap = capsys.readouterr()
    return rc, cap.out, cap.err


@pytest.mark.parametrize(
    ("argv", "needle"),
    [
        (["coverage", "MATS+", "--words", "8", "--escapes", "-1"], "--escapes"),
        (["coverage", "MATS+", "--words", "-4"], "--words"),
        (["coverage", "MATS+", "--words", "16Q"], "not a size"),
        (["march", "show", "C-"], "Did you mean March C-?"),
        (["coverage", "C-", "--words", "8"], "Did you mean March C-?"),
        (["coverage", "MATS+", "--words", "8", "--universe", "sample:0"], "sample:K"),
    ],
)
def test_bad_arguments(capsys: pytest.CaptureFixture[str], argv: list[str], needle: str) -> None:
    rc, _, err = run(capsys, *argv)
    assert rc == 2 and needle in err and "Traceback" not in err


def test_sizes_take_suffixes_and_silly_tests_warn(capsys: pytest.CaptureFixture[str]) -> None:
    rc, out, _ = run(capsys, "coverage", "MATS+", "--words", "1K", "--faults", "SAF", "--seed", "1")
    assert rc == 0 and "memory 1,024 words" in out
    rc, _, err = run(capsys, "coverage", "{up(r1)}", "--words", "8", "--faults", "SAF", "--seed", "1")
    assert rc == 0 and "never writes" in err
    rc, _, err = run(capsys, "patterns", "{up(w1)}", "--words", "4", "--width", "1", "--seed", "1")
    assert rc == 0 and "never reads" in err


def test_names_and_user_library(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    lib = tmp_path / "lib.toml"
    lib.write_text(LIB)
    out_json = tmp_path / "c.json"
    rc, out, _ = run(
        capsys,
        "coverage",
        "Mine={any(w0); up(r0,w1); down(r1,w0)}",
        "Team 6n",
        "--compare",
        "--library",
        str(lib),
        "--words",
        "8",
        "--faults",
        "SAF,CFid",
        "--seed",
        "1",
        "--json",
        str(out_json),
    )
    assert rc == 0 and "Mine (5n)" in out and "Team 6n (6n)" in out
    assert "claimed SAF - measured 100%: confirmed" in out  # the user library's claims are checked
    doc = json.loads(out_json.read_text())
    assert doc["test"] == "Mine" and doc["compared"][0]["test"] == "Team 6n"
    rc, out, _ = run(capsys, "march", "list", "--library", str(lib))
    assert rc == 0 and "Team 6n" in out and "test plan rev B" in out
    rc, out, _ = run(capsys, "march", "show", "Team 6n", "--library", str(lib))
    assert rc == 0 and "claimed   SAF" in out
    rc, out, err = run(capsys, "patterns", "{up(w0); up(r0)}", "--name", "Tiny", "--words", "2", "--width", "1")
    assert rc == 0 and "Tiny" in out and "Tiny:" in err
    bad = tmp_path / "bad.toml"
    bad.write_text('[[test]]\nname = "March C-"\nnotation = "{up(w0)}"\n')
    rc, _, err = run(capsys, "march", "list", "--library", str(bad))
    assert rc == 2 and "already a published library test" in err


def test_one_set_of_defaults(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    """``patterns`` and ``coverage`` use the same backgrounds, and both take --words from --layout."""
    cov, pat = tmp_path / "c.json", tmp_path / "p.json"
    argv = ["--layout", "4x2", "--width", "32", "--seed", "3"]
    assert run(capsys, "coverage", "March C-", *argv, "--faults", "SAF", "--json", str(cov))[0] == 0
    assert run(capsys, "patterns", "March C-", *argv, "--format", "json", "-o", str(pat))[0] == 0
    bgs_cov = json.loads(cov.read_text())["backgrounds"]
    bgs_pat = [b["name"] for b in json.loads(pat.read_text())["backgrounds"]]
    assert bgs_cov == bgs_pat and len(bgs_cov) == 6  # standard set of a 32-bit word: log2(32) + 1


def test_huge_jobs_are_refused_with_an_estimate(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    rc, _, err = run(
        capsys, "coverage", "March SS", "--words", "1G", "--width", "64", "--layout", "32Kx32K", "--seed", "1"
    )
    assert rc == 2 and "GiB" in err and "--max-memory" in err
    target = tmp_path / "huge.hex"
    rc, _, err = run(
        capsys, "patterns", "March SS", "--words", "1G", "--width", "64", "--backgrounds", "standard", "-o", str(target)
    )
    assert rc == 2 and "TiB" in err and "--force" in err and not target.exists()


def test_sigterm_removes_the_temporary_file(tmp_path: Path) -> None:
    target = tmp_path / "big.hex"
    argv = ["patterns", "March SS", "--words", "4M", "--width", "64", "--backgrounds", "standard", "--force"]
    proc = subprocess.Popen(
        [sys.executable, "-m", "memcheck", *argv, "-o", str(target)], stdout=subprocess.PIPE, stderr=subprocess.PIPE
    )
    deadline = time.monotonic() + 60
    while not list(tmp_path.glob(".*")) and time.monotonic() < deadline and proc.poll() is None:
        time.sleep(0.05)
    assert list(tmp_path.glob(".*")), "no temporary file appeared"
    proc.send_signal(signal.SIGTERM)
    _, err = proc.communicate(timeout=60)
    assert proc.returncode == 2 and b"Traceback" not in err
    assert os.listdir(tmp_path) == []  # neither the temporary file nor a partial target


def test_compare_table_honours_columns_and_formats(
    monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    tests = ["MATS+", "March C-", "March SR", "March SS", "March B", "March U", "March LR", "March A"]
    argv = ["coverage", *tests, "--compare", "--words", "8", "--faults", "SAF,CFst", "--escapes", "0", "--seed", "1"]
    for cols in ("60", "220"):
        monkeypatch.setenv("COLUMNS", cols)
        rc, out, _ = run(capsys, *argv)
        table = out.split("in brackets):\n")[1].split("Verdicts cover")[0]
        assert rc == 0 and max(len(line) for line in table.splitlines()) <= int(cols) and "…" not in table
    rc, out, _ = run(capsys, *argv, "--format", "csv")
    block = out.split("in brackets):\n")[1].split("\nVerdicts")[0]
    rows = list(csv.reader(io.StringIO(block)))
    assert rows[0] == ["class", *(f"{t} ({n}n)" for t, n in zip(tests, (5, 10, 14, 22, 17, 13, 14, 15), strict=True))]


def test_claims_checked_and_universe_hint(capsys: pytest.CaptureFixture[str]) -> None:
    # The finding: March SR is claimed to detect CFdrd; the simulation measures 50% bit-oriented.
    rc, out, _ = run(capsys, "march", "show", "March SR", "--words", "64")
    assert rc == 0 and "claimed CFdrd - measured 50.0%: contradicted" in out and "claimed TF - measured 100%" in out
    rc, out, _ = run(
        capsys, "coverage", "March SR", "--layout", "16x4", "--width", "8", "--faults", "CFdrd", "--seed", "1"
    )
    assert rc == 0 and "hint: between physically adjacent cells" in out and "CFdrd 58.4% (here 93.8%)" in out


def test_universe_hint_on_a_memory_above_the_walked_limit(capsys: pytest.CaptureFixture[str]) -> None:
    # Linear order counts neighbour pairs in closed form, so the hint is given above HINT_MAX_CELLS too;
    # an lfsr walk of the same memory is not built just for a hint.
    from memcheck.faults.checks import HINT_MAX_CELLS

    assert HINT_MAX_CELLS < 1024 * 512 * 9
    argv = ("coverage", "March SR", "--layout", "1024x512", "--width", "9", "--faults", "CFdrd", "--seed", "1")
    rc, out, _ = run(capsys, *argv)
    assert rc == 0 and "hint: between physically adjacent cells (--universe neighbours, layout 1024x512)" in out
    rc, out, _ = run(capsys, *argv, "--order", "lfsr")
    assert rc == 0 and "hint:" not in out
