"""End-to-end checks under Icarus Verilog: build, harness timing, failures, replay, waveform, bad input."""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET
from pathlib import Path
from typing import Any

import pytest

from memcheck.cli import main
from memcheck.contract import load_contract
from memcheck.errors import MemcheckError, SimulationError
from memcheck.ops import IDLE, OpKind, Trace, read, write
from memcheck.records import CheckedTrace, Failure
from memcheck.sim import check_contract, replay_file
from memcheck.sim.plumbing.build import build
from memcheck.sim.plumbing.launch import run_job

pytestmark = pytest.mark.icarus

RTL = Path(__file__).parent / "rtl"
SP = RTL / "sp"
BAD = RTL / "bad"


def sp_contract(tmp: Path, *, bug: int = 0, extra: str = "", pins: dict[str, str] | None = None) -> Path:
    """A copy of the sp fixture's contract with BUG set and pins renamed as asked."""
    text = (SP / "contract.toml").read_text()
    text = text.replace('sources = ["sp_wrap.v"]', f'sources = ["{SP / "sp_wrap.v"}"]')
    text = text.replace('top = "sp_wrap"', f'top = "sp_wrap"\nparameters = {{ BUG = {bug} }}')
    for old, new in (pins or {}).items():
        text = text.replace(f'"{old}"', f'"{new}"')
    path = tmp / f"sp_bug{bug}.toml"
    path.write_text(text + extra)
    return path


def small_contract(tmp: Path, name: str) -> Path:
    text = (BAD / "small.toml.in").read_text()
    text = text.replace("@SRC@", str(BAD / f"{name}.v")).replace("@TOP@", name)
    path = tmp / f"{name}.toml"
    path.write_text(text)
    return path


