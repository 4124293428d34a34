"""Hand-worked expected values, one test per contract rule (values worked out on paper)."""

from __future__ import annotations

from typing import Any

import pytest

from memcheck import IDLE, Contract, Expected, InvalidOperation, PortOp, ResetSpec, read, write
from memcheck.contract import contract_from_dict
from memcheck.model import Model
from memcheck.ops import OpKind

X = Expected(0, 0)
FULL8 = 0xFF


def known(value: int, width: int = 8) -> Expected:
    return Expected(value, (1 << width) - 1)


def single(**memory: Any) -> Model:
    return Model(Contract.simple(16, memory.pop("width", 8), **memory))


def two_port(**memory: Any) -> Model:
    doc = {
        "memory": {"words": 16, "width": 8, **memory},
        "rtl": {"sources": ["x.v"], "top": "t"},
        "port": [
            {"name": "w", "role": "write", "clock": "clk", "enable": "we", "address": "wa", "write_data": "wd"},
            {"name": "r", "role": "read", "clock": "clk", "enable": "re", "address": "ra", "read_data": "rd"},
        ],
    }
    return Model(contract_from_dict(doc))


def two_rw(**memory: Any) -> Model:
    ports = [
        {
            "name": n,
            "role": "readwrite",
            "clock": "clk",
            "enable": f"en_{n}",
            "write_enable": f"we_{n}",
            "address": f"a_{n}",
            "write_data": f"wd_{n}",
            "read_data": f"rd_{n}",
        }
        for n in ("a", "b")
    ]
    doc = {"memory": {"words": 16, "width": 8, **memory}, "rtl": {"sources": ["x.v"], "top": "t"}, "port": ports}
    return Model(contract_from_dict(doc))


def test_latency_one_shows_data_one_cycle_after_the_read() -> None:
    m = single(read_latency=1, initial="zero")
    assert m.step((write(3, 0x5A),)) == (X,)  # power-up read data is unknown
    assert m.step((read(3),)) == (X,)  # rdw unknown: the write cycle's result is unknown
    assert m.step((IDLE,)) == (known(0x5A),)


def test_latency_zero_is_combinational_and_latency_two_adds_a_register() -> None:
    m0 = single(read_latency=0, initial="zero")
    m0.step((write(1, 0x11),))
    assert m0.step((read(1),)) == (known(0x11),)
    m2 = single(read_latency=2, initial="zero", idle_read_data="unknown")
    m2.step((write(1, 0x22),))
    assert m2.step((read(1),)) == (X,)
    assert m2.step((IDLE,)) == (X,)
    assert m2.step((IDLE,)) == (known(0x22),)
    assert m2.step((IDLE,)) == (X,)  # idle unknown


def test_initial_zero_versus_unknown() -> None:
    assert single(read_latency=0, initial="zero").step((read(5),)) == (known(0),)
    assert single(read_latency=0, initial="unknown").step((read(5),)) == (X,)


def test_initial_applies_after_reset_when_the_contract_has_one() -> None:
    simple = Contract.simple(4, 8, read_latency=0, initial="zero")
    c = Contract(memory=simple.memory, ports=simple.ports, reset=ResetSpec("rst_n"))
    m = Model(c)
    assert m.step((read(0),)) == (X,)  # before the reset sequence nothing is promised
    m.reset()
    assert m.step((read(0),)) == (known(0),)


@pytest.mark.parametrize(
    ("rule", "shown"),
    [("old", known(0xAA)), ("new", known(0x55)), ("keep", known(0x0F)), ("unknown", X)],
)
def test_read_during_write_rules(rule: str, shown: Expected) -> None:
    m = single(read_latency=1, read_during_write=rule, idle_read_data="keep", initial="zero")
    m.step((write(2, 0xAA),))
    m.step((write(7, 0x0F),))
    m.step((read(7),))  # shows rdw result of the write to 7 ... not under test
    m.step((write(2, 0x55),))  # shows 0x0F: the read of word 7
    assert m.step((IDLE,)) == (shown,)


def test_read_during_write_new_with_lanes_is_the_merged_word() -> None:
    m = single(width=16, lane_width=8, read_latency=1, read_during_write="new", initial="zero")
    m.step((write(0, 0x1234),))
    m.step((write(0, 0xABCD, 0b10),))  # only the upper byte is written
    assert m.step((IDLE,)) == (known(0xAB34, 16),)


def test_write_with_no_lanes_enabled_changes_nothing() -> None:
    m = single(width=16, lane_width=8, read_latency=0, initial="zero")
    m.step((write(0, 0x1234),))
    m.step((write(0, 0xFFFF, 0),))
    assert m.step((read(0),)) == (known(0x1234, 16),)


def test_bit_mask_writes_single_bits() -> None:
    m = single(width=8, bit_mask=True, read_latency=0, initial="zero")
    m.step((write(9, 0xFF, 0b1000_0001),))
    assert m.step((read(9),)) == (known(0x81),)


