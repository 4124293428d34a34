"""Generated engines and adapters are lint clean (``verilator --lint-only -Wall``) and synthesise with
Yosys without latches. Skipped, with the reason, where Verilator or Yosys is missing (``make setup``
installs both)."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from memcheck._atomic import write_text_atomic
from memcheck.bist.adapter import adapter_verilog, choose_port
from memcheck.bist.lint import lint_file
from memcheck.bist.microcode import plan_engine
from memcheck.bist.verilog import engine_verilog
from memcheck.cli import main
from memcheck.contract import load_contract
from memcheck.examples import examples_dir
from memcheck.march import algorithm_names

EXAMPLES = examples_dir()
pytestmark = pytest.mark.skipif(
    not (shutil.which("verilator") and shutil.which("yosys")),
    reason="Verilator and Yosys are not installed (tools/ensure-eda.sh installs them)",
)


@pytest.mark.parametrize("name", algorithm_names())
def test_every_library_engine_is_lint_clean_and_latch_free(name: str, tmp_path: Path) -> None:
    # lfsr order, several backgrounds with flips and pauses: the most logic one engine can have
    plan = plan_engine(name, 37, 8, order="lfsr", seed=3, backgrounds="standard,checkerboard", pause_cycles=10)
    path = write_text_atomic(tmp_path / f"{plan.module}.v", engine_verilog(plan))
    report = lint_file(path)
    assert report.clean, report.render()
    assert report.latches == 0 and report.cells > 100
    assert not any("LATCH" in t.upper() for t in report.cell_types)


@pytest.mark.parametrize("example", ["packet_buffer", "tag_store", "coeff_lut"])
def test_adapters_are_lint_clean(example: str, tmp_path: Path) -> None:
    contract = load_contract(EXAMPLES / example / "contract.toml")
    m = contract.memory
    plan = plan_engine("MATS+", m.words, m.width, backgrounds="solid", read_latency=m.read_latency, module="bist")
    path = write_text_atomic(tmp_path / "bist_adapter.v", adapter_verilog(plan, contract, choose_port(contract, None)))
    assert lint_file(path).clean


def test_lint_reports_a_latch_and_warnings(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    bad = tmp_path / "latchy.v"
    bad.write_text("module latchy(input wire en, input wire d, output reg q);\nalways @* if (en) q = d;\nendmodule\n")
    report = lint_file(bad)
    assert report.latches == 1 and not report.clean
    assert any("LATCH" in w for w in report.verilator)
    assert main(["bist", "lint", str(bad)]) == 1
    assert "NOT clean" in capsys.readouterr().out


def test_cli_lint_of_a_generated_engine_exits_0(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    out = tmp_path / "march_bist.v"
    assert main(["bist", "generate", "March C-", "--words", "64", "--width", "16", "-o", str(out)]) == 0
    assert main(["bist", "lint", str(out)]) == 0
    text = capsys.readouterr().out
    assert "0 latch(es)" in text and "clean" in text
    assert main(["bist", "lint", str(tmp_path / "missing.v")]) == 2
