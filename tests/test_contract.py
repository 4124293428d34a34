"""Contract loader: the documented format loads, every malformed file gives one ContractError
naming the file and the key."""

from __future__ import annotations

import string
import tomllib
from pathlib import Path
from typing import Any

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from memcheck import ContractError, load_contract, parse_contract
from memcheck.cli import main
from memcheck.contract import ClockSpec, contract_from_dict
from tests.contract_strategies import contract_dicts

DOC_EXAMPLE = """
[memory]
words = 256
width = 32
lane_width = 8
bit_mask = false
read_latency = 1
read_during_write = "old"
collision = "unknown"
write_collision = "unknown"
initial = "unknown"
idle_read_data = "keep"

[rtl]
sources = ["wrap.v", "macro.v"]
top = "wrap"
parameters = { DEPTH = 256 }
defines = { }
include_dirs = [ ]

[reset]
signal = "rst_n"
active_low = true
cycles = 2

[[port]]
name = "a"
role = "readwrite"
clock = "clk"
enable = "cs_n"
write_enable = "we"
address = "addr"
write_data = "wdata"
lane_enable = "be"
read_data = "rdata"
active_low = ["cs_n"]
"""


def test_documented_example_loads_with_every_key() -> None:
    c = parse_contract(DOC_EXAMPLE, base_dir=Path("/proj"))
    m = c.memory
    assert (m.words, m.width, m.lane_width, m.lanes, m.read_latency) == (256, 32, 8, 4, 1)
    assert (m.read_during_write, m.idle_read_data, m.initial) == ("old", "keep", "unknown")
    assert c.rtl is not None and c.rtl.sources == (Path("/proj/wrap.v"), Path("/proj/macro.v"))
    assert dict(c.rtl.parameters) == {"DEPTH": 256}
    assert c.reset is not None and c.reset.signal == "rst_n" and c.reset.cycles == 2
    (port,) = c.ports
    assert port.active_low == frozenset({"cs_n"}) and port.can_idle and port.lane_enable == "be"
    assert m.lane_bits(0b0101) == 0x00FF00FF


def test_defaults_are_the_least_assuming() -> None:
    c = parse_contract(DOC_EXAMPLE.replace('read_during_write = "old"', "").replace('idle_read_data = "keep"', ""))
    assert c.memory.read_during_write == "unknown" and c.memory.idle_read_data == "unknown"
    minimal = (
        '[memory]\nwords=3\nwidth=1\n[rtl]\nsources=["a.v"]\ntop="t"\n'
        '[[port]]\nname="r"\nrole="read"\nclock="c"\naddress="a"\nread_data="q"\n'
    )
    m = parse_contract(minimal).memory
    assert (m.read_latency, m.bit_mask, m.lane_width, m.collision, m.write_collision, m.initial) == (
        1,
        False,
        None,
        "unknown",
        "unknown",
        "unknown",
    )


def _broken(replace: str, by: str) -> str:
    assert replace in DOC_EXAMPLE
    return DOC_EXAMPLE.replace(replace, by)


@pytest.mark.parametrize(
    ("text", "needle"),
    [
        (_broken("width = 32", "widht = 32"), "Did you mean 'width'"),
        (_broken("lane_width = 8", "lane_width = 7"), "lane_width = 7 does not divide width = 32"),
        (_broken("bit_mask = false", "bit_mask = true"), "cannot both be set"),
        (_broken("read_latency = 1", "read_latency = 5"), "read_latency = 5 is out of range"),
        (_broken('read_during_write = "old"', 'read_during_write = "older"'), '"old" | "new" | "keep" | "unknown"'),
        (_broken("words = 256", 'words = "256"'), "words = '256' has the wrong type"),
        (_broken('role = "readwrite"', 'role = "read"'), "a read port has no write enable pin"),
        (_broken('lane_enable = "be"', ""), "lane_enable is missing"),
        (_broken('active_low = ["cs_n"]', 'active_low = ["addr"]'), "active_low lists 'addr'"),
        (_broken('top = "wrap"', ""), "[rtl] top"),
        (_broken("[[port]]", "[port]"), "'port' must be an array of tables"),
        (_broken('signal = "rst_n"', 'signal = "we"'), "also a port pin"),
        ("[memory\nwords=1", "not valid TOML"),
    ],
)
def test_malformed_files_name_the_key(text: str, needle: str) -> None:
    with pytest.raises(ContractError) as info:
        parse_contract(text, source="bad.toml")
    assert needle in str(info.value)
    assert str(info.value).startswith("bad.toml:")


