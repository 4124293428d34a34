"""Fail logs written by runs and read back by diagnosis: ``march run --fail-log`` on RTL with an
injected stuck-at cell, and ``bist campaign --fail-log`` for every instance of a small campaign.

The round trips are our own checks: the run's failing reads (a ``march run`` lists every one, checked
against the reference engine's prediction; a campaign copy its first), diagnosed, must rank the
injected fault (or one indistinguishable from it under the test) first.
"""

from __future__ import annotations

import json
import os
import shlex
from pathlib import Path
from typing import Any

import pytest

from memcheck.bist.campaign import CampaignSpec, run_campaign
from memcheck.bist.campaign.faillog import write_campaign_log
from memcheck.cli import main
from memcheck.diagnose import FailRow, diagnose, fail_log, read_fail_log
from memcheck.diagnose.from_runs import diagnose_command, march_failure_row
from memcheck.faults import Arrangement, Cell, CellFault, model_named
from memcheck.faults.replay import power_up_states
from memcheck.march.expand import MarchStep
from memcheck.march.library import resolve_test
from memcheck.ops import Expected, read
from memcheck.records import Activity, CheckedTrace, MarchFailure, Observed
from tests.test_sim_march_run import tiny_rtl

_SLOW = bool(os.environ.get("MEMCHECK_SLOW"))


def _failure(activity: Activity, expected: int | None, got: Observed) -> MarchFailure:
    step = MarchStep(40, 2, 0, 1, read(6), expected)
    return MarchFailure(
        41, "a", 40, activity, step, "d", expected, Expected(0, 0), got, 0, 0, CheckedTrace("power-up", ())
    )


def test_march_failure_row_names_the_read_and_counts_x_bits_as_failing() -> None:
    assert march_failure_row(_failure("read", 0xF0, Observed(0xF1, 0xFF)), 8) == [FailRow(1, 2, 0, 6, 0xF0, 0xF1)]
    # bits 0..3 read as X: they fail (the complement of the expected bits there)
    assert march_failure_row(_failure("read", 0xF0, Observed(0xF0, 0xF0)), 8) == [FailRow(1, 2, 0, 6, 0xF0, 0xFF)]
    assert march_failure_row(_failure("quiet", None, Observed(1, 1)), 8) == []
    assert march_failure_row(None, 8) == []


def test_diagnose_command_carries_every_memory_option() -> None:
    setup = Arrangement(64, 4, layout=(8, 8), order="lfsr", backgrounds="solid,checkerboard", seed=9, any_order="down")
    cmd = diagnose_command("March C-", setup, "f.csv")
    assert cmd == (
        "memcheck diagnose 'March C-' f.csv --words 64 --width 4 --layout 8x8 --order lfsr --any-order down "
        "--backgrounds solid,checkerboard --seed 9 --first-fail"
    )


def _diagnose_cmd(log: Path, tmp_path: Path) -> dict[str, Any]:
    """Run the read-back command the log's comment names; its JSON report."""
    cmd = next(line for line in log.read_text().splitlines() if line.startswith("# read it back: "))
    argv = shlex.split(cmd.removeprefix("# read it back: "))
    assert argv[:2] == ["memcheck", "diagnose"]
    js = tmp_path / "d.json"
    assert main([*argv[1:], "--json", str(js)]) == 0
    doc: dict[str, Any] = json.loads(js.read_text())
    return doc


