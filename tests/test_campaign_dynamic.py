"""The faulty memory beyond READ_LATENCY 1 and static faults: every READ_LATENCY of the BIST engine
(0 to 4) and the two-operation dynamic fault classes, on RTL, instance by instance equal to the fast
fault simulator (memcheck.faults.fast, itself held to the reference engine by the property tests).

Dynamic models: the established write-then-read two-operation faults as listed in H.-J. Wunderlich (ed.),
"Models in Hardware Testing", Springer 2010, ch. 6, sec. 6.4.4 (docs/faults.md).
"""

from __future__ import annotations

import shutil
from pathlib import Path
from typing import Any

import pytest

from memcheck.bist.campaign import CampaignSpec, run_campaign
from memcheck.bist.campaign.rtl import ShardJob, build_harness, run_shard
from memcheck.bist.faulty_memory import MemoryShape, faulty_memory_verilog, pack_row
from memcheck.bist.microcode import plan_engine
from memcheck.cli import main
from memcheck.errors import BistError
from memcheck.faults.universe import CLASSES, DYNAMIC_CLASSES
from memcheck.march.library import algorithm_names

pytestmark = pytest.mark.skipif(shutil.which("iverilog") is None, reason="needs Icarus Verilog")

DYNAMIC = ",".join(DYNAMIC_CLASSES)


def _verdicts(report: Any) -> set[str]:
    out = set()
    for c in report.classes:
        out |= {v for v, n in (("detected", c.detected), ("partial", c.partial), ("escaped", c.escaped)) if n}
    return out


@pytest.mark.parametrize("latency", [0, 2, 4])
def test_a_fault_free_memory_never_fails_any_library_algorithm_at_any_latency(latency: int, tmp_path: Path) -> None:
    for name in algorithm_names():
        plan = plan_engine(name, 8, 2, backgrounds="standard", pause_cycles=5, read_latency=latency)
        harness = build_harness(plan, MemoryShape(8, 2, latency, copies=2, retention=5))
        res = run_shard(harness, ShardJob(0, (pack_row({"drive": 1}), pack_row({}))), tmp_path)
        assert res.failed == (False, False) and not res.engine_fail, (name, latency)


@pytest.mark.parametrize("latency", [0, 3])
@pytest.mark.parametrize(
    ("test", "words", "width", "order"),
    [("March C-", 16, 2, "lfsr"), ("March SS", 8, 1, "linear"), ("March G", 8, 1, "linear")],
)
def test_rtl_agrees_with_the_fault_simulator_at_other_latencies(
    latency: int, test: str, words: int, width: int, order: str
) -> None:
    spec = CampaignSpec(
        test, words, width, order=order, universe="sample:6", seed=21, read_latency=latency, pause_cycles=8
    )
    report = run_campaign(spec, workers=1)
    assert [c.cls for c in report.classes] == list(CLASSES)
    assert report.disagreements == ()
    assert report.to_json()["read_latency"] == latency
    plan = plan_engine(test, words, width, order=order, pause_cycles=8)
    assert report.figures["cycles_per_simulation"] == plan.cycles(latency)
    if test == "March G":  # delay elements: every retention fault decays during a pause, at every latency
        assert {c.cls: c.coverage for c in report.classes}["DRF"] == 1.0


# Walks that pair a write with a read of the same word inside some elements and not others, and a
# write at the end of one element followed by a read of the same word at the start of the next (never
# a pair: docs/faults.md), so some dynamic faults are detected, some partly, some escape.
MIXED = "{⇑(w0); ⇑(r0,w1); ⇑(r1,w0,r0); ⇓(r0,w1,r1)}"


@pytest.mark.parametrize("test", ["March RAW", "March AB", "March C-", MIXED])
@pytest.mark.parametrize(("words", "width"), [(64, 1), (32, 8)])
@pytest.mark.parametrize("order", ["linear", "lfsr"])
def test_rtl_agrees_on_the_dynamic_classes(test: str, words: int, width: int, order: str) -> None:
    spec = CampaignSpec(test, words, width, order=order, classes=DYNAMIC, universe="sample:10", seed=17, copies=1024)
    report = run_campaign(spec, workers=1)
    assert [c.cls for c in report.classes] == list(DYNAMIC_CLASSES)
    assert report.disagreements == ()
    cov = {c.cls: c.coverage for c in report.classes}
    if test in ("March RAW", "March AB"):
        # Published: every two-operation (write then read) dynamic fault, single- and two-cell. S. Hamdioui,
        # Z. Al-Ars and A.J. van de Goor, "Testing Static and Dynamic Faults in Random Access Memories",
        # IEEE VTS 2002 (March RAW); A. Benso, A. Bosio, S. Di Carlo, G. Di Natale and P. Prinetto, "March AB,
        # March AB1: New March Tests for Unlinked Dynamic Memory Faults", ITC 2005 (March AB). Value written
        # from memory; table/page not checked (the same claim tests/test_faults_claims.py holds the simulator to).
        assert cov == dict.fromkeys(DYNAMIC_CLASSES, 1.0)
    elif test == "March C-":
        # March C- never reads a word right after writing it: no dynamic fault is sensitised (docs/faults.md's
        # back-to-back rule; consequence of the notation, worked out by hand).
        assert cov == dict.fromkeys(DYNAMIC_CLASSES, 0.0)
    else:
        assert {"detected", "escaped"} <= _verdicts(report)