def test_missing_rtl_source_is_reported_with_its_path(tmp_path: Path) -> None:
    f = tmp_path / "c.toml"
    f.write_text(DOC_EXAMPLE)
    with pytest.raises(ContractError, match=r"'wrap\.v'"):
        load_contract(f)
    (tmp_path / "wrap.v").write_text("")
    (tmp_path / "macro.v").write_text("")
    assert load_contract(f).rtl is not None


def test_cli_validate_exit_codes(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    f = tmp_path / "c.toml"
    f.write_text(DOC_EXAMPLE)
    (tmp_path / "wrap.v").write_text("")
    (tmp_path / "macro.v").write_text("")
    assert main(["contract", "validate", str(f)]) == 0
    assert "read data when another port" not in capsys.readouterr().out  # single port: no collisions
    f.write_text(_broken("width = 32", "width = 0"))
    assert main(["contract", "validate", str(f)]) == 2
    err = capsys.readouterr().err
    assert "width = 0 is out of range" in err and "Traceback" not in err
    assert main(["contract", "validate", str(tmp_path / "missing.toml")]) == 2


@given(contract_dicts())
def test_random_valid_contracts_load(doc: dict[str, Any]) -> None:
    c = contract_from_dict(doc)
    assert len(c.ports) == len(doc["port"])


# --- fuzzing: Hypothesis-generated broken files ---------------------------------------------------

_VALUES = st.one_of(
    st.integers(-5, 2000),
    st.booleans(),
    st.text(string.ascii_letters + '"', max_size=6),
    st.lists(st.integers(0, 3), max_size=2),
    st.builds(dict),
    st.floats(allow_nan=False, allow_infinity=False),
)


@st.composite
def broken_docs(draw: st.DrawFn) -> dict[str, Any]:
    doc = draw(contract_dicts())
    for _ in range(draw(st.integers(1, 3))):
        section = draw(st.sampled_from(["memory", "rtl", "port", "top"]))
        tbl: dict[str, Any] = doc
        ports = doc.get("port")
        if section == "port" and isinstance(ports, list) and ports and all(isinstance(p, dict) for p in ports):
            tbl = draw(st.sampled_from(ports))
        elif section in ("memory", "rtl") and isinstance(doc.get(section), dict):
            tbl = doc[section]
        action = draw(st.sampled_from(["delete", "retype", "add"]))
        keys = sorted(tbl)
        if action == "delete" and keys:
            del tbl[draw(st.sampled_from(keys))]
        elif action == "retype" and keys:
            tbl[draw(st.sampled_from(keys))] = draw(_VALUES)
        else:
            tbl[draw(st.text(string.ascii_lowercase + "_", min_size=1, max_size=12))] = draw(_VALUES)
    return doc


@settings(max_examples=400)
@given(broken_docs())
def test_fuzzed_contracts_only_raise_contract_errors(doc: dict[str, Any]) -> None:
    try:
        contract_from_dict(doc, source="fuzz.toml")
    except ContractError as exc:
        msg = str(exc)
        assert msg.startswith("fuzz.toml:") and len(msg) < 600
        assert "\n" not in msg


@settings(max_examples=200)
@given(st.text(max_size=200))
def test_fuzzed_text_only_raises_contract_errors(text: str) -> None:
    try:
        parse_contract(text, source="fuzz.toml")
    except ContractError as exc:
        assert str(exc).startswith("fuzz.toml:")


def test_documented_example_round_trips_through_tomllib() -> None:
    # The example in docs/contract.md must stay loadable (it is the format users copy).
    doc = Path(__file__).parent.parent / "docs" / "contract.md"
    if not doc.exists():
        pytest.skip("docs/contract.md not written yet")
    blocks = [b.split("```", 1)[0] for b in doc.read_text().split("```toml")[1:]]
    assert blocks, "docs/contract.md has no TOML examples"
    for block in blocks:
        parse_contract(block, source="docs/contract.md")
        assert tomllib.loads(block)


# --- the keys for clocks, timing, lanes, out_of_range, power and tied pins -------------------------

NEW_KEYS_EXAMPLE = """
[memory]
words = 512
width = 33
lanes = [8, 8, 8, 8, 1]
read_latency = 1
out_of_range = "wrap"
collision_window = 1.5

[rtl]
sources = ["tdp.v"]
top = "tdp"
tie = { regce = 1, wfull = 0 }

[timing]
sample = 6.0
timescale = "1ns/1ps"

[[clock]]
name = "clka"
period = 10.0
phase = 0.0

[[clock]]
name = "clkb"
period = 7.5
phase = 2.5

[power]
sleep = "slp"
shutdown = "sd_n"
active_low = ["sd_n"]
wake_cycles = 2
sleep_read_data = "zero"
effect = "edge"

[[port]]
name = "a"
role = "readwrite"
clock = "clka"
address = "addra"
write_data = "dina"
lane_enable = "wea"
read_data = "douta"

[[port]]
name = "b"
role = "read"
clock = "clkb"
enable = "enb"
address = "addrb"
read_data = "doutb"
"""


def test_new_keys_load() -> None:
    c = parse_contract(NEW_KEYS_EXAMPLE)
    m = c.memory
    assert (m.lane_map, m.lanes, m.out_of_range, m.collision_window) == ((8, 8, 8, 8, 1), 5, "wrap", 1.5)
    assert [(k.name, k.period, k.phase) for k in c.port_clocks] == [("clka", 10.0, 0.0), ("clkb", 7.5, 2.5)]
    assert not c.lockstep and c.ports[0].any_lane_write
    assert c.timing.sample == 6.0 and c.timing.timescale == "1ns/1ps"
    assert c.power is not None and c.power.pins() == {"sleep": "slp", "shutdown": "sd_n"}
    assert c.power.active_low == {"sd_n"} and c.power.wake_cycles == 2
    assert c.rtl is not None and dict(c.rtl.tie) == {"regce": 1, "wfull": 0}


def test_a_port_clock_without_a_clock_table_takes_the_defaults() -> None:
    text = NEW_KEYS_EXAMPLE.replace('[[clock]]\nname = "clkb"\nperiod = 7.5\nphase = 2.5\n', "")
    c = parse_contract(text)
    assert c.clock_spec("clkb") == ClockSpec("clkb", 10.0, 0.0)
    assert c.lockstep  # both clocks at 10 ns, phase 0: every edge is simultaneous


def test_existing_contracts_keep_their_meaning() -> None:
    c = parse_contract(DOC_EXAMPLE)
    m = c.memory
    assert (m.lane_map, m.out_of_range, m.collision_window, c.power, c.clocks) == (None, "unchecked", 0.0, None, ())
    assert c.lockstep and c.timing.sample is None and c.timing.timescale == "1ns/1ps"


def _new(replace: str, by: str) -> str:
    assert replace in NEW_KEYS_EXAMPLE, replace
    return NEW_KEYS_EXAMPLE.replace(replace, by)


# The bad-input list (and the other mistakes each new key invites): every row exits 2 with
# one paragraph naming the file, the key and what is allowed.
BAD_NEW_KEYS = [
    (
        "lanes and lane_width",
        _new("lanes = [8, 8, 8, 8, 1]", "lanes = [8, 8, 8, 8, 1]\nlane_width = 11"),
        "lanes and lane_width cannot both be set",
    ),
    (
        "lanes and bit_mask",
        _new("lanes = [8, 8, 8, 8, 1]", "lanes = [8, 8, 8, 8, 1]\nbit_mask = true"),
        "lanes and bit_mask = true cannot both be set",
    ),
    ("lanes not summing to the width", _new("[8, 8, 8, 8, 1]", "[8, 8, 8, 8]"), "sums to 32 bits, but width = 33"),
    ("lanes not a list of widths", _new("[8, 8, 8, 8, 1]", "[8, 0, 25]"), "a list of lane widths"),
    ("wrap with a depth not a power of two", _new("words = 512", "words = 500"), "needs words to be a power of two"),
    ("out_of_range misspelt", _new('"wrap"', '"wrapped"'), '"unchecked" | "ignore" | "wrap"'),
    (
        "sample not inside the clock period",
        _new("sample = 6.0", "sample = 8.0"),
        "sample = 8.0 is not inside the clock period of 'clkb' (7.5 ns)",
    ),
    ("sample not positive", _new("sample = 6.0", "sample = 0"), "0 < sample < 10.0"),
    ("timescale malformed", _new('timescale = "1ns/1ps"', 'timescale = "1 nsec"'), "a Verilog timescale"),
    ("timescale precision coarser than unit", _new('"1ns/1ps"', '"1ps/1ns"'), "a Verilog timescale"),
    (
        "period finer than the precision",
        _new("period = 7.5", "period = 7.5005"),
        "not a whole number of the timescale's precision",
    ),
    ("clock table naming no port clock", _new('name = "clkb"', 'name = "clk_b"'), "Did you mean 'clkb'"),
    ("phase not below the period", _new("phase = 2.5", "phase = 7.5"), "0 <= phase < 7.5"),
    ("period not positive", _new("period = 7.5", "period = 0"), "a number of ns > 0"),
    ("unknown key in a clock table", _new("phase = 2.5", "phse = 2.5"), "Did you mean 'phase'"),
    (
        "collision_window longer than a period",
        _new("collision_window = 1.5", "collision_window = 8.0"),
        "longer than the shortest clock period",
    ),
    ("collision_window negative", _new("collision_window = 1.5", "collision_window = -1"), "a number of ns >= 0"),
    (
        "power table with no pin",
        _new('sleep = "slp"\nshutdown = "sd_n"\nactive_low = ["sd_n"]\n', ""),
        "[power] names no pin",
    ),
    (
        "power active_low naming another pin",
        _new('active_low = ["sd_n"]', 'active_low = ["enb"]'),
        "active_low lists 'enb', which is not a power pin",
    ),
    ("power pin that is a port pin", _new('sleep = "slp"', 'sleep = "enb"'), "already port 'b' enable"),
    ("unknown key in [power]", _new("wake_cycles = 2", "wake_cycle = 2"), "Did you mean 'wake_cycles'"),
    (
        "sleep_read_data misspelt",
        _new('sleep_read_data = "zero"', 'sleep_read_data = "zeros"'),
        '"unknown" | "zero" | "keep"',
    ),
    ("tied pin that is a port pin", _new("regce = 1", "addrb = 1"), "[rtl] tie.addrb names 'addrb'"),
    ("tied pin with a negative value", _new("regce = 1", "regce = -1"), "a non-negative integer"),
    ("power pin also tied", _new("regce = 1", "slp = 0"), "is both a [power] pin and tied in [rtl] tie"),
    (
        "readwrite port without write_enable or lanes",
        _new("lanes = [8, 8, 8, 8, 1]\n", "").replace('lane_enable = "wea"\n', ""),
        "write_enable is missing",
    ),
]


@pytest.mark.parametrize(("label", "text", "needle"), BAD_NEW_KEYS, ids=[r[0] for r in BAD_NEW_KEYS])
def test_bad_new_keys_exit_2_with_one_paragraph(
    label: str, text: str, needle: str, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    f = tmp_path / "bad.toml"
    f.write_text(text)
    (tmp_path / "tdp.v").write_text("")
    assert main(["contract", "validate", str(f)]) == 2, label
    err = capsys.readouterr().err
    assert needle in " ".join(err.split()), err
    assert str(f) in err and "Traceback" not in err
    assert len([ln for ln in err.strip().split("\n\n") if ln.strip()]) == 1  # one paragraph


def test_lane_enable_pin_of_the_wrong_width_is_one_paragraph() -> None:
    # The pin check (against the elaborated top) needs one lane-enable bit per lane of the map.
    from memcheck.errors import SimulationError
    from memcheck.sim.plumbing.pins import TopPort, check_pins

    c = parse_contract(NEW_KEYS_EXAMPLE)
    ports = {
        n: TopPort(n, d, w)  # type: ignore[arg-type]
        for n, d, w in [
            ("clka", "input", 1),
            ("clkb", "input", 1),
            ("slp", "input", 1),
            ("sd_n", "input", 1),
            ("regce", "input", 1),
            ("wfull", "input", 1),
            ("addra", "input", 9),
            ("dina", "input", 33),
            ("wea", "input", 4),
            ("douta", "output", 33),
            ("enb", "input", 1),
            ("addrb", "input", 9),
            ("doutb", "output", 33),
        ]
    }
    with pytest.raises(
        SimulationError, match=r"'wea' .* is \[3:0\] \(4 bits wide\), but the contract needs \[4:0\] \(5 bits\)"
    ):
        check_pins(c, ports, "tdp")


def test_validate_explains_the_new_keys_and_what_is_left_unchecked(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    f = tmp_path / "c.toml"
    f.write_text(NEW_KEYS_EXAMPLE)
    (tmp_path / "tdp.v").write_text("")
    assert main(["contract", "validate", str(f)]) == 0
    out = " ".join(capsys.readouterr().out.split())
    for needle in (
        "rising edges at 2.5 + k x 7.5 ns",
        "lane 4 = bit 32",
        "no write_enable: an access with any lane enable active writes those lanes",
        "address a selects word a mod 512",
        "less than 1.5 ns apart collide",
        "slp (active high)",
        "sd_n (active low)",
        "2 edge(s) after both pins deassert make no access",
        "read data is sampled 6.0 ns after the rising edge",
        "regce = 1",
        # unchecked
        "accesses and read data on the first 2 edge(s) after wake-up (wake_cycles)",
        "contents after a shutdown",
        "less than 1.5 ns away (collision_window)",
    ):
        assert needle in out, needle


def test_contracts_pickle_for_the_simulator_side() -> None:
    import pickle

    c = parse_contract(NEW_KEYS_EXAMPLE, base_dir=Path("/proj"))
    assert pickle.loads(pickle.dumps(c)) == c
