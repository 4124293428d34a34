"""Contract keys the simulator side does not honour yet are refused before building (exit 2, key
named), and the small ones it does honour (tied pins, uneven lane maps, any-lane writes, several
clock pins with the same edges, the timescale of RTL without `timescale) are checked under Icarus."""

from __future__ import annotations

from pathlib import Path

import pytest

from memcheck.cli import main
from memcheck.contract import Contract, parse_contract
from memcheck.errors import NotYetSimulated, SimulationError
from memcheck.examples import examples_dir
from memcheck.records import CheckedTrace, Failure
from memcheck.sim import check_contract, replay_file, run_march
from memcheck.sim.checking.support import simulator_support_problems
from memcheck.sim.plumbing.pins import TopPort, check_pins, expected_pins
from memcheck.sim.replayfile import ReplayFile, file_digest

REGFILE = examples_dir() / "regfile"

#: The regfile example's contract (a read port and a write port on "clk"); {memory}, {clocks} and
#: {extra} are filled per case.
BASE = """
[memory]
words = 32
width = 32
read_latency = 1
collision = "new"
initial = "zero"
idle_read_data = "keep"
{memory}

[rtl]
sources = ["{src}/regfile_wrap.v", "{src}/sram_2p.v"]
top = "regfile_wrap"

[reset]
signal = "rst_n"
active_low = true
cycles = 2

[[port]]
name = "rd"
role = "read"
clock = "{rd_clock}"
enable = "rd_en"
address = "rd_addr"
read_data = "rd_data"

[[port]]
name = "wr"
role = "write"
clock = "clk"
enable = "wr_en"
address = "wr_addr"
write_data = "wr_data"
{extra}
"""


def _text(memory: str, rd_clock: str, extra: str) -> str:
    return BASE.format(memory=memory, rd_clock=rd_clock, extra=extra, src=REGFILE.as_posix())


def _file(tmp_path: Path, memory: str, rd_clock: str, extra: str) -> Path:
    path = tmp_path / "contract.toml"
    path.write_text(_text(memory, rd_clock, extra), encoding="utf-8")
    return path


FAST = '[[clock]]\nname = "clk"\nperiod = 0.003\n'