def test_the_element_boundary_input_decides_a_pair(tmp_path: Path) -> None:
    # One word, dRDF <0w1r1/0/0>: ⇑(r0,w1); ⇑(r1) writes 1 then reads it in the next element: no pair, no
    # failure. With split tied low the memory pairs them and fails: the input is what keeps RTL and the
    # simulator together across element boundaries.
    spec = CampaignSpec("{⇑(w0); ⇑(r0,w1); ⇑(r1)}", 1, 1, classes="dRDF", seed=1)
    assert {c.cls: c.escaped for c in run_campaign(spec, workers=1).classes} == {"dRDF": 4}
    from memcheck.bist.campaign.runner import prepare

    prepared = prepare(spec)
    tied = prepared.harness.sources[-1][1].replace(".split(split)", ".split(1'b0)")
    assert tied != prepared.harness.sources[-1][1]
    harness = type(prepared.harness)(
        (*prepared.harness.sources[:-1], ("campaign_tb.v", tied)), prepared.harness.copies, prepared.harness.cycles
    )
    res = run_shard(harness, prepared.jobs[0], tmp_path)
    assert any(res.failed)


def test_cli_takes_the_read_latency(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    out = tmp_path / "m.v"
    assert main(["bist", "faulty-memory", "--words", "8", "--read-latency", "0", "-o", str(out)]) == 0
    assert "parameter READ_LATENCY = 0" in out.read_text()
    argv = ["bist", "campaign", "MATS+", "--words", "8", "--faults", "SAF,dRDF", "--read-latency", "4"]
    assert main([*argv, "--seed", "2", "--workers", "1"]) == 0
    assert "agreement" in capsys.readouterr().out
    assert main([*argv[:-2], "--read-latency", "5", "--seed", "2"]) == 2
    assert "read latency" in capsys.readouterr().err


def test_latency_out_of_range_is_refused() -> None:
    with pytest.raises(BistError, match="READ_LATENCY is 0 to 4"):
        faulty_memory_verilog(MemoryShape(8, 1, 5))


@pytest.mark.slow
@pytest.mark.parametrize("latency", [0, 3])
@pytest.mark.parametrize("test", ["March RAW", "March AB"])
@pytest.mark.parametrize(("words", "width", "order"), [(64, 1, "linear"), (32, 8, "lfsr")])
def test_rtl_agrees_on_larger_dynamic_samples(latency: int, test: str, words: int, width: int, order: str) -> None:
    spec = CampaignSpec(
        test, words, width, order=order, classes=DYNAMIC, universe="sample:150", seed=8, read_latency=latency
    )
    report = run_campaign(spec, workers=2)
    assert report.disagreements == ()
    assert sum(c.faults for c in report.classes) >= 7 * 64


def test_dynamic_fail_logs_from_rtl_diagnose_back_to_the_instance(tmp_path: Path) -> None:
    # Each dynamic instance that failed on RTL (READ_LATENCY 0) gives a first-fail log equal to the reference
    # engine's first failing read from one of its power-up states, and diagnosis (among the instance's own class, to
    # keep the test short) ranks the instance first.
    from memcheck.bist.campaign.faillog import write_campaign_log
    from memcheck.diagnose import diagnose, fail_log
    from memcheck.faults import Arrangement
    from memcheck.faults.replay import power_up_states
    from memcheck.march.library import resolve_test

    spec = CampaignSpec("March RAW", 8, 2, classes="dRDF,dCFds,dCFir", universe="sample:3", seed=6, read_latency=0)
    report = run_campaign(spec, workers=1)
    assert report.agree
    test, setup = resolve_test("March RAW"), Arrangement(8, 2, seed=6)
    checked = 0
    for k, o in enumerate(report.outcomes):
        _, _, rows = write_campaign_log(report, tmp_path / f"{k}.csv", "March RAW", k)
        if not rows:
            continue
        states = power_up_states(len(o.fault.power_up_labels()))
        assert any(fail_log(test, o.fault, setup, s)[:1] == rows for s in states)
        found = diagnose(test, setup, rows, first_fail=True, classes=(o.cls,))
        assert found.rank_of(o.fault) == 1, o.fault.describe()
        checked += 1
    assert checked == 9