@pytest.mark.icarus
@pytest.mark.parametrize(
    ("value", "address"),
    [
        (1, 6),
        # the stuck-at-0 twin: whole-log diagnosis replays every candidate (about 3 min under coverage)
        pytest.param(0, 9, marks=[pytest.mark.slow, pytest.mark.skipif(not _SLOW, reason="set MEMCHECK_SLOW=1")]),
    ],
)
def test_march_run_fail_log_lists_every_failing_read_and_diagnoses_back(
    tmp_path: Path, value: int, address: int, capsys: pytest.CaptureFixture[str]
) -> None:
    """The RTL run goes on past its first failure: the log holds every failing read the reference
    engine predicts for the injected stuck-at cell, and its diagnosis ranks that cell first."""
    c = tiny_rtl(tmp_path, "sa", SA_ADDR=address, SA_BIT=3, SA_VAL=value)
    log = tmp_path / "fails.csv"
    argv = ["march", "run", str(c), "March C-", "--out", str(tmp_path / "out"), "--no-waveform", "--seed", "3"]
    assert main([*argv, "--fail-log", str(log)]) == 1
    rows = read_fail_log(log)
    assert f"wrote {log} ({len(rows)} failing reads)" in capsys.readouterr().out
    text = log.read_text()
    assert text.startswith("# memcheck march run ") and f"every failing March read ({len(rows)})" in text
    assert "--backgrounds std0,std1,std2,std3" in text  # 8-bit words: the standard set, the shared default
    injected = CellFault(model_named(f"SA{value}"), Cell(address, 3))
    setup = Arrangement(16, 8)
    predicted = [fail_log(resolve_test("March C-"), injected, setup, s) for s in power_up_states(1)]
    assert len(rows) > 1 and rows in predicted
    doc = _diagnose_cmd(log, tmp_path)
    assert not doc["first_fail"]
    top = [g for g in doc["groups"] if g["rank"] == 1]
    assert any(injected.describe() in g["instances"] for g in top), top
    # cut at --fail-log-limit: the first rows, said so, read back with --first-reads
    assert main([*argv, "--fail-log", str(log), "--fail-log-limit", "2"]) == 1
    assert read_fail_log(log) == rows[:2]
    assert f"the first 2 of {len(rows)} failing March reads" in log.read_text()
    assert "--first-reads 2" in log.read_text()
    top = [g for g in _diagnose_cmd(log, tmp_path)["groups"] if g["rank"] == 1]
    assert any(injected.describe() in g["instances"] for g in top), top


@pytest.mark.icarus
def test_passing_march_run_writes_an_empty_fail_log(tmp_path: Path) -> None:
    c = tiny_rtl(tmp_path, "good")
    log = tmp_path / "fails.csv"
    assert (
        main(["march", "run", str(c), "MATS+", "--out", str(tmp_path / "o"), "--no-waveform", "--fail-log", str(log)])
        == 0
    )
    assert read_fail_log(log) == [] and "no failing March read" in log.read_text()


@pytest.mark.icarus
def test_campaign_fail_logs_diagnose_back_to_each_failing_instance(tmp_path: Path) -> None:
    # Every class the campaign runs, decoder faults included (run bit by bit on RTL, put together
    # here): each instance that failed on RTL gives a one-row log whose diagnosis ranks it first.
    spec = CampaignSpec("March C-", 8, 2, classes="SAF,TF,CFid,SOF,AF", universe="sample:3", seed=4)
    report = run_campaign(spec, workers=1)
    assert report.agree
    test, setup = resolve_test("March C-"), Arrangement(8, 2, seed=4)
    checked = 0
    for k, o in enumerate(report.outcomes):
        path = tmp_path / f"{k}.csv"
        _, _, rows = write_campaign_log(report, path, "March C-", k)
        assert read_fail_log(path) == rows
        if not rows:
            assert not any(o.failed)
            continue
        d = diagnose(test, setup, rows, first_fail=True)
        assert d.rank_of(o.fault) == 1, f"{o.fault.describe()}: rank {d.rank_of(o.fault)}"
        # the logged read is the first failing read of the reference engine from that power-up state
        states = power_up_states(len(o.fault.power_up_labels()))
        assert any(fail_log(test, o.fault, setup, s)[:1] == rows for s in states)
        checked += 1
    assert checked >= 10


@pytest.mark.icarus
def test_campaign_cli_fail_log_and_instance_choice(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    log = tmp_path / "f.csv"
    argv = ["bist", "campaign", "MATS+", "--words", "8", "--faults", "SAF", "--workers", "1", "--seed", "2"]
    assert main([*argv, "--fail-log", str(log), "--fail-log-instance", "3"]) == 0
    out = capsys.readouterr().out
    assert f"wrote {log}: instance 3 " in out
    assert "# memcheck bist campaign 'MATS+': instance 3 [SAF]" in log.read_text()
    assert len(read_fail_log(log)) == 1
    assert main([*argv, "--fail-log", str(log), "--fail-log-instance", "99"]) == 2
    assert "instances 0..15" in capsys.readouterr().err