def test_cli_refuses_a_clock_too_fast_for_the_timescale_with_exit_2(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    path = _file(tmp_path, "", "clk", FAST)
    for argv in (["check", str(path), "--seed", "1"], ["march", "run", str(path), "MATS+", "--seed", "1"]):
        assert main([*argv, "--out", str(tmp_path / "out")]) == 2
        err = capsys.readouterr().err
        assert "Traceback" not in err and "fewer than 4 units" in " ".join(err.split())
    assert not (tmp_path / "out").exists()
    with pytest.raises(NotYetSimulated):
        run_march(parse_contract(_text("", "clk", FAST)), "MATS+", out_dir=tmp_path / "out", seed=1)


def test_replay_refuses_a_contract_the_harness_cannot_drive(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    path = _file(tmp_path, "", "clk", FAST)
    failure = Failure("property", (), CheckedTrace("reset", ()))
    rf = ReplayFile(path, failure, 7, file_digest(path)).write(tmp_path / "replay.json")
    with pytest.raises(NotYetSimulated, match="fewer than 4 units"):
        replay_file(rf)
    assert main(["replay", str(rf)]) == 2
    assert "fewer than 4 units" in capsys.readouterr().err


def test_clocks_the_harness_cannot_place_exactly_are_refused_in_one_paragraph() -> None:
    # 3 ps at a 1 ps precision: no room to change inputs and sample inside a cycle
    fast = parse_contract(_text("", "clk", '[[clock]]\nname = "clk"\nperiod = 0.003\n'))
    assert simulator_support_problems(fast) == []
    with pytest.raises(NotYetSimulated, match="fewer than 4 units") as info:
        check_contract(fast, seed=1)
    assert "\n" not in str(info.value)
    # periods whose edges line up only after thousands of edges
    odd = parse_contract(_text("", "clkb", '[[clock]]\nname = "clkb"\nperiod = 10.001\n'))
    with pytest.raises(NotYetSimulated, match="line up again only every"):
        check_contract(odd, seed=1)


def test_keys_the_harness_honours_are_not_refused() -> None:
    # the same edges on two clock pins (any phase), a window that then has no effect, a timescale, ties
    c = parse_contract(
        _text(
            "collision_window = 1.0",
            "clkb",
            '[[clock]]\nname = "clkb"\n[[clock]]\nname = "clk"\n[timing]\ntimescale = "10ns/1ns"\n',
        ).replace('top = "regfile_wrap"', 'top = "regfile_wrap"\ntie = { spare = 3 }')
    )
    assert simulator_support_problems(c) == []
    pins = expected_pins(c)
    assert pins["clk"][0] == pins["clkb"][0] == "input"
    assert pins["spare"][0] == "input"
    p = parse_contract(_text("", "clk", '[power]\nsleep = "slp"\n'))
    assert "slp" in expected_pins(p)


def test_pin_check_reports_a_power_or_tied_pin_the_top_lacks() -> None:
    top = {
        n: TopPort(n, d, w)  # type: ignore[arg-type]
        for n, d, w in [
            ("clk", "input", 1),
            ("rst_n", "input", 1),
            ("rd_en", "input", 1),
            ("rd_addr", "input", 5),
            ("rd_data", "output", 32),
            ("wr_en", "input", 1),
            ("wr_addr", "input", 5),
            ("wr_data", "input", 32),
        ]
    }
    power = parse_contract(_text("", "clk", '[power]\nsleep = "slp"\n'))
    with pytest.raises(SimulationError, match=r"has no pin 'slp' \(the sleep pin of \[power\]"):
        check_pins(power, top, "regfile_wrap")
    tied = parse_contract(
        _text("", "clk", "").replace('top = "regfile_wrap"', 'top = "regfile_wrap"\ntie = { spare = 1 }')
    )
    with pytest.raises(SimulationError, match=r"has no pin 'spare' \(tied to 1 by \[rtl\] tie"):
        check_pins(tied, top, "regfile_wrap")
    wide = {**top, "spare": TopPort("spare", "input", 3)}
    assert check_pins(tied, wide, "regfile_wrap").widths["spare"] == 3  # a tied pin may have any width


# -- under Icarus ------------------------------------------------------------------------------

#: A 16 x 9 memory with lanes of 4, 4 and 1 bits: port a writes when any lane enable is set (no
#: write enable) and reads otherwise; port b reads on its own clock pin; nothing happens unless the
#: extra input `hold` is 1. Read data comes DELAY time units after the edge; the file has no
#: `timescale, so the contract's [timing] timescale sets what a unit is.
LANES_TIE_V = """
module lanes_tie (
  input clk, input clkb, input hold,
  input en_a, input [3:0] addr_a, input [8:0] wdata, input [2:0] be, output reg [8:0] rdata_a,
  input en_b, input [3:0] addr_b, output reg [8:0] rdata_b
);
  reg [8:0] mem [0:15];
  wire [8:0] bits = {be[2], {4{be[1]}}, {4{be[0]}}};
  always @(posedge clk)
    if (en_a && hold) begin
      if (|be) mem[addr_a] <= (mem[addr_a] & ~bits) | (wdata & bits);
      else rdata_a <= #3 mem[addr_a];
    end
  always @(posedge clkb)
    if (en_b && hold) rdata_b <= #3 mem[addr_b];
endmodule
"""

LANES_TIE_TOML = """
[memory]
words = 16
width = 9
lanes = [4, 4, 1]
read_latency = 1
read_during_write = "keep"
collision = "old"
idle_read_data = "keep"

[rtl]
sources = ["lanes_tie.v"]
top = "lanes_tie"
tie = {{ hold = {hold} }}

[timing]
timescale = "{timescale}"

[[port]]
name = "a"
role = "readwrite"
clock = "clk"
enable = "en_a"
address = "addr_a"
write_data = "wdata"
lane_enable = "be"
read_data = "rdata_a"

[[port]]
name = "b"
role = "read"
clock = "clkb"
enable = "en_b"
address = "addr_b"
read_data = "rdata_b"
"""


def _lanes_tie(tmp_path: Path, *, hold: int = 1, timescale: str = "1ns/1ps") -> Contract:
    (tmp_path / "lanes_tie.v").write_text(LANES_TIE_V, encoding="utf-8")
    path = tmp_path / "contract.toml"
    path.write_text(LANES_TIE_TOML.format(hold=hold, timescale=timescale), encoding="utf-8")
    return parse_contract(path.read_text(encoding="utf-8"), source=str(path), base_dir=tmp_path)


@pytest.mark.icarus
def test_tied_pin_lane_map_any_lane_writes_and_second_clock_pin_pass(tmp_path: Path) -> None:
    c = _lanes_tie(tmp_path)
    res = check_contract(c, examples=30, bulk_examples=5, seed=5, out_dir=tmp_path / "out")
    assert res.verdict == "pass", res.summary()
    assert res.unconnected_inputs == ()  # hold is tied, clkb connected


@pytest.mark.icarus
def test_timescale_applies_to_rtl_without_a_timescale_directive(tmp_path: Path) -> None:
    # "10ns/1ns": the #3 read delay becomes 30 ns, three clock cycles: the read data comes too late.
    c = _lanes_tie(tmp_path, timescale="10ns/1ns")
    res = check_contract(c, phases=("smoke",), seed=5, out_dir=tmp_path / "out", waveform=False)
    assert res.verdict == "fail"


@pytest.mark.icarus
def test_a_tie_value_wider_than_its_pin_is_refused(tmp_path: Path) -> None:
    c = _lanes_tie(tmp_path, hold=2)
    with pytest.raises(SimulationError, match=r"\[rtl\] tie.hold = 2 does not fit pin 'hold'"):
        check_contract(c, seed=5, out_dir=tmp_path / "out")
