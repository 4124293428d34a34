"""Hand-worked expected values for several clocks, the collision window, power pins, lane maps,
any-lane writes and out_of_range (values worked out on paper, tick by tick, in the comments).

Ticks: the union of the port clocks' rising edges in time order; edges of different clocks at one
instant form one tick and are simultaneous. That edges at one instant have no defined order between
processes is IEEE 1800-2017 §4.7 (and IEEE 1364-2005 §11.4): RTL sampling on both edges cannot
rely on either order, which is why simultaneous accesses follow the collision rules.
"""

from __future__ import annotations

from fractions import Fraction
from typing import Any

import pytest

from memcheck import Contract, Expected, InvalidOperation, read, write
from memcheck.contract import ClockSpec, contract_from_dict, timeline
from memcheck.model import Model
from memcheck.ops import IDLE, NO_EDGE, Power, Trace

X = Expected(0, 0)
N = NO_EDGE


def known(value: int, width: int = 8) -> Expected:
    return Expected(value, (1 << width) - 1)


def two_clocks(memory: dict[str, Any], clocks: list[dict[str, Any]], power: dict[str, Any] | None = None) -> Model:
    """Port w (write, clock wclk) and port r (read, clock rclk)."""
    doc: dict[str, Any] = {
        "memory": {"words": 16, "width": 8, "initial": "zero", **memory},
        "rtl": {"sources": ["x.v"], "top": "t"},
        "port": [
            {"name": "w", "role": "write", "clock": "wclk", "enable": "we", "address": "wa", "write_data": "wd"},
            {"name": "r", "role": "read", "clock": "rclk", "enable": "re", "address": "ra", "read_data": "rd"},
        ],
        "clock": clocks,
    }
    if power is not None:
        doc["power"] = power
    return Model(contract_from_dict(doc))


def single(power: dict[str, Any], **memory: Any) -> Model:
    doc = {
        "memory": {"words": 16, "width": 8, "initial": "zero", **memory},
        "rtl": {"sources": ["x.v"], "top": "t"},
        "port": [
            {
                "name": "a",
                "role": "readwrite",
                "clock": "clk",
                "enable": "en",
                "write_enable": "we",
                "address": "ad",
                "write_data": "wd",
                "read_data": "rd",
            }
        ],
        "power": power,
    }
    return Model(contract_from_dict(doc))


# -- the timeline ---------------------------------------------------------------------------


def test_timeline_merges_edges_and_simultaneous_edges_form_one_tick() -> None:
    a = ClockSpec("a", 10.0, 0.0)  # 0, 10, 20, 30
    b = ClockSpec("b", 15.0, 5.0)  # 5, 20, 35
    got: list[tuple[Fraction | int, list[str]]] = [
        (t.time, sorted(t.clocks)) for t in timeline([a, b], until=Fraction(35))
    ]
    assert got == [
        (0, ["a"]),
        (5, ["b"]),
        (10, ["a"]),
        (20, ["a", "b"]),  # one tick: simultaneous
        (30, ["a"]),
        (35, ["b"]),
    ]


def test_timeline_is_exact_where_floats_drift() -> None:
    # 0.1 + 0.1 + 0.1 != 0.3 in binary floating point; a 0.1 ns clock and a 0.3 ns clock must still
    # edge together at 0.3 ns (exact decimal arithmetic, common practice for event schedulers).
    assert 0.1 + 0.1 + 0.1 != 0.3
    ticks = timeline([ClockSpec("f", 0.1), ClockSpec("s", 0.3)], count=4)
    assert [(t.time, sorted(t.clocks)) for t in ticks] == [
        (Fraction(0), ["f", "s"]),
        (Fraction(1, 10), ["f"]),
        (Fraction(2, 10), ["f"]),
        (Fraction(3, 10), ["f", "s"]),
    ]


def test_single_clock_contract_has_one_tick_per_cycle() -> None:
    c = Contract.simple(4, 8)
    ticks = timeline(c.port_clocks, count=3)
    assert [t.time for t in ticks] == [0, 10, 20] and all(t.clocks == {"clk"} for t in ticks)


# -- several clocks -------------------------------------------------------------------------


def test_latency_counts_the_port_s_own_edges() -> None:
    # wclk 10 ns (0, 10, 20, 30, 40), rclk 20 ns phase 5 (5, 25, 45); latency 1.
    m = two_clocks(
        {"read_latency": 1}, [{"name": "wclk", "period": 10.0}, {"name": "rclk", "period": 20.0, "phase": 5.0}]
    )
    assert m.step((write(3, 0x5A), N)) == (X, X)  # t=0: write 3 = 5A
    assert m.step((N, read(3))) == (X, X)  # t=5: r reads 3 (power-up read data unknown)
    assert m.step((write(3, 0x11), N)) == (X, X)  # t=10: w writes 11; r has no edge: shows nothing
    assert m.step((IDLE, N)) == (X, X)  # t=20
    assert m.step((N, IDLE)) == (X, known(0x5A))  # t=25: r's next own edge shows its read of t=5


