"""Coverage of a real check under Icarus: the summary figure, the JSON section, --require-coverage."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from memcheck.cli import main

pytestmark = pytest.mark.icarus

SP = Path(__file__).parent / "rtl" / "sp" / "contract.toml"
TINY = ["--phases", "property", "--examples", "1", "--bulk-examples", "0", "--seed", "4"]


def _cli(args: list[str], capsys: pytest.CaptureFixture[str]) -> tuple[int, str, str]:
    rc = main(args)
    cap = capsys.readouterr()
    return rc, cap.out, cap.err


def test_holes_exit_one_only_with_require_coverage(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    base = ["check", str(SP), *TINY, "--directed-examples", "0", "--out", str(tmp_path / "o")]
    rc, out, _ = _cli([*base, "--json", str(tmp_path / "r.json")], capsys)
    assert rc == 0 and "HOLE" in out
    rep = json.loads((tmp_path / "r.json").read_text())
    holes = [p["key"] for p in rep["coverage"]["points"] if p["hits"] == 0]
    assert holes and rep["coverage"]["hit"] == rep["coverage"]["total"] - len(holes)
    assert f"{rep['coverage']['hit']} of {rep['coverage']['total']} cover points hit" in out.splitlines()[1]
    rc, _, err = _cli([*base, "--require-coverage"], capsys)
    assert rc == 1 and "cover points not hit" in err and holes[0] in err


def test_directed_examples_close_every_hole_on_rtl(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    args = [
        "check",
        str(SP),
        *TINY,
        "--require-coverage",
        "--out",
        str(tmp_path / "o"),
        "--json",
        str(tmp_path / "r.json"),
    ]
    rc, _, err = _cli(args, capsys)
    assert rc == 0, err
    rep = json.loads((tmp_path / "r.json").read_text())
    assert rep["coverage"]["hit"] == rep["coverage"]["total"] > 10
    assert "directed examples for cover holes" in rep["phases"][0]["detail"]
