"""The scoreboard for users' cocotb tests: pure decoding of sampled pins, and real cocotb tests run
through cocotb's Python runner inside pytest (tests/cocotb_scoreboard.py) on shipped examples.

The bug's cycle in the failing run is known by construction of the invented telemetry logger
(tests/rtl/scoreboard/telemetry_logger.v): every write of its ordinary traffic enables all byte
lanes, which the mirrored-lane bug of ``packet_buffer_lane_bug`` cannot spoil; the only partial
write is the one-byte patch, read back right after, so the first wrong read data is that read's.
"""

from __future__ import annotations

import contextlib
import json
import random
import re
from pathlib import Path

import pytest

from memcheck.contract import load_contract
from memcheck.errors import NotYetSimulated
from memcheck.examples import examples_dir
from memcheck.ops import OpKind
from memcheck.sim.checking.monitor import Monitor, decode_port, parse_bits
from tests.naive_oracle import NaiveOracle

HERE = Path(__file__).resolve().parent
LOGGER = HERE / "rtl" / "scoreboard" / "telemetry_logger.v"
PATCH_AT = 600


def _example(name: str) -> Path:
    return examples_dir() / name / "contract.toml"


# -- pure: sampled pins -> operations, the model stepped ----------------------------------------


def test_parse_bits_marks_x_and_z_undefined() -> None:
    assert parse_bits("10xz") == (0b1000, 0b1100)
    assert parse_bits("1") == (1, 1) and parse_bits("X") == (0, 0)


def test_active_low_controls_and_lanes_decode_to_operations() -> None:
    c = load_contract(_example("tag_store"), check_sources=False)  # cen, wen, bwen all active low
    port = c.ports[0]
    widths = {"cen": 1, "wen": 1, "bwen": 22, "addr": 9, "wdata": 22}
    sampled = {
        "cen": (0, 1),
        "wen": (0, 1),
        "bwen": (0x3FFFF0, (1 << 22) - 1),
        "addr": (7, 511),
        "wdata": (5, 0x3FFFFF),
    }
    d = decode_port(port, c, sampled, widths, 512)
    assert (d.op.kind, d.op.address, d.op.data, d.op.lanes, d.problem) == (OpKind.WRITE, 7, 5, 0xF, "")
    d = decode_port(port, c, {**sampled, "wen": (1, 1)}, widths, 512)
    assert (d.op.kind, d.op.address) == (OpKind.READ, 7)
    assert decode_port(port, c, {**sampled, "cen": (1, 1)}, widths, 512).op.kind == OpKind.IDLE
    assert "X/Z" in decode_port(port, c, {**sampled, "cen": (0, 0)}, widths, 512).problem


def _random_pins(rng: random.Random) -> dict[str, tuple[int, int]]:
    full = (1 << 64) - 1
    return {
        "cs_n": (int(rng.random() < 0.2), 1),
        "we": (rng.getrandbits(1), 1),
        "be": (rng.choice([0xFF, 0x0F, 0x81, 0x00]), 0xFF),
        "addr": (rng.randrange(4), 511),
        "wdata": (rng.getrandbits(64), full),
    }


def test_monitor_agrees_with_the_independent_second_model() -> None:
    # The naive oracle (tests/naive_oracle.py) is written separately from memcheck.model: the read
    # data the monitor expects from the sampled pins must be what the oracle expects from the ops.
    c = load_contract(_example("packet_buffer"), check_sources=False)
    widths = {"cs_n": 1, "we": 1, "be": 8, "addr": 9, "wdata": 64, "rdata": 64}
    rng = random.Random(7)
    mon = Monitor(c, widths, window=4)
    oracle = NaiveOracle(c)
    compared = 0
    for _ in range(400):
        pins = _random_pins(rng)
        row = mon.step({**pins, "rdata": (0, 0)})  # X read data: only known expectations can differ
        assert row is not None
        want = oracle.step(tuple(row.ops))
        assert row.expected == tuple(want)
        compared += sum(e.known != 0 for e in row.expected)
    assert compared > 50  # the check compared real data, not only unknowns