def test_no_edge_marker_must_match_the_timeline() -> None:
    m = two_clocks({}, [{"name": "rclk", "period": 20.0, "phase": 5.0}])
    with pytest.raises(InvalidOperation, match="has no rising edge"):
        m.step((IDLE, IDLE))  # t=0: rclk first rises at 5
    with pytest.raises(InvalidOperation, match="cannot be 'no edge'"):
        m.step((N, N))


def test_simultaneous_edges_of_two_clocks_follow_the_collision_rule() -> None:
    # wclk 10 ns, rclk 20 ns: both rise at 0 and 20. collision = "old", latency 0.
    m = two_clocks({"read_latency": 0, "collision": "old"}, [{"name": "rclk", "period": 20.0}])
    assert m.step((write(2, 0x77), read(2))) == (X, known(0x00))  # t=0: one tick, old data
    assert m.step((IDLE, N)) == (X, X)  # t=10
    assert m.step((IDLE, read(2))) == (X, known(0x77))  # t=20


def test_collision_window_blurs_a_read_just_after_a_write_on_another_clock() -> None:
    # wclk 10 ns phase 0; rclk 10 ns phase 1; latency 1; window 2 ns.
    clocks = [{"name": "rclk", "period": 10.0, "phase": 1.0}]
    m = two_clocks({"read_latency": 1, "collision_window": 2.0}, clocks)
    m.step((write(4, 0xF0), N))  # t=0
    m.step((N, read(4)))  # t=1: 1 ns after the write: inside the window
    m.step((IDLE, N))  # t=10
    assert m.step((N, read(4)))[1] == X  # t=11: shows the read of t=1, written bits blurred
    m.step((IDLE, N))  # t=20
    assert m.step((N, IDLE))[1] == known(0xF0)  # t=21: the read of t=11 is 11 ns after the write
    # The same with no window: the read 1 ns after the write sees the new data.
    m0 = two_clocks({"read_latency": 1}, clocks)
    m0.step((write(4, 0xF0), N))
    m0.step((N, read(4)))
    m0.step((IDLE, N))
    assert m0.step((N, IDLE))[1] == known(0xF0)


def test_collision_window_blurs_a_pending_read_when_the_write_comes_just_after_it() -> None:
    # rclk phase 0, wclk phase 1 (the write 1 ns after the read), window 2 ns, latency 1.
    clocks = [{"name": "wclk", "period": 10.0, "phase": 1.0}]
    m = two_clocks({"read_latency": 1, "collision_window": 2.0, "initial": "zero"}, clocks)
    assert m.step((N, read(6))) == (X, X)  # t=0: r reads 6 (holds 00)
    m.step((write(6, 0x0F), N))  # t=1: w writes 6, 1 ns later: the pending read is blurred
    assert m.step((N, IDLE))[1] == X  # t=10: every bit the write drove is unknown
    # 1 ns is outside a 0.5 ns window: the read made before the write shows the old word.
    m_narrow = two_clocks({"read_latency": 1, "collision_window": 0.5, "initial": "zero"}, clocks)
    m_narrow.step((N, read(6)))
    m_narrow.step((write(6, 0x0F), N))
    assert m_narrow.step((N, IDLE))[1] == known(0x00)


def test_collision_window_between_two_writers_on_different_clocks() -> None:
    doc = {
        "memory": {"words": 4, "width": 8, "initial": "zero", "read_latency": 0, "collision_window": 2.0},
        "rtl": {"sources": ["x.v"], "top": "t"},
        "port": [
            {"name": "a", "role": "write", "clock": "ca", "enable": "ea", "address": "aa", "write_data": "da"},
            {"name": "b", "role": "write", "clock": "cb", "enable": "eb", "address": "ab", "write_data": "db"},
            {"name": "r", "role": "read", "clock": "ca", "enable": "er", "address": "ar", "read_data": "rd"},
        ],
        "clock": [{"name": "cb", "period": 10.0, "phase": 1.0}],
    }
    m = Model(contract_from_dict(doc))
    m.step((write(1, 0xAA), N, IDLE))  # t=0
    m.step((N, write(1, 0xBB), N))  # t=1: 1 ns after a's write: both writes' bits unknown
    m.step((IDLE, N, IDLE))  # t=10
    m.step((N, IDLE, N))  # t=11
    assert m.step((IDLE, N, read(1)))[2] == X  # t=20: nothing written in the read's cycle (10, 20]
    m.step((N, write(1, 0xCC), N))  # t=21: 21 ns after a's write: a plain write
    m.step((IDLE, N, IDLE))  # t=30
    m.step((N, IDLE, N))  # t=31
    assert m.step((IDLE, N, read(1)))[2] == known(0xCC)  # t=40


