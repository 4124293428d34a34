"""Stimulus/capture layout, pin checks and the harness text (pure Python, no simulator)."""

from __future__ import annotations

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from memcheck.contract import Contract, parse_contract
from memcheck.errors import InvalidOperation, SimulationError
from memcheck.model_fast import Columns
from memcheck.ops import OpKind, PortOp, idle, read, write
from memcheck.records import Observed
from memcheck.sim.plumbing.harness import harness_text
from memcheck.sim.plumbing.layout import Layout
from memcheck.sim.plumbing.pins import TopPort, check_pins, read_ports
from memcheck.strategies import traces
from tests.contract_strategies import contracts

CONTRACT = """
[memory]
words = 48
width = 16
lane_width = 8
read_latency = 1
[rtl]
sources = ["x.v"]
top = "wrap"
parameters = { DEPTH = 48 }
[reset]
signal = "rst_n"
active_low = true
[[port]]
name = "a"
role = "readwrite"
clock = "clk"
enable = "cs_n"
write_enable = "we"
address = "addr"
write_data = "wdata"
lane_enable = "be_n"
read_data = "rdata"
active_low = ["cs_n", "be_n"]
[[port]]
name = "b"
role = "read"
clock = "clk"
address = "raddr"
read_data = "q"
"""

PORTS = {
    "clk": TopPort("clk", "input", 1),
    "rst_n": TopPort("rst_n", "input", 1),
    "cs_n": TopPort("cs_n", "input", 1),
    "we": TopPort("we", "input", 1),
    "addr": TopPort("addr", "input", 8),
    "wdata": TopPort("wdata", "input", 16),
    "be_n": TopPort("be_n", "input", 2),
    "rdata": TopPort("rdata", "output", 16),
    "raddr": TopPort("raddr", "input", 6),
    "q": TopPort("q", "output", 16),
    "test_mode": TopPort("test_mode", "input", 1),
}


def _layout() -> Layout:
    c = parse_contract(CONTRACT)
    return Layout.build(c, check_pins(c, PORTS, "wrap").widths)


def _field(word: int, layout: Layout, port: int, name: str) -> int:
    f = getattr(layout.ports[port], name)
    return int((word >> f.offset) & f.mask)


def test_fields_are_packed_without_overlap() -> None:
    lay = _layout()
    spans = [(lay.reset.offset, lay.reset.width)] if lay.reset else []
    for pf in lay.ports:
        spans += [(f.offset, f.width) for f in pf.inputs()]
    bits = [b for off, w in spans for b in range(off, off + w)]
    assert len(bits) == len(set(bits)) == lay.stim_width == 1 + (1 + 1 + 8 + 16 + 2) + 6
    assert lay.cap_width == 32


def test_active_low_pins_are_inverted_and_reset_encoded() -> None:
    lay = _layout()
    w = lay.encode((write(5, 0xBEEF, 0b01), read(7)), reset=False)
    assert w & 1 == 1  # reset deasserted = 1 for an active-low reset
    assert _field(w, lay, 0, "enable") == 0  # cs_n asserted low
    assert _field(w, lay, 0, "write_enable") == 1
    assert _field(w, lay, 0, "address") == 5
    assert _field(w, lay, 0, "write_data") == 0xBEEF
    assert _field(w, lay, 0, "lane_enable") == 0b10  # lane 0 enabled, active low
    assert _field(w, lay, 1, "address") == 7
    assert lay.encode((write(5, 1), read(7)), reset=True) & 1 == 0


def test_idle_with_garbage_asserts_write_enable_but_not_enable() -> None:
    lay = _layout()
    clean = lay.encode((PortOp(OpKind.IDLE), read(0)))
    assert _field(clean, lay, 0, "enable") == 1 and _field(clean, lay, 0, "write_enable") == 0
    dirty = lay.encode((idle(3, 0x1234, 0b11), read(0)))
    assert _field(dirty, lay, 0, "enable") == 1  # still deselected
    assert _field(dirty, lay, 0, "write_enable") == 1
    assert _field(dirty, lay, 0, "address") == 3 and _field(dirty, lay, 0, "write_data") == 0x1234


def test_addresses_wider_than_the_pin_are_rejected() -> None:
    with pytest.raises(InvalidOperation, match="does not fit"):
        _layout().encode((read(0), read(64)))


def test_capture_decoding_keeps_x_and_z_per_bit() -> None:
    lay = _layout()
    # $writememb output: comment lines, MSB first; port b (q) is the high half, port a the low half.
    text = b"// 0x00000000\n" + b"0000000000000001" + b"1x0z000000000000\n" + b"1" * 32 + b"\n"
    obs = lay.decode(text, 2)
    a0, b0 = obs[0]
    assert b0 == Observed(1, 0xFFFF)
    assert a0 == Observed(0x8000, 0xFFFF & ~(1 << 14) & ~(1 << 12))
    assert obs[1] == (Observed(0xFFFF, 0xFFFF), Observed(0xFFFF, 0xFFFF))
    with pytest.raises(ValueError):
        lay.decode(text, 3)