def test_x_enable_makes_the_model_forget_and_a_reset_restarts_it() -> None:
    c = load_contract(_example("regfile"), check_sources=False)  # rst_n active low, initial zero
    widths = {"rst_n": 1, "rd_en": 1, "rd_addr": 5, "rd_data": 32, "wr_en": 1, "wr_addr": 5, "wr_data": 32}
    mon = Monitor(c, widths)
    full = (1 << 32) - 1
    quiet = {
        "rst_n": (1, 1),
        "rd_en": (0, 1),
        "rd_addr": (0, 31),
        "wr_en": (0, 1),
        "wr_addr": (0, 31),
        "wr_data": (0, full),
        "rd_data": (0, 0),
    }
    assert mon.step({**quiet, "rst_n": (0, 1)}) is None  # inside the reset: not checked
    row = mon.step({**quiet, "rd_en": (1, 1), "rd_addr": (3, 31)})
    row = mon.step(quiet)
    assert row is not None and row.expected[0].known == full  # initial zero after the reset
    mon.step({**quiet, "wr_en": (0, 0)})  # X write enable: the model cannot follow
    assert mon.unfollowed == 1 and "X/Z" in mon.notes[0]
    mon.step({**quiet, "rd_en": (1, 1), "rd_addr": (3, 31)})
    row = mon.step(quiet)
    assert row is not None and row.expected[0].known == 0  # forgotten
    assert mon.resets == 1


def test_a_tied_pin_away_from_its_value_is_not_followed(tmp_path: Path) -> None:
    text = (
        _example("coeff_lut")
        .read_text(encoding="utf-8")
        .replace('top = "coeff_wrap"', 'top = "coeff_wrap"\ntie = { bank = 1 }')
    )
    (tmp_path / "c.toml").write_text(text, encoding="utf-8")
    c = load_contract(tmp_path / "c.toml", check_sources=False)
    widths = {"en": 1, "we": 1, "addr": 5, "wdata": 18, "rdata": 18, "bank": 1}
    mon = Monitor(c, widths)
    pins = {"en": (1, 1), "we": (1, 1), "addr": (3, 31), "wdata": (9, (1 << 18) - 1), "rdata": (0, 0), "bank": (1, 1)}
    mon.step(pins)
    assert mon.unfollowed == 0
    mon.step({**pins, "bank": (0, 1)})
    assert mon.unfollowed == 1 and "'bank' is not at its [rtl] tie value 1" in mon.notes[0]


def test_multi_clock_contracts_are_refused_clearly(tmp_path: Path) -> None:
    text = (
        _example("regfile")
        .read_text(encoding="utf-8")
        .replace('clock = "clk"\nenable = "wr_en"', 'clock = "wclk"\nenable = "wr_en"')
    )
    assert "wclk" in text
    (tmp_path / "c.toml").write_text(text, encoding="utf-8")
    c = load_contract(tmp_path / "c.toml", check_sources=False)
    with pytest.raises(NotYetSimulated, match=r"scoreboard follows one clock.*clk, wclk"):
        Monitor(c, {})


# -- inside cocotb tests run by cocotb's Python runner ------------------------------------------


def _run(
    tmp_path: Path, sources: list[Path], top: str, testcase: str, contract: Path, **env: str
) -> tuple[dict[str, object] | None, str]:
    """Build and run one cocotb test; (what the scoreboard saw, or None on failure; the failure message)."""
    import xml.etree.ElementTree as ET

    from cocotb_tools.runner import get_runner

    runner = get_runner("icarus")
    build = tmp_path / "build"
    runner.build(sources=sources, hdl_toplevel=top, build_dir=build, timescale=("1ns", "1ps"), parameters={})
    out = tmp_path / "seen.json"
    results = tmp_path / "results.xml"
    # Under pytest the runner ends with SystemExit when a cocotb test fails: that is the expected
    # outcome of the failing runs, whose message is read back from the results file.
    with contextlib.suppress(SystemExit):
        runner.test(
            test_module="tests.cocotb_scoreboard",
            hdl_toplevel=top,
            testcase=testcase,
            build_dir=build,
            test_dir=tmp_path,
            extra_env={"MEMCHECK_SB_CONTRACT": str(contract), "MEMCHECK_SB_OUT": str(out), **env},
            log_file=tmp_path / "sim.log",
            results_xml=str(results),
        )
    failures = [f.get("message", "") for f in ET.parse(results).iter("failure")]
    seen = json.loads(out.read_text(encoding="utf-8")) if out.is_file() and not failures else None
    return seen, "\n".join(failures)