@pytest.fixture(scope="session")
def build_cache(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """One build folder tree for the whole session: builds are keyed by content, so tests share them."""
    return tmp_path_factory.mktemp("builds")


@pytest.fixture(scope="session")
def buggy_result(tmp_path_factory: pytest.TempPathFactory, build_cache: Path):  # type: ignore[no-untyped-def]
    tmp = tmp_path_factory.mktemp("buggy")
    return check_contract(sp_contract(tmp, bug=1), examples=30, seed=2, out_dir=tmp / "out", build_dir=build_cache)


def test_conforming_fixture_passes_all_phases(tmp_path: Path, build_cache: Path) -> None:
    res = check_contract(
        SP / "contract.toml", examples=30, bulk_examples=5, seed=1, out_dir=tmp_path, build_dir=build_cache
    )
    assert res.verdict == "pass", res.summary()
    assert [p.verdict for p in res.phases] == ["pass", "pass", "pass"]
    assert res.failure is None and res.replay_file is None
    # March C- is 10N per background (A.J. van de Goor, "Testing Semiconductor Memories: Theory and
    # Practice", 1991); 16-bit words have ceil(log2 16) + 1 = 5 standard backgrounds.
    assert res.phases[1].operations == 10 * 64 * 5


def test_lane_bug_is_caught_with_a_short_trace_that_replays(buggy_result) -> None:  # type: ignore[no-untyped-def]
    res = buggy_result
    assert res.verdict == "fail"
    assert res.failure is not None and len(res.failure.trace) <= 6
    assert res.reproduced is True
    assert res.replay_file is not None and res.replay_file.is_file()
    again = replay_file(res.replay_file, waveform=False)
    assert again.reproduced and again.verdict == "fail"
    assert again.checked.signature() == res.failure.checked.signature()


def _vcd_samples(path: Path, signal: str) -> list[str]:
    """Value of ``signal`` just before every rising clock edge, read with pyvcd's tokenizer.

    VCD is the value change dump of IEEE Std 1364-2005, clause 18; pyvcd is an independent reader.
    """
    from vcd.reader import TokenKind, tokenize

    ids: dict[str, str] = {}
    scope: list[str] = []
    value: dict[str, str] = {}
    before: dict[str, str] = {}  # values as they were before the current time step
    samples: list[str] = []
    with path.open("rb") as fh:
        for tok in tokenize(fh):
            if tok.kind is TokenKind.CHANGE_TIME:
                before = dict(value)
            elif tok.kind is TokenKind.SCOPE:
                scope.append(tok.scope.ident)
            elif tok.kind is TokenKind.UPSCOPE:
                scope.pop()
            elif tok.kind is TokenKind.VAR and scope[-1] == "dut":
                ids[tok.var.reference] = tok.var.id_code
            elif tok.kind in (TokenKind.CHANGE_SCALAR, TokenKind.CHANGE_VECTOR):
                data: Any = tok.data
                code, val = data.id_code, data.value
                if code == ids["clk"] and val == "1" and value.get(code) == "0":
                    samples.append(before[ids[signal]])
                value[code] = val if isinstance(val, str) else format(val, "b")
    return samples


def test_waveform_holds_the_minimal_trace_alone_and_agrees_with_the_report(buggy_result) -> None:  # type: ignore[no-untyped-def]
    res = buggy_result
    assert res.waveform_file is not None and res.waveform_file.is_file()
    samples = _vcd_samples(res.waveform_file, "rdata")
    rows = res.failure.checked.rows
    assert len(samples) == len(rows)  # one rising edge per trace cycle: the preamble is not dumped
    for row, s in zip(rows, samples, strict=True):
        obs = row.observed[0]
        if "x" in s or "z" in s:
            assert obs.defined != 0xFFFF
        else:
            assert obs.defined == 0xFFFF and int(s, 2) == obs.value


def test_harness_sees_what_a_synchronous_consumer_flop_sees(tmp_path: Path, build_cache: Path) -> None:
    """The harness must judge read data as a flop clocked by the same edge would capture it.

    The reference is a plain Verilog testbench in the classic style (inputs driven on the falling
    edge, read data captured by a flop on the rising edge), written independently of the harness.
    """
    ops = [
        write(3, 0x1234),
        read(3),
        IDLE,
        write(3, 0xABCD, 0b01),
        read(3),
        read(3),
        write(9, 0x5555),
        read(9),
        IDLE,
        IDLE,
    ]
    c = load_contract(SP / "contract.toml")
    b = build(c, build_cache)
    failure = Failure("check", (), CheckedTrace("power-up", ()), full_trace=Trace.of([(op,) for op in ops]))
    res = run_job(
        b,
        {
            "mode": "replay",
            "options": {
                "phases": [],
                "examples": 0,
                "seed": 0,
                "march": "March C-",
                "backgrounds": "solid",
                "sweep_ops": 0,
                "max_blocks": 1,
            },
            "failure": failure.to_json(),
            "dump": False,
        },
        tmp_path / "h",
    )
    assert res.replayed is not None
    harness = [r.observed[0] for r in res.replayed.rows]

    drive = []
    for op in ops:
        en, we = (0, 0) if op.kind == OpKind.IDLE else (1, int(op.kind == OpKind.WRITE))
        lanes = 0b11 if op.lanes is None else op.lanes
        drive.append(f"cs_n = {1 - en}; we = {we}; addr = {op.address}; wdata = 16'h{op.data:x}; be = 2'b{lanes:02b};")
    steps = "\n".join(f"    @(negedge clk); {d}" for d in drive)
    tb = tmp_path / "tb.v"
    tb.write_text(f"""
module tb;
  reg clk = 0; always #5 clk = ~clk;
  reg cs_n = 1, we = 0; reg [5:0] addr = 0; reg [15:0] wdata = 0; reg [1:0] be = 0;
  wire [15:0] rdata; reg [15:0] seen; integer n = 0;
  sp_wrap dut(.clk(clk), .cs_n(cs_n), .we(we), .addr(addr), .wdata(wdata), .be(be), .rdata(rdata));
  always @(posedge clk) begin seen <= rdata; end
  always @(negedge clk) if (n > 0 && n <= {len(ops)}) $display("%b", seen);
  always @(negedge clk) n <= n + 1;
  initial begin
{steps}
    @(negedge clk); @(negedge clk); $finish;
  end
endmodule
""")
    import subprocess

    subprocess.run(["iverilog", "-g2012", "-o", str(tmp_path / "tb.vvp"), str(tb), str(SP / "sp_wrap.v")], check=True)
    out = subprocess.run(["vvp", "-n", str(tmp_path / "tb.vvp")], capture_output=True, text=True, check=True).stdout
    lines = [ln.strip() for ln in out.splitlines() if ln.strip() and set(ln.strip()) <= set("01xz")]
    assert len(lines) == len(ops)
    for obs, line in zip(harness, lines, strict=True):
        assert obs is not None
        defined = int("".join("1" if ch in "01" else "0" for ch in line), 2)
        value = int("".join("1" if ch == "1" else "0" for ch in line), 2)
        assert (obs.value, obs.defined) == (value, defined)


def test_parameter_change_gets_its_own_build_folder(tmp_path: Path, build_cache: Path) -> None:
    a = build(load_contract(sp_contract(tmp_path, bug=0)), build_cache)
    b = build(load_contract(sp_contract(tmp_path, bug=1)), build_cache)
    again = build(load_contract(sp_contract(tmp_path, bug=0)), build_cache)
    assert a.folder != b.folder and again.folder == a.folder


# -- bad input: exit code 2 and a message that says what to fix ---------------------------------


def _cli(args: list[str], capsys: pytest.CaptureFixture[str]) -> tuple[int, str, str]:
    rc = main(args)
    cap = capsys.readouterr()
    return rc, cap.out, cap.err


def test_rtl_that_does_not_compile_shows_the_compilers_lines(tmp_path: Path, capsys) -> None:  # type: ignore[no-untyped-def]
    c = small_contract(tmp_path, "syntax_wrap")
    rc, _, err = _cli(
        ["check", str(c), "--out", str(tmp_path / "o"), "--seed", "1", "--json", str(tmp_path / "r.json")], capsys
    )
    assert rc == 2
    assert "does not compile" in err and "syntax_wrap.v:3:" in err and "Traceback" not in err
    assert json.loads((tmp_path / "r.json").read_text())["verdict"] == "error"


@pytest.mark.parametrize(
    ("pins", "expect"),
    [
        ({"rdata": "q"}, r"no pin 'q' \(port 'a' read data, output, \[15:0\] \(16 bits\)\). Its ports are: input clk"),
        ({"be": "addr2"}, r"no pin 'addr2'"),
    ],
)
def test_missing_pins_are_named_with_the_actual_ports(tmp_path: Path, capsys, pins, expect) -> None:  # type: ignore[no-untyped-def]
    import re

    rc, _, err = _cli(["check", str(sp_contract(tmp_path, pins=pins)), "--out", str(tmp_path / "o")], capsys)
    assert rc == 2
    assert re.search(expect, err.replace("\n", " ").replace("  ", " ")), err


def test_width_mismatch_names_pin_and_widths(tmp_path: Path, capsys) -> None:  # type: ignore[no-untyped-def]
    path = sp_contract(tmp_path)
    path.write_text(path.read_text().replace("width = 16", "width = 32").replace("lane_width = 8", "lane_width = 16"))
    rc, _, err = _cli(["check", str(path), "--out", str(tmp_path / "o")], capsys)
    assert rc == 2
    flat = " ".join(err.split())
    assert "pin 'wdata'" in flat and "is [15:0] (16 bits wide), but the contract needs [31:0] (32 bits)" in flat


def test_a_stalled_simulation_is_stopped_and_located(tmp_path: Path, capsys) -> None:  # type: ignore[no-untyped-def]
    c = small_contract(tmp_path, "stall_wrap")
    rc, _, err = _cli(["check", str(c), "--out", str(tmp_path / "o"), "--stall-timeout", "2", "--seed", "1"], capsys)
    assert rc == 2
    flat = " ".join(err.split())
    assert "stopped making progress" in flat and "phase" in flat and "cycle" in flat


def test_rtl_that_ends_the_simulation_is_reported(tmp_path: Path, capsys) -> None:  # type: ignore[no-untyped-def]
    c = small_contract(tmp_path, "finish_wrap")
    rc, _, err = _cli(["check", str(c), "--out", str(tmp_path / "o"), "--seed", "1"], capsys)
    assert rc == 2 and "ended before memcheck finished" in err


def test_api_raises_simulation_error_for_bad_rtl(tmp_path: Path) -> None:
    with pytest.raises(SimulationError, match="does not compile"):
        check_contract(small_contract(tmp_path, "syntax_wrap"), out_dir=tmp_path)


# -- CLI outputs --------------------------------------------------------------------------------


def test_cli_failure_writes_json_junit_replay_and_prints_the_table(tmp_path: Path, capsys, build_cache: Path) -> None:  # type: ignore[no-untyped-def]
    c = sp_contract(tmp_path, bug=1)
    out = tmp_path / "o"
    rc, stdout, _ = _cli(
        [
            "check",
            str(c),
            "--examples",
            "20",
            "--seed",
            "4",
            "--out",
            str(out),
            "--json",
            str(tmp_path / "r.json"),
            "--junit",
            str(tmp_path / "r.xml"),
        ],
        capsys,
    )
    assert rc == 1
    assert "seed 4" in stdout and "memcheck replay" in stdout and "<<" in stdout and "not sign-off" in stdout
    rep = json.loads((tmp_path / "r.json").read_text())
    assert rep["verdict"] == "fail" and rep["seed"] == 4
    mt = rep["minimal_trace"]
    assert mt["cycles"] <= 6 and mt["violated"]["key"] == "lane_enable" and mt["reproduced_by_replay"] is True
    assert {p["name"] for p in rep["phases"]} == {"smoke", "sweep", "property"}
    assert rep["operations"] > 0 and rep["seconds"] > 0
    # JUnit XML as CI dashboards read it (testsuites/testsuite/testcase/failure; common practice).
    root = ET.parse(tmp_path / "r.xml").getroot()
    suite = root.find("testsuite")
    assert suite is not None and suite.get("failures") == "1"
    assert [tc.get("name") for tc in suite.iter("testcase")] == ["smoke", "sweep", "property"]
    rc2, stdout2, _ = _cli(["replay", str(out / "replay.json"), "--no-waveform"], capsys)
    assert rc2 == 1 and "Reproduced" in stdout2


def test_cli_pass_exit_zero_and_json(tmp_path: Path, capsys) -> None:  # type: ignore[no-untyped-def]
    rc, stdout, _ = _cli(
        [
            "check",
            str(SP / "contract.toml"),
            "--examples",
            "10",
            "--bulk-examples",
            "3",
            "--seed",
            "9",
            "--out",
            str(tmp_path / "o"),
            "--json",
            str(tmp_path / "r.json"),
            "--phases",
            "smoke,property",
        ],
        capsys,
    )
    assert rc == 0 and "conforms" in stdout
    rep = json.loads((tmp_path / "r.json").read_text())
    assert rep["verdict"] == "pass" and rep["minimal_trace"] is None
    assert [p["name"] for p in rep["phases"]] == ["smoke", "property"]
    assert (tmp_path / "o" / "report.txt").is_file()


def test_cli_rejects_unknown_phase(capsys) -> None:  # type: ignore[no-untyped-def]
    rc, _, err = _cli(["check", str(SP / "contract.toml"), "--phases", "smoke,fuzz"], capsys)
    assert rc == 2 and "fuzz" in err


def test_replay_of_a_damaged_file_is_a_clear_error(tmp_path: Path, capsys) -> None:  # type: ignore[no-untyped-def]
    bad = tmp_path / "r.json"
    bad.write_text('{"format": "something else"}')
    rc, _, err = _cli(["replay", str(bad)], capsys)
    assert rc == 2 and "not a memcheck replay file" in err


def test_check_contract_from_inside_a_users_cocotb_test(tmp_path: Path, build_cache: Path) -> None:
    """The Python API also works from a user's own cocotb test (it runs its own simulator)."""
    from cocotb_tools.runner import get_runner

    (tmp_path / "user_top.v").write_text("module user_top(input clk); endmodule\n")
    (tmp_path / "user_checks.py").write_text(f"""
import cocotb
from pathlib import Path
from memcheck.sim import check_contract

@cocotb.test()
async def wrapper_conforms(dut):
    res = await cocotb.task.bridge(check_contract)({str(SP / "contract.toml")!r}, examples=10, bulk_examples=2,
                                                   seed=1,
                                                   out_dir=Path({str(tmp_path / "mc")!r}),
                                                   build_dir=Path({str(build_cache)!r}))
    Path({str(tmp_path / "verdict.txt")!r}).write_text(res.verdict)
    assert res.passed, res.summary()
""")
    runner = get_runner("icarus")
    runner.build(
        sources=[tmp_path / "user_top.v"],
        hdl_toplevel="user_top",
        build_dir=tmp_path / "b",
        log_file=tmp_path / "build.log",
    )
    import sys

    runner.test(
        test_module="user_checks",
        hdl_toplevel="user_top",
        build_dir=tmp_path / "b",
        test_dir=tmp_path,
        results_xml=str(tmp_path / "results.xml"),
        log_file=tmp_path / "test.log",
        extra_env={"PYTHONPATH": ":".join([str(tmp_path), *sys.path])},
    )
    assert (tmp_path / "verdict.txt").read_text() == "pass"


def test_replay_after_a_fix_says_the_trace_now_conforms(tmp_path: Path, capsys, build_cache: Path) -> None:  # type: ignore[no-untyped-def]
    c = sp_contract(tmp_path, bug=1)
    res = check_contract(c, examples=10, seed=3, out_dir=tmp_path / "o", build_dir=build_cache, waveform=False)
    assert res.verdict == "fail" and res.replay_file is not None
    c.write_text(c.read_text().replace("BUG = 1", "BUG = 0"))  # the "fix"
    rc, out, _ = _cli(["replay", str(res.replay_file), "--no-waveform"], capsys)
    assert rc == 0
    assert "now conforms" in out and "contract file changed" in out


# -- bulk examples ------------------------------------------------------------------------------


def test_bulk_examples_alone_catch_a_write_while_deselected(tmp_path: Path, build_cache: Path) -> None:
    """BUG 2 writes whenever write enable is high, selected or not: bulk examples rest ports with their
    pins (write enable included) left on, and the later read of that word shows it."""
    res = check_contract(
        sp_contract(tmp_path, bug=2),
        phases=("property",),
        examples=0,
        bulk_examples=20,
        seed=6,
        out_dir=tmp_path / "o",
        build_dir=build_cache,
        waveform=False,
    )
    assert res.verdict == "fail" and res.failure is not None
    assert "bulk examples" in res.phases[0].detail
    trace = res.failure.trace
    assert len(trace) <= 6 and res.reproduced is True
    assert any(op.kind == OpKind.IDLE and (op.address or op.data) for cyc in trace.cycles for op in cyc)


def test_bulk_examples_pass_the_conforming_fixture_with_many_operations(tmp_path: Path, build_cache: Path) -> None:
    res = check_contract(
        SP / "contract.toml",
        phases=("property",),
        examples=0,
        bulk_examples=3,
        seed=2,
        out_dir=tmp_path,
        build_dir=build_cache,
    )
    assert res.verdict == "pass", res.summary()
    assert res.operations > 3000 and int(str(res.extra["bulk_examples"])) >= 1


def test_cli_bulk_examples_option_and_its_bounds(tmp_path: Path, capsys) -> None:  # type: ignore[no-untyped-def]
    rc, stdout, _ = _cli(
        [
            "check",
            str(SP / "contract.toml"),
            "--examples",
            "0",
            "--bulk-examples",
            "2",
            "--phases",
            "property",
            "--seed",
            "3",
            "--out",
            str(tmp_path / "o"),
            "--json",
            str(tmp_path / "r.json"),
        ],
        capsys,
    )
    assert rc == 0 and "2 bulk examples" in stdout
    rep = json.loads((tmp_path / "r.json").read_text())
    assert "bulk examples" in rep["phases"][0]["detail"]
    rc, _, err = _cli(["check", str(SP / "contract.toml"), "--bulk-examples", "-1"], capsys)
    assert rc == 2 and "bulk-examples" in err
    with pytest.raises(MemcheckError, match="bulk_examples"):
        check_contract(SP / "contract.toml", bulk_examples=-1)
    rc, _, _ = _cli(
        [
            "check",
            str(SP / "contract.toml"),
            "--examples",
            "0",
            "--bulk-examples",
            "0",
            "--phases",
            "property",
            "--out",
            str(tmp_path / "o2"),
            "--json",
            str(tmp_path / "r2.json"),
        ],
        capsys,
    )
    assert rc == 0
    assert json.loads((tmp_path / "r2.json").read_text())["phases"][0]["verdict"] == "skipped"
