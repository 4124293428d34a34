"""``memcheck contract draft``: pins guessed from names and widths, drafts that validate unchanged.

The outside reference is the hand-written contract of every shipped example wrapper: a draft of
the same top must name the same pins in the same roles (port names and order aside), for at least
10 of the 13 examples. The naming conventions recognised (``_n`` active low, ``cen``/``wen``,
``be``/``bwe`` lane enables, ``_a``/``_b`` port suffixes) are common practice, not a standard.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

import pytest

from memcheck.cli import main
from memcheck.contract import Contract, load_contract
from memcheck.contract.draft import DraftPin, build_draft, classify, relative_sources, render_draft
from memcheck.errors import ContractError
from memcheck.examples import examples_dir

EXAMPLES = tomllib.loads((examples_dir() / "index.toml").read_text(encoding="utf-8"))["example"]


def _pins(*spec: str) -> list[DraftPin]:
    """``"in 1 clk"``, ``"out 32 q"``... -> pins."""
    out = []
    for s in spec:
        d, w, n = s.split()
        out.append(DraftPin(n, "output" if d == "out" else "input", int(w)))
    return out


def _shape(c: Contract) -> tuple[list[tuple[str, tuple[tuple[str, str], ...], tuple[str, ...]]], object]:
    """What a draft must get right: per port its role, pins by role and active-low pins; the reset."""
    ports: list[tuple[str, tuple[tuple[str, str], ...], tuple[str, ...]]]
    ports = sorted((p.role, tuple(sorted(p.pins().items())), tuple(sorted(p.active_low))) for p in c.ports)
    return ports, None if c.reset is None else (c.reset.signal, c.reset.active_low)


def _write(tmp_path: Path, pins: list[DraftPin], top: str = "top") -> Contract:
    out = tmp_path / "contract.toml"
    (tmp_path / "top.v").write_text("module top; endmodule\n", encoding="utf-8")
    out.write_text(render_draft(build_draft(pins, top), ["top.v"]), encoding="utf-8")
    return load_contract(out)


# -- pure guessing ----------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("name", "width", "role", "group", "low"),
    [
        ("cs_n", 1, "enable", "", True),
        ("cen", 1, "enable", "", True),
        ("wen", 1, "write_enable", "", True),
        ("en", 1, "enable", "", False),
        ("ce_a_n", 1, "enable", "a", True),
        ("addr_b", 8, "address", "b", False),
        ("bwen", 22, "lane_enable", "", True),
        ("we", 4, "lane_enable", "", False),  # a write enable wider than a bit is a lane enable
        ("rst_n", 1, "reset", "", True),
        ("wr_en", 1, "enable", "wr", False),
        ("wr_data", 32, "write_data", "wr", False),
        ("cs_b", 1, "enable", "", True),  # no cs_a beside it: _b is a polarity
    ],
)
def test_one_pin_from_its_name(name: str, width: int, role: str, group: str, low: bool) -> None:
    g = classify(DraftPin(name, "input", width), frozenset({name}))
    assert (g.role, g.group, g.active_low) == (role, group, low)


def test_b_beside_a_names_a_port_not_a_polarity() -> None:
    names = frozenset({"en_a", "en_b"})
    g = classify(DraftPin("en_b", "input", 1), names)
    assert (g.role, g.group, g.active_low) == ("enable", "b", False)


def test_unnamed_pins_are_placed_by_width_and_direction(tmp_path: Path) -> None:
    # The names say nothing about "x" and "pix": outputs are read data, data-wide inputs write data,
    # other wide inputs addresses; the "rd"/"wr" name parts make two ports.
    c = _write(tmp_path, _pins("in 1 clk", "in 1 wr_en", "in 7 wr_x", "in 12 wr_pix", "in 7 rd_x", "out 12 rd_pix"))
    assert {p.name: (p.role, p.pins()) for p in c.ports} == {
        "rd": ("read", {"clock": "clk", "address": "rd_x", "read_data": "rd_pix"}),
        "wr": ("write", {"clock": "clk", "enable": "wr_en", "address": "wr_x", "write_data": "wr_pix"}),
    }
    assert (c.memory.words, c.memory.width) == (128, 12)


def test_each_port_takes_its_own_clock(tmp_path: Path) -> None:
    pins = _pins("in 1 clka", "in 1 en_a", "in 1 we_a", "in 6 addr_a", "in 8 din_a", "out 8 dout_a")
    pins += _pins("in 1 clk_b", "in 1 en_b", "in 6 addr_b", "out 8 dout_b")
    c = _write(tmp_path, pins)
    assert {p.name: (p.role, p.clock) for p in c.ports} == {"a": ("readwrite", "clka"), "b": ("read", "clk_b")}


def test_lane_width_from_the_lane_enable_width(tmp_path: Path) -> None:
    c = _write(tmp_path, _pins("in 1 clk", "in 1 en", "in 1 we", "in 6 be", "in 10 addr", "in 48 wdata", "out 48 q"))
    assert (c.memory.words, c.memory.width, c.memory.lane_width, c.memory.lanes) == (1024, 48, 8, 6)


def test_uneven_lane_enables_are_left_out_with_a_note(tmp_path: Path) -> None:
    pins = _pins("in 1 clk", "in 1 we", "in 5 be", "in 4 addr", "in 12 wdata", "out 12 rdata")
    text = render_draft(build_draft(pins, "t"), ["top.v"])
    assert "lane enables left out: 5 bits do not divide the 12-bit data evenly" in text
    assert "lane_enable" not in text.split("[[port]]")[1]
    c = _write(tmp_path, pins)
    assert c.memory.lanes == 0 and "be" not in c.ports[0].pins().values()


def test_every_guess_is_marked_and_every_behaviour_key_explained() -> None:
    pins = _pins("in 1 clk", "in 1 rst_n", "in 1 cs_n", "in 1 we", "in 5 addr", "in 8 wdata", "out 8 rdata")
    text = render_draft(build_draft(pins, "t"), ["t.v"])
    doc = tomllib.loads(text)
    port = doc["port"][0]
    lines = text.splitlines()
    port_lines = text.split("[[port]]")[1].splitlines()
    for key in ("role", "clock", "enable", "write_enable", "address", "write_data", "read_data", "active_low"):
        (line,) = [ln for ln in port_lines if ln.startswith(f"{key} = ")]
        assert "# check this:" in line, line
    assert port["active_low"] == ["cs_n"] and doc["reset"] == {"signal": "rst_n", "active_low": True, "cycles": 2}
    for key in ("read_latency", "read_during_write", "collision", "write_collision", "initial", "idle_read_data"):
        assert any(ln.startswith(f"# {key}: ") for ln in lines), key
    assert doc["memory"]["read_latency"] == 1 and doc["memory"]["initial"] == "unknown"


def test_a_top_without_a_port_is_refused_with_its_pins() -> None:
    with pytest.raises(ContractError, match=r"no memory port could be drafted.*input \[1\] go"):
        build_draft(_pins("in 1 clk", "in 1 go", "out 1 done"), "fsm")


def test_no_clock_still_validates_with_a_note(tmp_path: Path) -> None:
    pins = _pins("in 1 we", "in 4 addr", "in 8 wdata", "out 8 rdata")
    assert "no clock pin found" in render_draft(build_draft(pins, "t"), ["top.v"])
    assert _write(tmp_path, pins).ports[0].clock == "clk"


def test_sources_are_relative_to_the_contract_folder(tmp_path: Path) -> None:
    (tmp_path / "rtl").mkdir()
    assert relative_sources([tmp_path / "rtl" / "a.v"], tmp_path / "out") == ["../rtl/a.v"]


# -- on the shipped examples (Icarus) -----------------------------------------------------------


@pytest.mark.icarus
def test_drafts_of_the_examples_name_their_pins_and_validate(tmp_path: Path) -> None:
    from memcheck.sim.plumbing.elaborate import top_ports

    same: list[str] = []
    differ: list[str] = []
    for e in EXAMPLES:
        c = load_contract(examples_dir() / e["contract"])
        assert c.rtl is not None
        ports = top_ports(list(c.rtl.sources), c.rtl.top)
        out = tmp_path / e["name"] / "contract.toml"
        out.parent.mkdir()
        text = render_draft(
            build_draft([DraftPin(p.name, p.direction, p.width) for p in ports], c.rtl.top),
            relative_sources(list(c.rtl.sources), out.parent),
        )
        out.write_text(text, encoding="utf-8")
        drafted = load_contract(out)  # every draft validates unchanged
        shape_ok = drafted.memory.width == c.memory.width and drafted.memory.lanes == c.memory.lanes
        shape_ok = shape_ok and drafted.memory.words == 1 << c.memory.address_bits  # words from the address width
        (same if shape_ok and _shape(drafted) == _shape(c) else differ).append(e["name"])
    # The issue asks for at least 10 of its 13 examples. Examples that need the real-memory keys (several
    # clocks, a sample point, power pins, a lane map) state what no port list can show; they must validate,
    # and may differ. Every other example agrees today: a name listed here is a regression.
    assert len(same) >= 10, f"drafts differ from the hand-written contracts for: {differ}"
    plain = [e["name"] for e in EXAMPLES if _plain(load_contract(examples_dir() / e["contract"]))]
    assert len(plain) >= 13 and not set(plain) & set(differ), differ


def _plain(c: Contract) -> bool:
    """No key a port list cannot suggest: one default clock, no sample point, no power pins, even lanes."""
    return not c.clocks and c.timing.sample is None and c.power is None and c.memory.lane_map is None


@pytest.mark.icarus
def test_cli_draft_writes_a_file_that_contract_validate_accepts(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    src = examples_dir() / "packet_buffer"
    out = tmp_path / "pb" / "contract.toml"
    out.parent.mkdir()
    rc = main(
        [
            "contract",
            "draft",
            str(src / "pktbuf_wrap.v"),
            str(src / "sram_sp_bw.v"),
            "--top",
            "pktbuf_wrap",
            "-o",
            str(out),
        ]
    )
    assert rc == 0, capsys.readouterr().err
    assert "wrote" in capsys.readouterr().out
    assert main(["contract", "validate", str(out)]) == 0
    assert "valid contract" in capsys.readouterr().out
    assert not list(out.parent.glob("*.tmp*"))  # written atomically: no temporary left behind


@pytest.mark.icarus
def test_a_top_that_does_not_exist_lists_the_modules_found(capsys: pytest.CaptureFixture[str]) -> None:
    src = examples_dir() / "coeff_lut"
    rc = main(["contract", "draft", str(src / "coeff_wrap.v"), str(src / "rf_async.v"), "--top", "coeff"])
    err = capsys.readouterr().err
    assert rc == 2 and "Traceback" not in err
    assert "no module named 'coeff'" in err and "modules found: coeff_wrap, rf_async" in err


@pytest.mark.icarus
def test_rtl_that_does_not_compile_shows_the_compiler_lines(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    bad = tmp_path / "bad.v"
    bad.write_text("module bad(input clk, output [3:0] q);\n  assign q = nosuch;\nendmodule\n", encoding="utf-8")
    rc = main(["contract", "draft", str(bad), "--top", "bad"])
    err = capsys.readouterr().err
    assert rc == 2 and "Traceback" not in err
    assert "does not compile" in err and "nosuch" in err and "bad.v:2" in err


@pytest.mark.icarus
def test_without_o_the_draft_goes_to_standard_output(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    src = examples_dir() / "regfile"
    monkeypatch.chdir(src)
    assert main(["contract", "draft", "regfile_wrap.v", "sram_2p.v", "--top", "regfile_wrap"]) == 0
    doc = tomllib.loads(capsys.readouterr().out)
    assert doc["rtl"] == {"sources": ["regfile_wrap.v", "sram_2p.v"], "top": "regfile_wrap"}
    assert doc["reset"]["signal"] == "rst_n" and sorted(p["name"] for p in doc["port"]) == ["rd", "wr"]
    assert not list(tmp_path.iterdir())  # nothing written
