"""Which files are mutated, ``[rtl] mutate`` validation, survivor reasons and the report (pure)."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pytest

from memcheck.cli import main
from memcheck.contract import load_contract
from memcheck.errors import ContractError, UsageError
from memcheck.examples import examples_dir
from memcheck.mutation import (
    MutantOutcome,
    MutantStatus,
    MutationReport,
    Operator,
    find_mutants,
    mutation_files,
    plan_mutants,
    source_diff,
    survivor_reason,
)
from memcheck.mutation.operators import Mutant
from memcheck.report.mutation_report import render_mutation_report


def _copy(tmp_path: Path, name: str) -> Path:
    dst = tmp_path / name
    shutil.copytree(examples_dir() / name, dst)
    return dst / "contract.toml"


def _set_rtl_key(contract: Path, line: str) -> None:
    text = contract.read_text()
    contract.write_text(text.replace("[rtl]\n", f"[rtl]\n{line}\n", 1))


def test_default_mutation_file_is_the_one_defining_top(tmp_path: Path) -> None:
    c = load_contract(_copy(tmp_path, "regfile"))
    assert mutation_files(c) == (c.rtl.sources[0],) if c.rtl else False
    assert mutation_files(c)[0].name == "regfile_wrap.v"


def test_mutate_key_names_files_among_the_sources(tmp_path: Path) -> None:
    path = _copy(tmp_path, "regfile")
    _set_rtl_key(path, 'mutate = ["regfile_wrap.v", "sram_2p.v"]')
    c = load_contract(path)
    assert [f.name for f in mutation_files(c)] == ["regfile_wrap.v", "sram_2p.v"]


def test_mutate_file_not_among_the_sources_is_refused_with_a_suggestion(tmp_path: Path) -> None:
    path = _copy(tmp_path, "regfile")
    _set_rtl_key(path, 'mutate = ["regfile_wrap.sv"]')
    with pytest.raises(ContractError, match=r"not among \[rtl\] sources\. Did you mean 'regfile_wrap\.v'\?"):
        load_contract(path)


def test_mutate_cli_bad_input_exits_2_with_one_sentence(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    path = _copy(tmp_path, "regfile")
    assert main(["mutate", str(path), "--mutants", "0", "--seed", "1"]) == 2
    assert "--mutants 0" in capsys.readouterr().err
    assert main(["mutate", str(path), "--workers", "0", "--seed", "1"]) == 2
    assert "--workers 0" in capsys.readouterr().err
    _set_rtl_key(path, 'mutate = ["nope.v"]')
    report = tmp_path / "err.json"
    assert main(["mutate", str(path), "--seed", "1", "--json", str(report)]) == 2
    err = capsys.readouterr().err
    assert "not among [rtl] sources" in err and "Traceback" not in err
    doc = json.loads(report.read_text())
    assert "not among [rtl] sources" in doc["error"] and doc["seed"] == 1


def test_no_operator_found_exits_2(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    path = _copy(tmp_path, "line_buffer")
    wrap = path.parent / "linebuf_wrap.v"
    wrap.write_text(
        wrap.read_text()
        .replace(".RE (1'b1)", ".RE (re_on)")
        .replace("wire [29:0] q;", "wire [29:0] q;\n    wire re_on = 1;")
    )
    assert find_mutants(wrap.read_text()) == []
    with pytest.raises(UsageError, match=r"no mutation operator applies to linebuf_wrap\.v"):
        plan_mutants(load_contract(path), 5, seed=1)
    assert main(["mutate", str(path), "--seed", "1"]) == 2
    assert "no mutation operator applies" in capsys.readouterr().err


def test_plan_ids_name_candidates_so_a_larger_sample_keeps_them(tmp_path: Path) -> None:
    c = load_contract(_copy(tmp_path, "regfile"))
    small = dict(plan_mutants(c, 4, seed=3).chosen)
    big = dict(plan_mutants(c, 1000, seed=3).chosen)
    assert all(big[k] == m for k, m in small.items())


_WRAP = """module w (input wire clk, input wire en, input wire regce, input wire [7:0] d, output reg [7:0] q);
    reg [7:0] spare;
    always @(posedge clk) begin
        if (en & regce) q <= d;
        spare <= d ^ 8'h0f;
    end
