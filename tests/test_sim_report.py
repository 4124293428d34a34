"""Failure reports: the rule a mismatch breaks, the table, JSON and JUnit (no simulator needed)."""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import pytest

from memcheck.contract import Contract, PortSpec, ResetSpec
from memcheck.ops import IDLE, Cycle, OpKind, PortOp, idle, read, write
from memcheck.records import CheckedTrace, CheckResult, CheckVerdict, Failure, ModelStart, Observed, PhaseResult
from memcheck.report import explain, junit_xml, render_report, render_table, report_dict, write_reports
from memcheck.report.text import binary_known, hex_known
from memcheck.sim.checking.compare import check, start_model


def _observe(
    c: Contract,
    cycles: Sequence[Cycle],
    start: ModelStart,
    *,
    at: int,
    port: int = 0,
    value: int | None = None,
    flip: int = 0,
    defined: int | None = None,
) -> CheckedTrace:
    """Observations equal to the model's expectations (unknown bits read as 0), except at ``at``."""
    exp = start_model(c, start).run(cycles)
    full = c.memory.word_mask
    obs: list[tuple[Observed | None, ...]] = []
    for k, row in enumerate(exp):
        cells: list[Observed | None] = []
        for p, e in enumerate(row):
            if not c.ports[p].can_read:
                cells.append(None)
                continue
            o = Observed(e.value & e.known, full)
            if k == at and p == port:
                v = (o.value ^ flip) if value is None else value
                o = Observed(v, full if defined is None else defined)
            cells.append(o)
        obs.append(tuple(cells))
    return check(c, start, cycles, obs)


def _two_port(**memory: Any) -> Contract:
    base = Contract.simple(16, 8, **memory)
    b = PortSpec(
        name="b",
        role="readwrite",
        clock="clk",
        address="addr_b",
        enable="en_b",
        write_enable="we_b",
        write_data="wdata_b",
        read_data="rdata_b",
    )
    return Contract(memory=base.memory, ports=(base.ports[0], b))


def test_read_during_write_old() -> None:
    c = Contract.simple(16, 8, read_during_write="old")
    ct = _observe(c, [(write(3, 0x11),), (write(3, 0x22),), (IDLE,)], "unknown", at=2, value=0x22)
    ex = explain(c, ct)
    assert ex is not None and ex.key == "read_during_write" and "old word" in ex.rule and ex.cycle == 2


def test_idle_keep() -> None:
    c = Contract.simple(16, 8, idle_read_data="keep")
    ct = _observe(c, [(write(3, 0x11),), (read(3),), (IDLE,), (IDLE,)], "unknown", at=3, flip=0x80)
    ex = explain(c, ct)
    assert ex is not None and ex.key == "idle_read_data" and "hold the last read result" in ex.rule


def test_collision_old_names_both_ports() -> None:
    c = _two_port(collision="old")
    cycles = [(write(5, 0x0F), IDLE), (write(5, 0xF0), read(5)), (IDLE, IDLE)]
    ct = _observe(c, cycles, "unknown", at=2, port=1, value=0xF0)
    ex = explain(c, ct)
    assert ex is not None and ex.key == "collision" and "port a did write" in ex.detail


def test_write_collision_first() -> None:
    c = _two_port(write_collision="first")
    cycles = [(write(5, 0x0F), write(5, 0xF0)), (read(5), IDLE), (IDLE, IDLE)]
    ct = _observe(c, cycles, "unknown", at=2, value=0xF0)
    ex = explain(c, ct)
    assert ex is not None and ex.key == "write_collision" and "port a is listed first" in ex.detail


def test_lane_masking_bits_outside_the_written_lanes() -> None:
    c = Contract.simple(16, 8, lane_width=4)
    cycles = [(write(2, 0xAB),), (write(2, 0x0C, 0b01),), (read(2),), (IDLE,)]
    ct = _observe(c, cycles, "unknown", at=3, value=0x0C)  # upper lane lost its old 0xA
    ex = explain(c, ct)
    assert ex is not None and ex.key == "lane_enable" and "leave the other bits" in ex.rule