def test_combinational_read_while_another_clock_writes_inside_its_cycle_is_unknown() -> None:
    # rclk 10 ns phase 0, wclk 10 ns phase 5; latency 0: r's cycle (0, 10] contains w's write at 5.
    m = two_clocks({"read_latency": 0}, [{"name": "wclk", "period": 10.0, "phase": 5.0}])
    assert m.step((N, read(2)))[1] == known(0)  # t=0
    m.step((write(2, 0x3C, None), N))  # t=5
    assert m.step((N, read(2)))[1] == X  # t=10: written inside the read's cycle
    assert m.step((IDLE, N))[1] == X  # t=15: r has no edge
    assert m.step((N, read(2)))[1] == known(0x3C)  # t=20: nothing written in (10, 20)


# -- power ----------------------------------------------------------------------------------


def test_sleep_keeps_contents_ignores_accesses_and_wakes_after_wake_cycles() -> None:
    # latency 1, sleep_read_data "zero", wake_cycles 1; P(k) = the pins during cycle k.
    m = single({"sleep": "slp", "wake_cycles": 1, "sleep_read_data": "zero"}, read_latency=1)
    on, slp = Power.ON, Power.SLEEP
    assert m.step((write(5, 0x42),), on) == (X,)  # 0: write 5 = 42
    assert m.step((read(5),), on) == (X,)  # 1: read 5 (rdw unknown shown for cycle 0)
    assert m.step((write(5, 0x99),), slp) == (known(0x42),)  # 2: edge samples sleep: write ignored;
    # the read data due in this cycle (the read of cycle 1) is still promised (effect "edge")
    assert m.step((read(5),), slp) == (known(0),)  # 3: due after an asleep edge: sleep_read_data zero
    assert m.step((read(5),), on) == (X,)  # 4: pins deasserted; edge 4 is the wake-up edge
    # (wake_cycles = 1): its read is not made and nothing is checked on it
    assert m.step((read(5),), on) == (X,)  # 5: shows the wake edge's (absent) result
    assert m.step((IDLE,), on) == (known(0x42),)  # 6: the read of cycle 5: contents kept, 99 ignored


def test_reads_in_the_pipeline_are_lost_and_data_stays_unknown_until_a_read_after_wake() -> None:
    m = single({"sleep": "slp", "wake_cycles": 0}, read_latency=2, idle_read_data="keep")
    on, slp = Power.ON, Power.SLEEP
    m.step((write(1, 0x10),), on)  # 0
    m.step((read(1),), on)  # 1: result due at edge 3
    m.step((IDLE,), slp)  # 2: sleep sampled: the read of 1 is lost
    assert m.step((IDLE,), on) == (X,)  # 3: due after an asleep edge: sleep_read_data unknown
    assert m.step((IDLE,), on) == (X,)  # 4: pipeline lost, nothing held ("keep" holds nothing)
    assert m.step((read(1),), on) == (X,)  # 5
    assert m.step((IDLE,), on) == (X,)  # 6
    assert m.step((IDLE,), on) == (known(0x10),)  # 7: the first read after wake completes
    assert m.step((IDLE,), on) == (known(0x10),)  # 8: held from now on


def test_shutdown_dominates_and_loses_every_word() -> None:
    assert Power.of(sleep=True, shutdown=True) == Power.SHUTDOWN
    m = single({"sleep": "slp", "shutdown": "sd", "wake_cycles": 0}, read_latency=0)
    m.step((write(7, 0x7E),), Power.ON)
    assert m.step((read(7),), Power.ON) == (known(0x7E),)
    m.step((IDLE,), Power.SHUTDOWN)
    m.step((IDLE,), Power.ON)  # due after the shutdown edge: sleep_read_data unknown
    assert m.step((read(7),), Power.ON) == (X,)  # contents lost


def test_sleep_read_data_keep_holds_what_the_port_showed() -> None:
    m = single({"sleep": "slp", "sleep_read_data": "keep", "wake_cycles": 1}, read_latency=1)
    m.step((write(2, 0x24),), Power.ON)
    m.step((read(2),), Power.ON)
    assert m.step((IDLE,), Power.SLEEP) == (known(0x24),)  # due before the asleep edge
    assert m.step((IDLE,), Power.SLEEP) == (known(0x24),)  # kept
    assert m.step((IDLE,), Power.SLEEP) == (known(0x24),)


