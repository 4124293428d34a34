"""``memcheck check A.toml B.toml ... -j N``: one summary table, the worst exit code, JSON and JUnit
over every contract, one output folder per contract; and the folder naming it relies on."""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

from memcheck._outdirs import contract_name, distinct_out_dirs, path_folder
from memcheck.cli import main
from memcheck.errors import MemcheckError
from memcheck.examples import examples_dir
from memcheck.report.many import ContractOutcome, many_junit_xml, worst_verdict

GOOD = str(examples_dir() / "packet_buffer" / "contract.toml")
BUGGY = str(examples_dir() / "packet_buffer_lane_bug" / "contract.toml")
REGFILE = str(examples_dir() / "regfile" / "contract.toml")
CHEAP = ("--examples", "5", "--bulk-examples", "0", "--seed", "4", "--no-waveform")


def test_folder_names_follow_the_single_check_and_differ_when_names_clash(tmp_path: Path) -> None:
    a, b = tmp_path / "a" / "mem" / "contract.toml", tmp_path / "b" / "mem" / "contract.toml"
    c, d = tmp_path / "fifo.toml", tmp_path / "x" / "fifo.toml"
    e = tmp_path / "other.toml"
    out = distinct_out_dirs([a, b, c, d, e], Path("o"))
    assert out == [Path("o/a-mem"), Path("o/b-mem"), Path(f"o/{tmp_path.name}-fifo"), Path("o/x-fifo"), Path("o/other")]
    assert contract_name(a) == "mem" and contract_name(c) == "fifo"
    assert path_folder(a, tmp_path, Path("o")) == Path("o/a/mem")
    assert path_folder(d, tmp_path, Path("o")) == Path("o/x/fifo")
    assert path_folder(Path("/elsewhere/q.toml"), tmp_path, Path("o")) == Path("o/_outside/q")
    with pytest.raises(ValueError):
        distinct_out_dirs([a, a], Path("o"))


def _outcome(verdict: str, name: str = "x.toml") -> ContractOutcome:
    return ContractOutcome(name, verdict, 1.0, 3 if verdict == "fail" else None, {"verdict": verdict}, f"{name}: text")


def test_worst_verdict_orders_error_over_fail_over_pass() -> None:
    assert worst_verdict([_outcome("pass"), _outcome("fail")]) == "fail"
    assert worst_verdict([_outcome("fail"), _outcome("error"), _outcome("pass")]) == "error"
    assert worst_verdict([_outcome("pass")]) == "pass"
    suite = ET.fromstring(many_junit_xml([_outcome("pass", "a.toml"), _outcome("error", "b.toml")], 1, 2.0))[0]
    assert (suite.get("tests"), suite.get("errors"), suite.get("failures")) == ("2", "1", "0")


def test_contracts_that_cannot_run_are_errors_and_the_others_are_reported(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    monkeypatch.chdir(tmp_path)
    (tmp_path / "bad.toml").write_text('[memory]\nwords = "many"\n')
    rc = main(["check", "missing.toml", "bad.toml", "-j", "2", "--json", "r.json", "--junit", "r.xml", *CHEAP])
    out = capsys.readouterr().out
    assert rc == 2
    assert out.startswith("memcheck check: 2 contracts, seed 4,")
    assert "cannot read" in out and "words" in out  # each contract's own message
    report = json.loads((tmp_path / "r.json").read_text())
    assert report["verdict"] == "error" and report["seed"] == 4
    assert [(c["contract"], c["verdict"]) for c in report["contracts"]] == [
        ("missing.toml", "error"),
        ("bad.toml", "error"),
    ]
    cases = ET.parse(tmp_path / "r.xml").getroot()[0].findall("testcase")
    assert [c.get("name") for c in cases] == ["missing.toml", "bad.toml"]
    assert all(c.find("error") is not None for c in cases)


def _rows(out: str) -> dict[str, list[str]]:
    """The summary table's rows by contract path (paths may fold over lines; the first piece is enough)."""
    rows = {}
    for line in out.splitlines():
        cells = line.split()
        if len(cells) == 4 and cells[1] in ("pass", "fail", "error"):
            rows[cells[0]] = cells[1:]
    return rows


@pytest.mark.icarus
def test_a_conforming_and_a_buggy_contract_exit_1_with_one_table(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv("COLUMNS", "250")  # the whole path in one cell
    rc = main(
        ["check", GOOD, BUGGY, "-j", "2", "--phases", "smoke,property", "--json", "r.json", "--junit", "r.xml", *CHEAP]
    )
    out = capsys.readouterr().out
    assert rc == 1, out
    rows = _rows(out)
    assert rows[GOOD][:2] == ["pass", "-"]
    assert rows[BUGGY][0] == "fail" and int(rows[BUGGY][1]) <= 6  # trace length in cycles
    assert f"=== {BUGGY}: fail" in out and "memcheck replay memcheck-out/packet_buffer_lane_bug/replay.json" in out
    assert "1 conform, 1 differ, 0 could not run" in out
    report = json.loads((tmp_path / "r.json").read_text())
    by_name = {c["contract"]: c for c in report["contracts"]}
    assert by_name[BUGGY]["minimal_trace"]["cycles"] == int(rows[BUGGY][1])
    assert by_name[GOOD]["out_dir"] != by_name[BUGGY]["out_dir"]
    assert (tmp_path / "memcheck-out" / "packet_buffer_lane_bug" / "replay.json").is_file()
    assert (tmp_path / "memcheck-out" / "packet_buffer" / "report.txt").is_file()
    suite = ET.parse(tmp_path / "r.xml").getroot()[0]
    assert (suite.get("tests"), suite.get("failures"), suite.get("errors")) == ("2", "1", "0")
    failure = suite.find(f"testcase[@name='{BUGGY}']/failure")
    assert failure is not None and "memcheck replay" in (failure.text or "")


@pytest.mark.icarus
def test_all_conforming_exit_0_and_one_contract_keeps_the_single_output(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    monkeypatch.chdir(tmp_path)
    rc = main(["check", GOOD, REGFILE, "-j", "1", "--phases", "smoke", *CHEAP])
    out = capsys.readouterr().out
    assert rc == 0, out
    assert "2 conform, 0 differ, 0 could not run" in out
    assert sorted(p.name for p in (tmp_path / "memcheck-out").iterdir()) == ["packet_buffer", "regfile"]
    rc = main(["check", REGFILE, "-j", "3", "--phases", "smoke", *CHEAP])
    out = capsys.readouterr().out
    assert rc == 0
    assert out.startswith(f"memcheck check {REGFILE}: seed 4, 5 examples, 0 bulk examples")
    assert "trace (cycles)" not in out and "conform," not in out


def test_an_unexpected_error_in_one_contract_does_not_hide_the_others(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch, capsys: pytest.CaptureFixture[str]
) -> None:
    # Fault injection: the check itself breaks (a bug of ours) for one contract only.
    import memcheck.sim.jobs.check as job

    def broken(contract: str, *args: object, **kwargs: object) -> object:
        if "regfile" in str(contract):
            raise RuntimeError("injected")
        raise MemcheckError(f"{contract}: injected bad input")

    monkeypatch.setattr(job, "check_contract", broken)
    monkeypatch.chdir(tmp_path)
    rc = main(["check", REGFILE, GOOD, "-j", "1", "--json", "r.json", *CHEAP])
    out = capsys.readouterr().out
    assert rc == 2
    assert "internal error (RuntimeError: injected)" in out and "injected bad input" in out
    report = json.loads((tmp_path / "r.json").read_text())
    assert [c["verdict"] for c in report["contracts"]] == ["error", "error"]