def test_partial_write_to_unknown_word_leaves_other_lanes_unknown() -> None:
    m = single(width=16, lane_width=4, read_latency=0)
    m.step((write(3, 0xBEEF, 0b0010),))
    assert m.step((read(3),)) == (Expected(0x00E0, 0x00F0),)


def test_idle_keep_holds_last_result_and_idle_unknown_does_not() -> None:
    keep = single(read_latency=1, idle_read_data="keep", initial="zero")
    keep.step((write(1, 0x77),))
    keep.step((read(1),))
    assert [keep.step((IDLE,)) for _ in range(3)] == [(known(0x77),)] * 3
    unk = single(read_latency=1, idle_read_data="unknown", initial="zero")
    unk.step((write(1, 0x77),))
    unk.step((read(1),))
    assert [unk.step((IDLE,)) for _ in range(3)] == [(known(0x77),), (X,), (X,)]


def test_write_cycle_result_counts_as_latest_read_result_for_idle_keep() -> None:
    m = single(read_latency=1, read_during_write="old", idle_read_data="keep", initial="zero")
    m.step((write(4, 0x10),))  # rdw old: result 0x00
    assert m.step((IDLE,)) == (known(0x00),)
    assert m.step((IDLE,)) == (known(0x00),)


def test_out_of_range_read_is_unknown_and_write_changes_nothing() -> None:
    m = Model(Contract.simple(12, 8, read_latency=0, initial="zero"))  # 4 address bits, 12 words
    m.step((write(13, 0xFF),))
    assert m.step((read(13),)) == (X,)
    assert m.step((read(11),)) == (known(0),)


def test_disabled_port_ignores_its_pins() -> None:
    m = single(read_latency=0, initial="zero")
    m.step((PortOp(OpKind.IDLE, 2, 0xFF, None),))  # garbage on a disabled port
    assert m.step((read(2),)) == (known(0),)


@pytest.mark.parametrize(("rule", "shown"), [("old", known(0x00)), ("new", known(0x3C)), ("unknown", X)])
def test_read_write_collision_rules(rule: str, shown: Expected) -> None:
    m = two_port(read_latency=0, collision=rule, initial="zero")
    assert m.step((write(6, 0x3C), read(6)))[1] == shown
    assert m.step((IDLE, read(6)))[1] == known(0x3C)  # the write itself takes effect


def test_collision_unknown_only_blurs_the_written_lanes() -> None:
    ports = [
        {
            "name": n,
            "role": "readwrite",
            "clock": "clk",
            "write_enable": f"we_{n}",
            "address": f"a_{n}",
            "write_data": f"wd_{n}",
            "read_data": f"rd_{n}",
            "lane_enable": f"be_{n}",
        }
        for n in ("a", "b")
    ]
    doc = {
        "memory": {
            "words": 4,
            "width": 8,
            "lane_width": 4,
            "read_latency": 0,
            "initial": "zero",
            "collision": "unknown",
        },
        "rtl": {"sources": ["x.v"], "top": "t"},
        "port": ports,
    }
    model = Model(contract_from_dict(doc))
    got = model.step((write(1, 0xFF, 0b01), read(1)))[1]
    assert got == Expected(0x00, 0xF0)


@pytest.mark.parametrize(("rule", "stored"), [("first", known(0x11)), ("unknown", X)])
def test_write_collision_rules(rule: str, stored: Expected) -> None:
    m = two_rw(read_latency=0, write_collision=rule, initial="zero")
    m.step((write(5, 0x11), write(5, 0x22)))
    assert m.step((read(5), IDLE))[0] == stored


def test_step_rejects_operations_a_port_cannot_do() -> None:
    m = two_port(read_latency=1)
    with pytest.raises(InvalidOperation, match="cannot read"):
        m.step((read(0), IDLE))
    with pytest.raises(InvalidOperation, match="cannot write"):
        m.step((IDLE, write(0, 1)))
    no_enable = Model(Contract.simple(4, 8, enable=False))
    with pytest.raises(InvalidOperation, match="cannot be idle"):
        no_enable.step((IDLE,))
    with pytest.raises(InvalidOperation, match="does not fit"):
        no_enable.step((write(0, 0x100),))


def test_wide_words_beyond_64_bits() -> None:
    m = Model(Contract.simple(4, 1024, lane_width=256, read_latency=0, initial="unknown"))
    value = (1 << 1023) | (1 << 700) | 1
    m.step((write(3, value, 0b1001),))  # lanes 0 and 3: bits 0..255 and 768..1023
    lanes_0_and_3 = ((1 << 256) - 1) | (((1 << 256) - 1) << 768)
    assert m.step((read(3),)) == (Expected((1 << 1023) | 1, lanes_0_and_3),)


def test_forget_makes_everything_unknown() -> None:
    m = single(read_latency=1, initial="zero", idle_read_data="keep")
    m.step((read(0),))
    m.forget()
    assert m.step((read(0),)) == (X,)
    assert m.step((IDLE,)) == (X,)
