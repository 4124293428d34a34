"""``memcheck coverage`` end to end: tables, escapes with witnesses, comparison, JSON, plot, errors."""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest

from memcheck.cli import main
from memcheck.faults import Arrangement, coverage


def test_coverage_table_json_and_plot(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    out_json, out_png = tmp_path / "cov.json", tmp_path / "cov.png"
    rc = main(["coverage", "MATS+", "--words", "8", "--json", str(out_json), "--plot", str(out_png)])
    text = capsys.readouterr().out
    assert rc == 0
    assert "MATS+" in text and "coverage %" in text and "not sign-off" in text
    seed = re.fullmatch(r"memcheck coverage: seed (\d+)", text.splitlines()[0])  # a fresh seed, printed first
    assert seed is not None
    assert "TF TF↓ <1w0/1/->" in text  # the escaping transition fault is listed with its primitive...
    assert "from power-up" in text  # ...and a witness
    doc = json.loads(out_json.read_text())
    assert doc["seed"] == int(seed[1])  # ...and recorded in the report
    assert doc["test"] == "MATS+" and doc["words"] == 8 and doc["width"] == 1 and doc["universe"] == "all"
    assert doc["classes"]["SAF"] == {
        **doc["classes"]["SAF"],
        "faults": 16,
        "detected": 16,
        "partial": 0,
        "coverage": 1.0,
    }
    assert doc["classes"]["TF"]["coverage"] == 0.5
    assert out_png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert not list(tmp_path.glob(".*.tmp"))  # atomic writes leave no temporaries


def test_compare_side_by_side(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    out_json = tmp_path / "cmp.json"
    rc = main(
        [
            "coverage",
            "MATS+",
            "March C-",
            "{⇕(w0); ⇑(r0,r0,w1); ⇓(r1,r1,w0)}",
            "--compare",
            "--words",
            "4",
            "--width",
            "2",
            "--faults",
            "SAF,DRDF,CFst",
            "--escapes",
            "0",
            "--json",
            str(out_json),
        ]
    )
    text = capsys.readouterr().out
    assert rc == 0 and "side by side" in text
    doc = json.loads(out_json.read_text())
    assert set(doc["classes"]) == {"SAF", "DRDF", "CFst"}
    assert [d["test"] for d in doc["compared"]] == ["March C-", "{⇕(w0); ⇑(r0,r0,w1); ⇓(r1,r1,w0)}"]
    assert doc["classes"]["DRDF"]["coverage"] == 0.0  # MATS+ never reads twice
    assert doc["compared"][1]["classes"]["DRDF"]["coverage"] == 1.0  # the double reads catch it
    assert doc["backgrounds"] == ["std0", "std1"]


def test_neighbours_and_sample(capsys: pytest.CaptureFixture[str]) -> None:
    assert (
        main(
            [
                "coverage",
                "March SS",
                "--words",
                "16",
                "--layout",
                "4x4",
                "--universe",
                "neighbours",
                "--faults",
                "CFds,AF",
            ]
        )
        == 0
    )
    assert "universe neighbours" in capsys.readouterr().out
    assert (
        main(["coverage", "March C-", "--words", "64", "--universe", "sample:30", "--seed", "9", "--order", "lfsr"])
        == 0
    )
    text = capsys.readouterr().out
    assert "95% CI" in text and "seed 9" in text


def test_any_order_and_layout_without_words(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    """``--any-order down`` walks ⇕ elements down: the same figures as the test written with ⇓; the
    word count comes from ``--layout``."""
    out_json = tmp_path / "any.json"
    any_test, down_test, up_test = (f"{{{d}(w0); {d}(r0,w1); {d}(r1)}}" for d in ("⇕", "⇓", "⇑"))
    argv = ["march", "coverage", any_test, "--layout", "4x2", "--any-order", "down", "--seed", "2"]
    assert main([*argv, "--json", str(out_json)]) == 0
    assert "8 words" in capsys.readouterr().out
    doc = json.loads(out_json.read_text())
    assert doc["words"] == 8 and doc["any_order"] == "down"
    setup = Arrangement(8, layout=(4, 2))
    down = coverage(down_test, setup).to_json()["classes"]
    up = coverage(up_test, setup).to_json()["classes"]
    assert doc["classes"] == down
    assert doc["classes"] != up  # the walk matters for this test, so the option is really used


def test_patterns_and_coverage_are_also_top_level(capsys: pytest.CaptureFixture[str]) -> None:
    for argv in (
        ["coverage", "MATS+", "--words", "4", "--seed", "5"],
        ["march", "coverage", "MATS+", "--words", "4", "--seed", "5"],
    ):
        assert main(argv) == 0
    out = re.sub(r"computed in \d+\.\d+ s", "computed", capsys.readouterr().out)  # wall times differ
    short, long = out.split("memcheck march coverage: seed 5")
    assert short.replace("memcheck coverage: seed 5", "").strip() == long.strip()
    assert main(["--help"]) == 0
    top = capsys.readouterr().out
    assert "march " in top and "coverage " not in top and "patterns " not in top  # aliases stay hidden
