"""The vectorised model agrees with the cycle-by-cycle reference model bit for bit."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from memcheck import Contract, InvalidOperation
from memcheck.model import Model
from memcheck.model_fast import Columns, Contents, expected, expected_rows, mismatch
from memcheck.ops import IDLE, Cycle, Expected, idle, read, write
from memcheck.strategies import traces
from tests.contract_strategies import contracts


def _model_rows(contract: Contract, cycles: Sequence[Cycle], start: str) -> list[tuple[Expected, ...]]:
    m = Model(contract)
    if start == "forget":
        m.forget()
    elif start == "reset":
        m.reset()
    return m.run(cycles)


def _contents(contract: Contract, start: str) -> Contents:
    from memcheck.sim.checking.compare import start_contents

    return start_contents(contract, "unknown" if start == "forget" else "reset" if start == "reset" else "power-up")


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.data(), contracts(max_words=40, max_width=70, max_ports=3), st.sampled_from(["forget", "reset", "power-up"]))
def test_fast_model_agrees_with_the_model(data: st.DataObject, contract: Contract, start: str) -> None:
    # Several traces back to back, so addresses are reused across blocks and pipelines fill up.
    parts = data.draw(st.lists(traces(contract, max_blocks=8, drain=False), min_size=1, max_size=3))
    cycles = [c for t in parts for c in t.cycles]
    cols = Columns.from_cycles(contract, cycles)
    assert cols.to_cycles() == cycles
    value, known = expected(contract, cols, _contents(contract, start))
    assert expected_rows(value, known) == _model_rows(contract, cycles, start)


def _writers(contract: Contract) -> int:
    return sum(p.can_write for p in contract.ports)


@settings(max_examples=80, deadline=None, suppress_health_check=list(HealthCheck))
@given(st.data(), contracts(max_words=6, max_width=12, max_ports=3).filter(lambda c: _writers(c) >= 2))
def test_fast_model_agrees_on_write_collisions(data: st.DataObject, contract: Contract) -> None:
    # Few words and several writers: same-address writes on one edge are frequent.
    trace = data.draw(traces(contract, max_blocks=16, drain=False))
    value, known = expected(contract, Columns.from_cycles(contract, list(trace.cycles)))
    assert expected_rows(value, known) == _model_rows(contract, list(trace.cycles), "forget")


def test_hand_worked_lanes_latency_and_collisions() -> None:
    # Two lanes of 4 bits, latency 2, "new" on read-during-write, idle read data held.
    c = Contract.simple(8, 8, lane_width=4, read_latency=2, read_during_write="new", idle_read_data="keep")
    cycles = [
        (write(3, 0xAB),),
        (write(3, 0x0C, 0b01),),
        (read(3),),
        (IDLE,),
        (IDLE,),
        (read(9 % 8),),
        (IDLE,),
        (IDLE,),
    ]
    value, known = expected(c, Columns.from_cycles(c, cycles))
    got = [(int(v), int(k)) for v, k in zip(value[:, 0, 0], known[:, 0, 0], strict=True)]
    # cycle 0-1: pipeline start, unknown; 2: result of cycle 0 (new data AB); 3: cycle 1 wrote lane 0
    # -> AC; 4: read of cycle 2 -> AC; 5: cycle 3 idle -> held AC; 6: held; 7: read of 1 never written.
    assert got == [(0, 0), (0, 0), (0xAB, 0xFF), (0xAC, 0xFF), (0xAC, 0xFF), (0xAC, 0xFF), (0xAC, 0xFF), (0, 0)]


def _two_port(**memory: object) -> Contract:
    from memcheck.contract import contract_from_dict

    doc = {
        "memory": {"words": 4, "width": 8, "lane_width": 4, "read_latency": 0, **memory},
        "rtl": {"sources": ["x.v"], "top": "t"},
        "port": [
            {
                "name": n,
                "role": "readwrite",
                "clock": "clk",
                "address": f"a{n}",
                "enable": f"e{n}",
                "write_enable": f"w{n}",
                "write_data": f"d{n}",
                "lane_enable": f"b{n}",
                "read_data": f"r{n}",
            }
            for n in ("x", "y")
        ],
    }
    return contract_from_dict(doc)


def test_write_collision_first_lets_the_earlier_port_win_per_lane() -> None:
    c = _two_port(write_collision="first")
    # x writes lane 0 only, y writes both lanes: lane 0 from x (listed first), lane 1 from y.
    cycles = [(write(2, 0x0A, 0b01), write(2, 0xB5)), (read(2), idle())]
    value, known = expected(c, Columns.from_cycles(c, cycles))
    assert (int(value[1, 0, 0]), int(known[1, 0, 0])) == (0xBA, 0xFF)
    assert expected_rows(value, known) == _model_rows(c, cycles, "forget")


def test_write_collision_unknown_covers_every_driven_bit() -> None:
    # Two ports write different lanes of one word on the same edge: with write_collision "unknown"
    # every bit either drives is unknown afterwards, as the model says.
    c = _two_port(write_collision="unknown", initial="zero")
    cycles = [(write(1, 0xFF, 0b01), write(1, 0xFF, 0b10)), (read(1), idle())]
    value, known = expected(c, Columns.from_cycles(c, cycles), "zero")
    assert expected_rows(value, known) == Model(c).run(cycles)
    assert int(known[1, 0, 0]) == 0


def test_mismatch_marks_known_bits_that_differ_or_are_x() -> None:
    exp_v = np.array([[[0b1010]]], dtype=np.uint64)
    exp_k = np.array([[[0b1110]]], dtype=np.uint64)
    act = np.array([[[0b0011]]], dtype=np.uint64)
    defined = np.array([[[~np.uint64(0b0100)]]], dtype=np.uint64)
    # bit 3 differs (1 vs 0), bit 2 is X, bit 1 equal, bit 0 unknown -> 0b1100
    assert int(mismatch(exp_v, exp_k, act, defined)[0, 0, 0]) == 0b1100


def test_invalid_operations_are_rejected_like_the_model() -> None:
    c = Contract.simple(8, 8, enable=False)
    with pytest.raises(InvalidOperation, match="cannot be idle"):
        expected(c, Columns.from_cycles(c, [(read(0),), (IDLE,)]))
    with pytest.raises(InvalidOperation, match="does not fit 8 bits"):
        Columns.from_cycles(c, [(write(0, 0x1FF),)])
    with pytest.raises(InvalidOperation, match="one operation per port"):
        Columns.from_cycles(c, [(read(0), read(1)), ()])
    with pytest.raises(InvalidOperation, match="address"):
        Columns.from_cycles(c, [(read(-1),)])


@settings(max_examples=60, deadline=None)
@given(
    st.lists(
        st.tuples(st.integers(0, 3), st.integers(0, 255), st.integers(0, 255), st.integers(0, 255)),
        min_size=1,
        max_size=40,
    )
)
def test_the_segmented_scan_equals_a_sequential_fold(updates: list[tuple[int, int, int, int]]) -> None:
    """The log-step scan (W.D. Hillis and G.L. Steele, "Data parallel algorithms", CACM 29(12), 1986,
    segmented as in G.E. Blelloch, "Prefix sums and their applications", 1990) composes each
    address's masked updates exactly like applying them one after another."""
    from memcheck.model_fast import _scan

    ups = sorted(updates, key=lambda u: u[0])
    addr = np.array([u[0] for u in ups], dtype=np.int64)
    span = np.int64(100)
    key = addr * span + np.arange(len(ups))
    touch = np.array([[u[1]] for u in ups], dtype=np.uint64)
    sets = touch & np.array([[u[2]] for u in ups], dtype=np.uint64)
    data = sets & np.array([[u[3]] for u in ups], dtype=np.uint64)
    _, s_, d = _scan(key, span, touch, sets, data)
    state: dict[int, tuple[int, int]] = {}
    for i, (a, tt, ss, dd) in enumerate(ups):
        known, value = state.get(a, (0, 0))
        ss &= tt
        dd &= ss
        known = (known & ~tt) | ss
        value = (value & ~tt) | dd
        state[a] = (known, value)
        # the composed update applied to "nothing known" gives the same state
        assert (int(s_[i, 0]), int(d[i, 0])) == (known, value)


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    st.data(),
    contracts(max_words=12, max_width=40, max_ports=3, new_keys=True),
    st.sampled_from(["forget", "reset", "power-up"]),
)
def test_fast_model_agrees_on_lane_maps_any_lane_writes_and_out_of_range(
    data: st.DataObject, contract: Contract, start: str
) -> None:
    parts = data.draw(st.lists(traces(contract, max_blocks=8, drain=False), min_size=1, max_size=3))
    cycles = [c for t in parts for c in t.cycles]
    value, known = expected(contract, Columns.from_cycles(contract, cycles), _contents(contract, start))
    assert expected_rows(value, known) == _model_rows(contract, cycles, start)