def test_effect_immediate_makes_the_cycle_where_a_pin_changes_unknown() -> None:
    m = single({"sleep": "slp", "sleep_read_data": "zero", "effect": "immediate"}, read_latency=1)
    m.step((write(2, 0x24),), Power.ON)
    m.step((read(2),), Power.ON)
    assert m.step((IDLE,), Power.SLEEP) == (X,)  # pin rose during this cycle: not promised
    assert m.step((IDLE,), Power.SLEEP) == (known(0),)  # steady sleep
    assert m.step((IDLE,), Power.ON) == (X,)  # pin fell during this cycle (and a wake edge)


def test_power_state_needs_its_pin() -> None:
    m = single({"sleep": "slp"}, read_latency=1)
    with pytest.raises(InvalidOperation, match="shutdown pin"):
        m.step((IDLE,), Power.SHUTDOWN)
    with pytest.raises(ValueError, match="needs as many power states"):
        Trace(((IDLE,),), (Power.ON, Power.ON))


# -- lanes, any-lane writes, out_of_range ---------------------------------------------------


def test_lane_map_writes_uneven_lanes() -> None:
    m = Model(Contract.simple(4, 33, lanes=[8, 8, 8, 8, 1], read_latency=0, initial="zero"))
    assert m.memory.lanes == 5 and m.memory.lane_bits(0b10000) == 1 << 32
    m.step((write(1, (1 << 33) - 1, 0b10001),))  # lane 4 (the spare bit) and lane 0
    assert m.step((read(1),)) == (known((1 << 32) | 0xFF, 33),)


def test_any_lane_write_port_writes_when_a_lane_is_enabled_and_reads_otherwise() -> None:
    doc = {
        "memory": {"words": 4, "width": 16, "lane_width": 8, "read_latency": 0, "initial": "zero"},
        "rtl": {"sources": ["x.v"], "top": "t"},
        "port": [
            {
                "name": "a",
                "role": "readwrite",
                "clock": "clk",
                "address": "ad",
                "write_data": "wd",
                "lane_enable": "be",
                "read_data": "rd",
            }
        ],
    }
    c = contract_from_dict(doc)
    assert c.ports[0].any_lane_write
    m = Model(c)
    m.step((write(2, 0xABCD, 0b10),))  # upper lane only
    assert m.step((read(2),)) == (known(0xAB00, 16),)
    with pytest.raises(InvalidOperation, match="no lane enabled is a read"):
        m.step((write(2, 0x1234, 0),))


def test_out_of_range_ignore_and_wrap() -> None:
    ignore = Model(Contract.simple(6, 8, read_latency=0, initial="zero", out_of_range="ignore"))
    ignore.step((write(6, 0xEE),))  # at words: changes nothing
    ignore.step((write(0x1F, 0xEE),))  # beyond the 3 address bits: changes nothing
    assert [ignore.step((read(a),))[0] for a in (0, 5, 6, 0x1F)] == [known(0), known(0), X, X]
    wrap = Model(Contract.simple(8, 8, read_latency=0, initial="zero", out_of_range="wrap"))
    wrap.step((write(8 + 3, 0x33),))  # address 11 decodes to word 3
    assert wrap.step((read(3),)) == (known(0x33),)
    assert wrap.step((read(0x103),)) == (known(0x33),)
    unchecked = Model(Contract.simple(8, 8, read_latency=0))
    with pytest.raises(InvalidOperation, match="does not fit 3 address bits"):
        unchecked.step((read(8),))


@pytest.mark.parametrize("effect", ["edge", "immediate"])
@pytest.mark.parametrize("episode", [False, True])
def test_a_power_episode_between_a_slow_port_s_edges_voids_its_next_read(effect: str, episode: bool) -> None:
    # wclk 5 ns: ticks 0, 5, 10, 15, 20; rclk 20 ns: ticks 0 and 20. Latency 0, wake_cycles 0.
    # Sleep sampled only at t=10 (by wclk): rclk never samples it, but the macro slept inside r's
    # cycle (0, 20], so r's read at t=20 promises nothing, whatever the effect.
    m = two_clocks(
        {"read_latency": 0},
        [{"name": "wclk", "period": 5.0}, {"name": "rclk", "period": 20.0}],
        {"sleep": "slp", "wake_cycles": 0, "effect": effect},
    )
    m.step((write(1, 0x5A), IDLE))  # t=0
    m.step((IDLE, N))  # t=5
    m.step((IDLE, N), Power.SLEEP if episode else Power.ON)  # t=10
    m.step((IDLE, N))  # t=15
    assert m.step((IDLE, read(1)))[1] == (X if episode else known(0x5A))  # t=20