def test_pin_problems_name_the_pin_width_and_actual_ports() -> None:
    c = parse_contract(CONTRACT)
    missing = {k: v for k, v in PORTS.items() if k != "q"}
    with pytest.raises(SimulationError, match=r"no pin 'q'.*16 bits.*Its ports are: .*input \[7:0\] addr"):
        check_pins(c, missing, "wrap")
    narrow = dict(PORTS, wdata=TopPort("wdata", "input", 12))
    with pytest.raises(
        SimulationError, match=r"'wdata'.*is \[11:0\] \(12 bits wide\), but the contract needs \[15:0\] \(16 bits\)"
    ):
        check_pins(c, narrow, "wrap")
    short_addr = dict(PORTS, addr=TopPort("addr", "input", 5))
    with pytest.raises(SimulationError, match=r"'addr'.*at least \[5:0\] \(6 bits\) for 48 words"):
        check_pins(c, short_addr, "wrap")
    wrong_dir = dict(PORTS, q=TopPort("q", "input", 16))
    with pytest.raises(SimulationError, match=r"'q'.*is an input.*needs an output"):
        check_pins(c, wrong_dir, "wrap")


def test_extra_inputs_are_reported_as_unconnected() -> None:
    c = parse_contract(CONTRACT)
    assert check_pins(c, PORTS, "wrap").unconnected_inputs == ("test_mode",)


def test_port_info_lines_of_the_root_module_only(tmp_path) -> None:  # type: ignore[no-untyped-def]
    vvp = tmp_path / "sim.vvp"
    vvp.write_text(
        'S_0x1 .scope module, "wrap" "wrap" 3 14;\n'
        " .timescale -9 -12;\n"
        '    .port_info 0 /INPUT 1 "clk";\n'
        '    .port_info 1 /OUTPUT 32 "rdata";\n'
        'v0x2_0 .net "clk", 0 0, L_0x3;\n'
        'S_0x4 .scope module, "u" "wrap" 3 30, 4 10 0, S_0x1;\n'
        '    .port_info 0 /INPUT 1 "CLK";\n'
    )
    ports = read_ports(vvp, "wrap")
    assert list(ports) == ["clk", "rdata"]
    assert ports["rdata"] == TopPort("rdata", "output", 32)
    with pytest.raises(SimulationError, match="no root module named 'other'"):
        read_ports(vvp, "other")


def test_harness_instantiates_the_top_with_parameters_and_every_pin() -> None:
    c = parse_contract(CONTRACT)
    lay = Layout.build(c, check_pins(c, PORTS, "wrap").widths)
    text = harness_text(c, lay, "wrap", {"DEPTH": 48, "MODE": '"fast"'})
    assert 'wrap #(.DEPTH(48), .MODE("fast")) dut (' in text
    for pin in ("clk", "rst_n", "cs_n", "we", "addr", "wdata", "be_n", "rdata", "raddr", "q"):
        assert f".{pin}(" in text
    assert ".test_mode(" not in text
    assert "$readmemh" in text and "$writememb" in text


# -- the vectorised stimulus and capture paths --------------------------------------------------


@settings(max_examples=60, deadline=None, suppress_health_check=list(HealthCheck))
@given(st.data(), contracts(max_words=40, max_width=130, max_ports=3), st.booleans())
def test_vectorised_stimulus_matches_the_word_by_word_encoder(
    data: st.DataObject, contract: Contract, reset: bool
) -> None:
    widths = {p.address: contract.memory.address_bits + data.draw(st.integers(0, 3)) for p in contract.ports}
    lay = Layout.build(contract, widths)
    trace = data.draw(traces(contract, max_blocks=6))
    cycles = list(trace.cycles)
    fast = lay.stim_bytes(Columns.from_cycles(contract, cycles), reset).decode()
    assert [int(w, 16) for w in fast.split()] == [lay.encode(c, reset) for c in cycles]
    # every word has the same number of hex digits, as $readmemh reads them
    assert len({len(w) for w in fast.split()}) <= 1


@settings(max_examples=40, deadline=None)
@given(st.lists(st.text("01xz", min_size=32, max_size=32), min_size=1, max_size=40), st.booleans())
def test_vectorised_capture_matches_the_line_by_line_decoder(lines: list[str], spaced: bool) -> None:
    lay = _layout()
    # $writememb as Icarus writes it: a "// 0x..." line before every 16 words (optionally with spaces).
    text = "".join(
        (f"// 0x{i:08x}\n" if i % 16 == 0 else "") + ln + (" \n" if spaced else "\n") for i, ln in enumerate(lines)
    ).encode()
    value, defined = lay.decode_arrays(text, len(lines))
    from memcheck.sim.checking.runner import observations_from_arrays

    assert observations_from_arrays(lay.contract, value, defined) == lay.decode(text, len(lines))
    with pytest.raises(ValueError):
        lay.decode_arrays(text, len(lines) + 1)


def test_vectorised_stimulus_rejects_addresses_wider_than_the_pin() -> None:
    lay = _layout()
    with pytest.raises(InvalidOperation, match="does not fit"):
        lay.stim_bytes(Columns.from_cycles(lay.contract, [(read(0), read(64))]))
