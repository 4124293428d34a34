"""Fault coverage measured on RTL (``memcheck bist campaign``): the generated engine against the faulty
memory, instance by instance equal to the fast fault simulator; published claims on RTL; a fault-free
memory never fails; Dask gives the same report as local processes; bad input exits 2.

The independent second model here is the fault simulator (memcheck.faults.fast, itself checked against
the reference engine): the RTL model is a separate Verilog implementation of docs/faults.md.
"""

from __future__ import annotations

import json
import shutil
import socket
from pathlib import Path
from typing import Any

import pytest

from memcheck.bist.campaign import CampaignSpec, execute, prepare, run_campaign
from memcheck.bist.campaign.rtl import ShardJob, build_harness, run_shard
from memcheck.bist.faulty_memory import ROW_BITS, ROW_FIELDS, MemoryShape, pack_row
from memcheck.bist.microcode import plan_engine
from memcheck.cli import main
from memcheck.faults.geometry import Arrangement
from memcheck.faults.sampling import class_size
from memcheck.faults.universe import CLASSES
from memcheck.march.library import algorithm_names

pytestmark = pytest.mark.skipif(shutil.which("iverilog") is None, reason="needs Icarus Verilog")

CASES = [
    (test, words, width, order)
    for test in ("MATS+", "March C-", "March SS")
    for words, width in ((64, 1), (32, 8))
    for order in ("linear", "lfsr")
]


def _variety(report: Any) -> set[str]:
    out = set()
    for c in report.classes:
        out |= {v for v, n in (("detected", c.detected), ("partial", c.partial), ("escaped", c.escaped)) if n}
    return out


@pytest.mark.parametrize(("test", "words", "width", "order"), CASES)
def test_rtl_agrees_with_the_fault_simulator_on_every_class(test: str, words: int, width: int, order: str) -> None:
    report = run_campaign(
        CampaignSpec(test, words, width, order=order, universe="sample:8", seed=11, copies=1024), workers=1
    )
    assert [c.cls for c in report.classes] == list(CLASSES)
    assert all(c.faults == 8 for c in report.classes)
    assert report.disagreements == ()
    # the comparison can fail: these tests leave some faults undetected on a good engine
    assert "escaped" in _variety(report) or test == "March SS"


@pytest.mark.slow
@pytest.mark.parametrize(("test", "words", "width", "order"), CASES)
def test_rtl_agrees_on_larger_samples(test: str, words: int, width: int, order: str) -> None:
    report = run_campaign(CampaignSpec(test, words, width, order=order, universe="sample:120", seed=5), workers=2)
    # A class smaller than the sample is taken whole.
    setup = Arrangement(words, width, order=order, seed=5)
    assert {c.cls: c.faults for c in report.classes} == {k: min(120, class_size(k, setup)) for k in CLASSES}
    assert report.disagreements == ()


def _coverage(report: Any) -> dict[str, float]:
    return {c.cls: c.coverage for c in report.classes}


def test_mats_plus_detects_every_saf_and_af_on_rtl() -> None:
    # MATS+ detects all stuck-at and address-decoder faults: A.J. van de Goor, "Using March Tests to Test
    # SRAMs", IEEE Design & Test of Computers 10(1), 1993 (value written from memory).
    report = run_campaign(CampaignSpec("MATS+", 16, 1, classes="SAF,AF"), workers=1)
    assert _coverage(report) == {"SAF": 1.0, "AF": 1.0}
    assert report.disagreements == ()


def test_march_c_minus_detects_every_unlinked_cfid_cfin_cfst_on_rtl() -> None:
    # March C- detects all unlinked CFid, CFin and CFst (and AF, SAF, TF): van de Goor 1993, as above
    # (value written from memory).
    report = run_campaign(CampaignSpec("March C-", 8, 1, classes="CFid,CFin,CFst,SAF,TF,AF"), workers=1)
    assert set(_coverage(report).values()) == {1.0}
    assert report.disagreements == ()


def test_march_ss_detects_every_static_two_cell_fault_on_rtl() -> None:
    # March SS detects all static simple (unlinked) single- and two-cell faults: S. Hamdioui, A.J. van de
    # Goor and M. Rodgers, "March SS: a Test for All Static Simple RAM Faults", MTDT 2002 (value written
    # from memory). CFin/CFid are the classic names of some of those two-cell primitives.
    classes = "CFst,CFds,CFtr,CFwd,CFrd,CFdrd,CFir,CFin,CFid"
    report = run_campaign(CampaignSpec("March SS", 6, 1, classes=classes), workers=1)
    assert set(_coverage(report).values()) == {1.0}
    assert report.disagreements == ()


