"""``memcheck coverage`` end to end: tables, escapes with witnesses, comparison, JSON, plot, errors."""

from __future__ import annotations

import json
import re
from pathlib import Path

import pytest

from memcheck.cli import main


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


@pytest.mark.parametrize(
    ("args", "message"),
    [
        (["coverage", "MATS+", "--words", "8", "--universe", "neighbours"], "layout"),
        (["coverage", "MATS+", "--words", "8", "--faults", "SAF,BOGUS"], "unknown fault class"),
        (["coverage", "{⇕(w0); ⇑(r1)}", "--words", "8"], "fault-free memory fails"),
        (["coverage", "March Q", "--words", "8"], "not a March algorithm"),
        (["coverage", "MATS+", "March C-", "--words", "8"], "--compare"),
        (["coverage", "MATS+", "--words", "8", "--layout", "3x3"], "layout"),
        (["coverage", "MATS+", "--words", "0"], "words"),
        (["coverage", "MATS+", "--words", "8", "--universe", "sample:0"], "universe"),
    ],
)
def test_bad_input_exits_2_with_one_paragraph(
    args: list[str], message: str, capsys: pytest.CaptureFixture[str]
) -> None:
    assert main(args) == 2
    err = capsys.readouterr().err
    assert message in err and "Traceback" not in err and err.startswith("memcheck: error:")