def test_disabled_port_that_writes() -> None:
    c = Contract.simple(16, 8)
    cycles = [(write(2, 0x00),), (idle(2, 0x5A),), (read(2),), (IDLE,)]
    ct = _observe(c, cycles, "unknown", at=3, value=0x5A)
    ex = explain(c, ct)
    assert ex is not None and ex.key == "enable" and "disabled" in ex.detail


def test_initial_zero_after_reset_and_x_wording() -> None:
    c = Contract.simple(16, 8, initial="zero")
    c = Contract(memory=c.memory, ports=c.ports, reset=ResetSpec("rst_n"))
    ct = _observe(c, [(read(7),), (IDLE,)], "reset", at=1, value=0, defined=0x0F)
    ex = explain(c, ct)
    assert (
        ex is not None and ex.key == "initial" and "X/Z" in ex.rule and "bits 7:4" in ex.rule
    )  # contiguous: one range


def test_data_one_cycle_early_gets_a_latency_hint() -> None:
    c = Contract.simple(16, 8, read_latency=1, idle_read_data="keep")
    cycles = [(write(1, 0x33),), (write(2, 0x44),), (read(1),), (read(2),), (IDLE,)]
    # At cycle 3 the read of address 1 is due; the wrapper already shows address 2's data.
    ct = _observe(c, cycles, "unknown", at=3, value=0x44)
    ex = explain(c, ct)
    assert ex is not None and "one cycle early" in ex.detail


def test_hex_and_binary_rendering_mark_unknown_bits() -> None:
    assert hex_known(0xAB, 0xFF, 8) == "ab"
    assert hex_known(0xAB, 0x0F, 8) == "xb"
    assert hex_known(0xAB, 0x3F, 8) == "?b"
    assert hex_known(0x5, 0x7, 3) == "5"
    assert binary_known(0b1010, 0b1100, 10) == "xx xxxx10xx"
    assert binary_known(0b1010, 0b1111, 4) == "1010"


def _result(tmp: Path, checked: CheckedTrace, c: Contract) -> CheckResult:
    fail = Failure("property", ("reset", "fill", "flush"), checked)
    return CheckResult(
        verdict=CheckVerdict.FAIL,
        contract=c,
        contract_path=tmp / "c.toml",
        seed=42,
        phases=(PhaseResult("smoke", "pass", 10, 9, 0.1), PhaseResult("property", "fail", 50, 40, 1.0, "found")),
        failure=fail,
        seconds=1.5,
        replay_file=tmp / "replay.json",
        reproduced=True,
    )


def test_table_json_and_junit_of_a_failure(tmp_path: Path) -> None:
    c = Contract.simple(16, 8, lane_width=4)
    cycles = [(write(2, 0xAB),), (write(2, 0x0C, 0b01),), (read(2),), (IDLE,)]
    ct = _observe(c, cycles, "unknown", at=3, value=0x0C)
    table = render_table(c, ct)
    assert "<< bits 7, 5" in table  # 0xA lost from the upper lane: bits 7 and 5 differ
    assert "differs  ^ ^" in table
    res = _result(tmp_path, ct, c)
    text = render_report(res)
    assert "seed 42" in text and "not sign-off" in text and "Violated:" in text
    assert "contents of words never written (initial)" in text
    rep = report_dict(res)
    assert rep["verdict"] == "fail" and rep["operations"] == 49 and rep["minimal_trace"]["cycles"] == 4
    assert rep["minimal_trace"]["first_mismatch"] == 3
    assert rep["minimal_trace"]["violated"]["key"] == "lane_enable"
    json.dumps(rep)  # serialisable
    root = ET.fromstring(junit_xml(rep, text).split("\n", 1)[1])
    suite = root.find("testsuite")
    assert suite is not None and suite.get("tests") == "2" and suite.get("failures") == "1"
    failure = suite.find("testcase[@name='property']/failure")
    assert failure is not None and "Violated" in (failure.text or "")
    write_reports(res, json_file=tmp_path / "r.json", junit_file=tmp_path / "r.xml", text_file=tmp_path / "r.txt")
    assert json.loads((tmp_path / "r.json").read_text())["verdict"] == "fail"
    assert not list(tmp_path.glob(".*.tmp"))  # atomic writes leave no temporary files