def _logger(
    tmp_path: Path, example: str, twin: str, testcase: str = "logger_traffic"
) -> tuple[dict[str, object] | None, str]:
    srcs = [examples_dir() / example / "pktbuf_wrap.v", examples_dir() / twin / "sram_sp_bw.v", LOGGER]
    other = str(_example("regfile"))
    return _run(tmp_path, srcs, "telemetry_logger", testcase, _example(example), MEMCHECK_SB_OTHER_CONTRACT=other)


@pytest.mark.icarus
def test_a_handle_without_the_contracts_pins_is_refused_clearly(tmp_path: Path) -> None:
    seen, failure = _logger(tmp_path, "packet_buffer", "packet_buffer", "wrong_handle")
    assert failure == "" and seen is not None
    assert seen["kind"] == "SimulationError"
    assert "has no signal 'rst_n' (the reset)" in str(seen["error"]), seen["error"]


@pytest.mark.icarus
def test_conforming_wrapper_under_the_designs_own_traffic_does_not_raise(tmp_path: Path) -> None:
    seen, failure = _logger(tmp_path, "packet_buffer", "packet_buffer")
    assert failure == "" and seen is not None
    assert seen["cycles"] == 3 + 900
    assert isinstance(seen["reads_checked"], int) and seen["reads_checked"] > 300  # real comparisons


@pytest.mark.icarus
def test_buggy_wrapper_raises_with_the_bugs_cycle_in_the_table(tmp_path: Path) -> None:
    seen, failure = _logger(tmp_path, "packet_buffer_lane_bug", "packet_buffer")
    assert seen is None, "the mirrored byte lanes went unnoticed"
    # Edges 0-2 reset the logger, step s is decided at edge 3 + s and on the pins at edge 4 + s:
    # the patch (step PATCH_AT) at edge PATCH_AT + 4, its read-back at + 5, the data due at + 6.
    bug = PATCH_AT + 6
    assert f"at cycle {bug} " in failure, failure
    table = failure[failure.index("cycle  port") :].split("\n\n")[0]
    rows = [ln for ln in table.splitlines() if re.match(r"^\d+\s", ln)]
    assert rows[-1].startswith(f"{bug} ") and "<<" in rows[-1]
    assert any(r.startswith(f"{PATCH_AT + 4} ") and "write" in r and " 01" in r for r in rows)  # the patch, lanes 01
    assert all("<<" not in r for r in rows[:-1]) and len(rows) == 12  # the window: the last 12 cycles
    assert "Violated:" in failure and f"last written by port a at cycle {PATCH_AT + 4}" in failure
    assert "not sign-off" in failure and "cycle 0: port 'a': enable 'cs_n' is X/Z" in failure


@pytest.mark.icarus
@pytest.mark.parametrize(
    ("example", "top", "raises"),
    [
        ("regfile", "regfile_wrap", False),  # reset (active low), initial zero, collision new
        ("line_buffer", "linebuf_wrap", False),  # read port without enable, read latency 2, collision old
        ("line_buffer_bypass_bug", "linebuf_wrap", True),  # its twin that forwards the new pixel
    ],
)
def test_user_traffic_from_the_test_on_two_port_wrappers(tmp_path: Path, example: str, top: str, raises: bool) -> None:
    c = load_contract(_example(example))
    assert c.rtl is not None
    seed = 11
    seen, failure = _run(
        tmp_path, list(c.rtl.sources), top, "user_traffic_two_ports", _example(example), MEMCHECK_SB_SEED=str(seed)
    )
    if raises:
        # Same seed, same traffic as the conforming twin: only the bypass can make this read differ.
        assert seen is None and "differs from" in failure and "<<" in failure, failure
        assert 'collision = "old"' in failure and "while port rd read it" in failure
    else:
        assert failure == "" and seen is not None, failure
        assert isinstance(seen["reads_checked"], int) and seen["reads_checked"] > 100