endmodule
"""


def _mutant_on(line_text: str, old: str, new: str) -> Mutant:
    return Mutant.from_edit("w.v", _WRAP, line_text, line_text.replace(old, new), Operator.SWAP, "hand-made")


def test_reason_for_a_signal_nothing_reads_is_likely_equivalent() -> None:
    m = _mutant_on("spare <= d ^ 8'h0f;", "8'h0f", "8'h0e")
    r = survivor_reason(m, _WRAP)
    assert r.equivalent and "'spare'" in r.text and r.label == "likely equivalent"


def test_reason_for_a_tied_pin_is_likely_equivalent() -> None:
    m = _mutant_on("if (en & regce)", "&", "|")
    assert survivor_reason(m, _WRAP, tied=("regce",)).equivalent
    hole = survivor_reason(m, _WRAP, unknown=("contents of words never written (initial)",))
    assert not hole.equivalent and hole.label == "possible hole" and "(initial)" in hole.text


def test_report_counts_rates_json_and_text() -> None:
    m_hole = _mutant_on("if (en & regce)", "&", "|")
    m_eq = _mutant_on("spare <= d ^ 8'h0f;", "8'h0f", "8'h0e")
    outcomes = (
        MutantOutcome("M000", m_hole, MutantStatus.KILLED, "smoke", 3, 1.0),
        MutantOutcome("M001", m_hole, MutantStatus.KILLED, "hang", None, 1.0),
        MutantOutcome(
            "M002",
            m_eq,
            MutantStatus.SURVIVED,
            reason=survivor_reason(m_eq, _WRAP),
            diff=source_diff(m_eq, _WRAP, "M002"),
        ),
        MutantOutcome("M003", m_hole, MutantStatus.SURVIVED, reason=survivor_reason(m_hole, _WRAP)),
        MutantOutcome("M004", m_hole, MutantStatus.NOT_COMPILED, "the RTL does not compile"),
    )
    rep = MutationReport(None, 5, (Path("w.v"),), 9, outcomes, 2, 3.0)
    assert (rep.killed, rep.survived, rep.not_compiled, rep.likely_equivalent) == (2, 2, 1, 1)
    assert rep.kill_rate == pytest.approx(0.5) and rep.kill_rate_non_equivalent == pytest.approx(2 / 3)
    doc = json.loads(json.dumps(rep.to_json()))
    assert doc["kill_rate_non_equivalent"] == pytest.approx(2 / 3) and doc["seed"] == 5
    assert doc["outcomes"][2]["reason"]["label"] == "likely equivalent"
    text = render_mutation_report(rep)
    assert "-        spare <= d ^ 8'h0f;" in text and "+        spare <= d ^ 8'h0e;" in text
    assert "kill rate 50.0% (66.7% of the non-equivalent)" in text and "not sign-off" in text


def test_the_pure_mutation_package_imports_no_simulator() -> None:
    import subprocess
    import sys

    code = (
        "import sys, memcheck.mutation\n"
        "bad = [m for m in sys.modules if m.split('.')[0] in ('cocotb', 'cocotb_tools')\n"
        "       or m.startswith('memcheck.sim')]\n"
        "print(bad)\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"


def test_given_mutants_are_matched_to_the_contract_files_by_path(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    path = _copy(tmp_path, "regfile")
    c = load_contract(path)
    text = (path.parent / "regfile_wrap.v").read_text()
    monkeypatch.chdir(tmp_path)
    m = Mutant.from_edit(
        Path("regfile/regfile_wrap.v"), text, "wr_addr == rd_addr", "wr_addr != rd_addr", Operator.SWAP, "hand-made"
    )
    plan = plan_mutants(c, 1, seed=0, given=[m])
    assert [k for k, _ in plan.chosen] == ["H000"] and plan.chosen[0][1].file == c.rtl.sources[0]  # type: ignore[union-attr]
    other = Mutant.from_edit(
        path.parent / "sram_2p.v", (path.parent / "sram_2p.v").read_text(), "endmodule", "endmodule", Operator.SWAP, ""
    )
    with pytest.raises(UsageError, match="allowed: mutants of the mutation files"):
        plan_mutants(c, 1, seed=0, given=[other])


def test_reason_names_bits_the_file_never_reads() -> None:
    # tag_store keeps 22-bit tags in a 24-bit macro: rdata = q[21:0], and q is driven by the instance.
    text = (examples_dir() / "tag_store" / "tag_wrap.v").read_text()
    m = next(m for m in find_mutants(text) if m.original == "2'b00")
    r = survivor_reason(m, text)
    assert not r.equivalent
    assert "only bits 21:0 of 'q' (declared [23:0])" in r.text


def test_only_picks_candidates_by_id_and_refuses_unknown_ones(tmp_path: Path) -> None:
    c = load_contract(_copy(tmp_path, "regfile"))
    every = dict(plan_mutants(c, 1000, seed=0).chosen)
    plan = plan_mutants(c, 1, seed=0, only=("M005", "m002"))
    assert [k for k, _ in plan.chosen] == ["M002", "M005"]
    assert [m for _, m in plan.chosen] == [every["M002"], every["M005"]]
    with pytest.raises(UsageError, match=r"--only M999: no such mutant; allowed: M000 to M0\d\d"):
        plan_mutants(c, 1, seed=0, only=("M999",))