@pytest.mark.parametrize("op", [PortOp(OpKind.IDLE, 3, 0x12, None), PortOp(OpKind.WRITE, 1, 0xFF, 0b10)])
def test_table_shows_pins_of_disabled_ports_and_lanes(op: PortOp) -> None:
    c = Contract.simple(16, 8, lane_width=4)
    ct = _observe(c, [(op,), (IDLE,)], "unknown", at=-1)
    first = next(ln for ln in render_table(c, ct).splitlines() if ln.startswith("0 "))
    assert ("idle*" in first) == (op.kind == OpKind.IDLE)
    assert f"{op.address:#x}" in first and f"{op.data:02x}" in first


#: The JSON fields of a check report before the layouts were unified (none may disappear).
_CHECK_FIELDS_BEFORE = {
    "verdict", "tool", "version", "contract", "top", "seed", "seconds", "build_seconds", "phases",
    "operations", "cycles", "minimal_trace", "unchecked", "error", "note",
}  # fmt: skip
#: ... and of a March run report and of its error report.
_MARCH_FIELDS_BEFORE = {
    "verdict", "tool", "version", "contract", "test", "words", "width", "layout", "order", "any_order",
    "seed", "backgrounds", "write_port", "read_port", "pause_cycles", "operations", "cycles", "seconds",
    "build_seconds", "first_failure", "replay_file", "waveform", "reproduced_by_replay", "unchecked",
    "notes", "error", "note",
}  # fmt: skip
_ERROR_FIELDS_BEFORE = {"verdict", "tool", "version", "contract", "seed", "phases", "operations", "cycles",
                        "minimal_trace", "error", "note", "test", "first_failure"}  # fmt: skip


def test_one_json_layout_keeps_every_earlier_field(tmp_path: Path) -> None:
    from memcheck.march import expand
    from memcheck.records import MarchRunResult
    from memcheck.report import error_dict

    c = Contract.simple(16, 8, lane_width=4)
    ct = _observe(c, [(write(2, 0xAB),), (write(2, 0x0C, 0b01),), (read(2),), (IDLE,)], "unknown", at=3, value=0x0C)
    check = report_dict(_result(tmp_path, ct, c))
    stream = expand("MATS+", 16, 8)
    march = report_dict(
        MarchRunResult(
            verdict=CheckVerdict.PASS, contract=c, contract_path=None, seed=1, test=stream.test, test_name="MATS+",
            order="linear", any_order="up", layout=None, backgrounds=("solid",), writer="a", reader="a",
            pause_cycles=100, operations=80, cycles=81,
        )
    )  # fmt: skip
    assert set(check) >= _CHECK_FIELDS_BEFORE and set(march) >= _MARCH_FIELDS_BEFORE
    # One layout: what a check and a March run share is every field but the job's own.
    assert set(check) - {"minimal_trace", "coverage"} == set(march) - set(march_fields_only())
    assert check["job"] == "check" and march["job"] == "march run"
    err = error_dict("c.toml", "bad", 3, job="march run", test="MATS+")
    assert set(err) >= _ERROR_FIELDS_BEFORE and err["verdict"] == "error" and err["first_failure"] is None
    assert set(error_dict("c.toml", "bad")) <= set(check) | {"first_failure"}
    json.dumps([check, march, err])


def march_fields_only() -> set[str]:
    return {
        "test", "words", "width", "layout", "order", "any_order", "backgrounds", "write_port", "read_port",
        "pause_cycles", "first_failure",
    }  # fmt: skip
