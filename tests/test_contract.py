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
from memcheck.contract import contract_from_dict
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