def test_fast_model_refuses_several_clocks_and_power_pins_with_the_reason() -> None:
    from memcheck.contract import contract_from_dict
    from memcheck.model_fast import FastModelUnsupported, unsupported

    doc = {
        "memory": {"words": 4, "width": 8},
        "rtl": {"sources": ["x.v"], "top": "t"},
        "port": [
            {"name": "w", "role": "write", "clock": "wclk", "enable": "we", "address": "wa", "write_data": "wd"},
            {"name": "r", "role": "read", "clock": "rclk", "address": "ra", "read_data": "rd"},
        ],
    }
    same = contract_from_dict(doc)  # two clock pins with the default (identical) edges: lockstep
    assert unsupported(same) is None
    two = contract_from_dict({**doc, "clock": [{"name": "rclk", "period": 7.0}]})
    assert unsupported(two) == "its ports step on clocks with different edges"
    assert len(Columns.from_cycles(two, [])) == 0  # columns hold any trace; the model refuses
    with pytest.raises(FastModelUnsupported, match="different edges"):
        expected(two, Columns.empty(two, 2))
    powered = contract_from_dict({**doc, "power": {"sleep": "slp"}})
    assert unsupported(powered) == "it has [power] pins"
    with pytest.raises(FastModelUnsupported, match=r"\[power\]"):
        expected(powered, Columns.empty(same, 2))