def test_a_fault_free_memory_never_fails_any_library_algorithm(tmp_path: Path) -> None:
    for name in algorithm_names():
        plan = plan_engine(name, 8, 2, backgrounds="standard", pause_cycles=5)
        harness = build_harness(plan, MemoryShape(8, 2, copies=2, retention=5))
        res = run_shard(harness, ShardJob(0, (pack_row({"drive": 1}), pack_row({}))), tmp_path)
        assert res.failed == (False, False) and not res.engine_fail, name


def test_the_engine_fail_flag_matches_the_harness_for_the_driving_copy(tmp_path: Path) -> None:
    # copy 0 drives the engine's read data: a stuck-at-0 cell makes the engine itself fail
    plan = plan_engine("MATS+", 16, 1)
    harness = build_harness(plan, MemoryShape(16, 1, copies=2))
    prepared = prepare(CampaignSpec("MATS+", 16, 1, classes="SAF", universe="sample:1", seed=2, copies=2))
    res = run_shard(harness, ShardJob(0, prepared.jobs[0].rows), tmp_path)
    assert res.engine_fail and res.failed[0]


def test_table_rows_hold_every_field() -> None:
    assert sum(b for _, b in ROW_FIELDS) <= ROW_BITS
    row = pack_row({"kind": 1, "vword": 5, ROW_FIELDS[-1][0]: 1})
    assert len(row) == ROW_BITS // 4 and int(row, 16) & (1 << (ROW_BITS - sum(b for _, b in ROW_FIELDS)))


def test_shards_give_the_same_result_whatever_their_size() -> None:
    spec = CampaignSpec("March C-", 16, 2, universe="sample:4", seed=9)
    big = run_campaign(spec, workers=1).to_json()
    small = run_campaign(CampaignSpec(**{**spec.__dict__, "copies": 64}), workers=2).to_json()
    for doc in (big, small):
        doc.pop("timing")
        doc.pop("figures")
    assert big == small


def test_dask_local_cluster_gives_the_local_report() -> None:
    distributed = pytest.importorskip("dask.distributed")
    spec = CampaignSpec("MATS+", 16, 2, universe="sample:3", seed=4, copies=128)
    local = run_campaign(spec, workers=1).to_json()
    with distributed.LocalCluster(n_workers=2, processes=True, threads_per_worker=1, dashboard_address=None) as lc:
        remote = run_campaign(spec, scheduler=lc.scheduler_address).to_json()
    local.pop("timing")
    remote.pop("timing")
    assert remote == local


def test_cli_writes_the_json_report_and_exits_0_on_agreement(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    out = tmp_path / "c.json"
    argv = ["bist", "campaign", "MATS+", "--words", "16", "--universe", "sample:2", "--seed", "3"]
    assert main([*argv, "--workers", "1", "--json", str(out)]) == 0
    assert "seed 3" in capsys.readouterr().out.splitlines()[0]
    doc = json.loads(out.read_text())
    assert doc["disagreements"] == [] and doc["seed"] == 3
    assert set(doc["classes"]) == set(CLASSES)
    assert {"faults", "detected", "partial", "escaped", "coverage"} <= set(doc["classes"]["SAF"])


def test_an_interrupted_campaign_leaves_no_report(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    # Ctrl-C in the middle of the shards: no report file at all (written atomically at the end only)
    import memcheck.bist.campaign.runner as runner

    def boom(*_: object, **__: object) -> None:
        raise KeyboardInterrupt

    monkeypatch.setattr(runner, "run_shard", boom)
    out = tmp_path / "c.json"
    assert main(["bist", "campaign", "MATS+", "--words", "8", "--workers", "1", "--json", str(out)]) != 0
    assert list(tmp_path.iterdir()) == []


def test_an_unreachable_scheduler_exits_2_naming_it(capsys: pytest.CaptureFixture[str]) -> None:
    with socket.socket() as s:  # a port nobody listens on
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    address = f"tcp://127.0.0.1:{port}"
    assert main(["bist", "campaign", "MATS+", "--words", "8", "--scheduler", address]) == 2
    err = capsys.readouterr().err
    assert address in err and "Traceback" not in err


def test_faulty_memory_command_writes_a_module_icarus_compiles(tmp_path: Path) -> None:
    import subprocess

    out = tmp_path / "faulty_sram.v"
    assert main(["bist", "faulty-memory", "--words", "32", "--width", "4", "-o", str(out)]) == 0
    comp = subprocess.run(["iverilog", "-g2005", "-o", str(tmp_path / "m.vvp"), str(out)], capture_output=True)
    assert comp.returncode == 0, comp.stderr
    assert "module faulty_sram" in out.read_text()


def test_every_shard_is_returned_in_order() -> None:
    prepared = prepare(CampaignSpec("MATS", 8, 1, universe="sample:2", seed=1, copies=8))
    results = execute(prepared, workers=2)
    assert [r.index for r in results] == [j.index for j in prepared.jobs] and len(results) > 1
