"""Cover points: which are listed per contract, hand-worked hit counts, an independent brute-force
count, directed examples, and the coverage record and table (no simulator needed)."""

from __future__ import annotations

import json
import tomllib
from collections.abc import Callable
from dataclasses import replace

import pytest
from hypothesis import given, settings

from memcheck.contract import Contract, PortSpec, load_contract
from memcheck.contract.loading import build_memory
from memcheck.contract.power import PowerSpec
from memcheck.cover import (
    Counts,
    Coverage,
    CoverPoint,
    arrays_of_cycles,
    cover_points,
    coverage_of,
    directed_cycles,
    measure,
)
from memcheck.examples import examples_dir
from memcheck.model import Model
from memcheck.ops import IDLE, Cycle, OpKind, Power, Trace, read, write
from memcheck.report.coverage_text import render_coverage
from memcheck.strategies import traces


def one_port() -> Contract:
    # 8 words x 8 bits in 4 lanes of 2 bits, latency 1, read_during_write left unknown.
    return Contract.simple(8, 8, lane_width=2)


def two_port(**memory: object) -> Contract:
    spec = build_memory(
        {"words": 8, "width": 8, "lane_width": 4, "collision": "unknown", "write_collision": "first", **memory}, "t"
    )

    def port(name: str) -> PortSpec:
        return PortSpec(
            name,
            "readwrite",
            "clk",
            f"addr_{name}",
            f"en_{name}",
            f"we_{name}",
            f"wd_{name}",
            f"be_{name}",
            f"rd_{name}",
        )

    return Contract(memory=spec, ports=(port("p"), port("q")))


def hits_of(c: Contract, cycles: list[Cycle], power: list[Power] | None = None) -> dict[str, int]:
    cov = coverage_of(c, measure(c, arrays_of_cycles(c, cycles, power or ())))
    return {r.point.key: r.hits for r in cov.points}


# -- which points are listed -------------------------------------------------------------------


def test_a_one_port_memory_lists_no_pair_point_and_no_point_its_keys_rule_out() -> None:
    keys = [p.key for p in cover_points(one_port())]
    assert not [k for k in keys if "collision" in k or "->" in k or "+" in k]
    assert not [k for k in keys if "beyond" in k or "reset" in k or "power" in k or "wake" in k]
    assert len(keys) == len(set(keys)) == 18


def test_a_pair_without_lanes_lists_no_partial_collision_and_read_ports_no_write_points() -> None:
    c = load_contract(examples_dir() / "line_buffer" / "contract.toml")
    keys = {p.key for p in cover_points(c)}
    assert "wr->rd:collision.read_write.full" in keys
    assert not [k for k in keys if k.endswith(".partial") or "collision.write_write" in k or "lanes" in k]
    assert "rd:op.write" not in keys and "rd:op.idle" not in keys  # a read port without enable
    assert "rd->wr:collision.read_write.full" not in keys  # the read port cannot write


def test_ports_on_different_clock_edges_list_no_pair_point() -> None:
    from memcheck.contract import ClockSpec

    c = replace(two_port(), ports=(two_port().ports[0], replace(two_port().ports[1], clock="clk_b")))
    c = replace(c, clocks=(ClockSpec("clk", period=10), ClockSpec("clk_b", period=15)))
    assert not c.lockstep
    assert not [p for p in cover_points(c) if "->" in p.key or "+" in p.key]


def test_checkable_follows_the_contract_keys() -> None:
    unknown = {p.key: p.checked for p in cover_points(two_port())}
    assert unknown["p->q:collision.read_write.full"] == "no"
    assert unknown["p->q:collision.read_write.partial"] == "partly"
    assert unknown["p+q:collision.write_write.full"] == "yes"
    assert unknown["p:read_during_write"] == "no"
    known = {p.key: p.checked for p in cover_points(two_port(collision="old", read_during_write="new"))}
    assert known["p->q:collision.read_write.full"] == "yes" and known["p:read_during_write"] == "yes"
    ignore = {p.key: p.checked for p in cover_points(one_port().with_memory(out_of_range="ignore"))}
    assert ignore["a:address.beyond.read"] == "no" and ignore["a:address.beyond.write"] == "yes"


# -- hand-worked counts ------------------------------------------------------------------------


def test_hand_worked_one_port_trace() -> None:
    c = one_port()
    cycles: list[Cycle] = [
        (write(0, 0x11),),  # every lane
        (read(0),),  # 1 cycle after the write of word 0
        (write(7, 0x22, 0b0001),),  # one lane
        (IDLE,),
        (read(7),),  # 2 cycles after the write of word 7
        (write(5, 0x33, 0b0110),),  # two of four lanes
        (write(5, 0, 0),),  # no lane
        (read(3),),
    ]
    h = hits_of(c, cycles)
    assert (h["a:op.read"], h["a:op.write"], h["a:op.idle"]) == (3, 4, 1)
    assert (h["a:lanes.all"], h["a:lanes.none"], h["a:lanes.single"], h["a:lanes.partial"]) == (1, 1, 1, 1)
    assert h["a:lanes.each"] == 1  # lanes 0..2 written twice, lane 3 once (by the full write)
    # Accesses at 0, 0, 7, 7, 5, 5, 3: bit 0 is 0 twice, bit 1 is 1 three times, bit 2 is 0 three times...
    assert h["a:address.bits"] == 2
    assert (h["a:address.first"], h["a:address.last"]) == (2, 2)
    assert h["a:read_during_write"] == 4
    assert (h["a:after_write.1"], h["a:after_write.2"]) == (1, 1)
    b2b = [h[f"a:back_to_back.{k}"] for k in ("read_read", "read_write", "write_read", "write_write")]
    assert b2b == [0, 2, 2, 1]
    cov = coverage_of(c, measure(c, arrays_of_cycles(c, cycles)))
    assert [p.point.key for p in cov.holes] == ["a:back_to_back.read_read"]
    assert cov.summary() == "17 of 18 cover points hit"


def test_hand_worked_two_port_collisions() -> None:
    c = two_port()
    cycles: list[Cycle] = [
        (write(1, 0xAA), read(1)),  # q reads what p writes, every lane
        (write(2, 0x0B, 0b01), write(2, 0xCC)),  # both write word 2, p one lane only
        (read(2), write(2, 0xD0, 0b10)),  # p reads what q writes, one lane; q wrote word 2 a cycle ago
        (write(3, 1), write(3, 2)),  # both write word 3, every lane
        (IDLE, read(3)),  # q reads word 3 one cycle after both wrote it
    ]
    h = hits_of(c, cycles)
    assert h["p->q:collision.read_write.full"] == 1 and h["p->q:collision.read_write.partial"] == 0
    assert h["q->p:collision.read_write.full"] == 0 and h["q->p:collision.read_write.partial"] == 1
    assert h["p+q:collision.write_write.full"] == 1 and h["p+q:collision.write_write.partial"] == 1
    assert h["q->p:after_write.1"] == 1 and h["p->q:after_write.1"] == 1
    assert h["p->q:after_write.2"] == 0 and h["q->p:after_write.2"] == 0
    assert h["p:after_write.1"] == 1 and h["q:after_write.1"] == 1


def test_a_reset_counts_once_it_comes_after_accesses_and_before_more() -> None:
    c = one_port()
    access = measure(c, arrays_of_cycles(c, [(read(1),)]))
    quiet = measure(c, arrays_of_cycles(c, [(IDLE,)]))
    key = "memory:reset.mid_run"
    assert Counts.empty(c).after_reset().then(access).hits.get(key, 0) == 0  # the first reset
    twice = Counts.empty(c).then(access).after_reset().then(quiet).then(access).after_reset().after_reset()
    assert twice.hits[key] == 1 and twice.reset_pending


def test_power_episodes_and_accesses_right_after_wake_up() -> None:
    c = replace(one_port(), power=PowerSpec(sleep="slp", shutdown="sd", wake_cycles=1))
    keys = {p.key for p in cover_points(c)}
    assert {"memory:power.sleep", "memory:power.shutdown", "a:wake.read", "a:wake.write"} <= keys
    on, sl, sd = Power.ON, Power.SLEEP, Power.SHUTDOWN
    power = [on, sl, sl, on, on, on, sd, on, on, on, on]
    cycles: list[Cycle] = [(IDLE,)] * 11
    cycles[4] = (read(1),)  # the episode ends at 3, one wake-up edge, so 4 is the first that accesses
    cycles[8] = (write(1, 5),)  # likewise after the shutdown ending at 7
    cycles[10] = (read(1),)  # later: not right after wake-up
    h = hits_of(c, cycles, power)
    assert (h["memory:power.sleep"], h["memory:power.shutdown"]) == (1, 1)
    assert (h["a:wake.read"], h["a:wake.write"]) == (1, 1)


# -- an independent second count ---------------------------------------------------------------


def _naive_after_write(c: Contract, cycles: list[Cycle], t: int, i: int, add: Callable[[str], None]) -> None:
    op = cycles[t][i]
    n = c.ports[i].name
    for d in range(1, c.memory.read_latency + 2):
        if t < d or op.kind != OpKind.READ or op.address >= c.memory.words:
            continue
        for j, before in enumerate(cycles[t - d]):
            if before.kind == OpKind.WRITE and before.address == op.address:
                add(f"{n}:after_write.{d}" if i == j else f"{c.ports[j].name}->{n}:after_write.{d}")


def _naive_collisions(c: Contract, cyc: Cycle, i: int, add: Callable[[str], None]) -> None:
    m = c.memory
    op = cyc[i]
    if op.kind != OpKind.READ or op.address >= m.words:
        return
    for j, other in enumerate(cyc):
        lanes = m.all_lanes if other.lanes is None else other.lanes
        if j != i and other.kind == OpKind.WRITE and lanes and op.address == other.address:
            full = "full" if lanes == m.all_lanes else "partial"
            add(f"{c.ports[j].name}->{c.ports[i].name}:collision.read_write.{full}")


def _naive(c: Contract, cycles: list[Cycle]) -> dict[str, int]:
    """Plain loops over the cycles, written apart from the numpy counting."""
    out: dict[str, int] = {}

    def add(key: str) -> None:
        out[key] = out.get(key, 0) + 1

    for t, cyc in enumerate(cycles):
        for i, op in enumerate(cyc):
            add(f"{c.ports[i].name}:op.{op.kind.label}")
            if op.kind == OpKind.WRITE and op.lanes in (None, c.memory.all_lanes):
                add(f"{c.ports[i].name}:lanes.all")
            _naive_after_write(c, cycles, t, i, add)
            _naive_collisions(c, cyc, i, add)
    return out


@settings(max_examples=60, deadline=None)
@given(traces(two_port(), max_blocks=8))
def test_numpy_counts_agree_with_plain_loops(trace: Trace) -> None:
    c = two_port()
    h = hits_of(c, list(trace.cycles))
    naive = _naive(c, list(trace.cycles))
    for key, n in h.items():
        if any(s in key for s in ("op.", "lanes.all", "after_write", "collision.read_write")):
            assert n == naive.get(key, 0), key


# -- directed examples -------------------------------------------------------------------------


def _example_contracts() -> list[tuple[str, Contract]]:
    root = examples_dir()
    index = tomllib.loads((root / "index.toml").read_text(encoding="utf-8"))["example"]
    return [(e["name"], load_contract(root / e["contract"])) for e in index] + [
        ("one_port", one_port()),
        ("two_port", two_port()),
        ("out_of_range", one_port().with_memory(out_of_range="ignore")),
    ]


@pytest.mark.parametrize(("name", "c"), _example_contracts(), ids=[n for n, _ in _example_contracts()])
def test_each_directed_example_is_valid_and_hits_its_point(name: str, c: Contract) -> None:
    if not c.lockstep or c.power is not None:
        # Not built yet for several clocks or power pins (docs/check.md): none is offered, never a wrong one.
        assert all(directed_cycles(c, point) is None for point in cover_points(c))
        return
    for point in cover_points(c):
        cycles = directed_cycles(c, point)
        if point.kind == "reset.mid_run":
            assert cycles is None  # the simulator side runs a reset for it
            continue
        assert cycles is not None, point.key
        Model(c).run(cycles)  # raises InvalidOperation on anything the contract does not allow
        assert hits_of(c, cycles)[point.key] > 0, (name, point.key)


# -- the record and the table ------------------------------------------------------------------


def test_coverage_round_trips_through_json_and_the_table_shows_holes_first() -> None:
    c = two_port()
    cov = coverage_of(c, measure(c, arrays_of_cycles(c, [(write(1, 3), read(1)), (IDLE, IDLE)])))
    again = Coverage.from_json(json.loads(json.dumps(cov.to_json())))
    assert again.to_json() == cov.to_json()
    assert cov.to_json()["points"][0]["hits"] == 0 and cov.to_json()["hit"] == cov.hit
    lines = render_coverage(cov).splitlines()
    assert lines[0] == f"Coverage: {cov.summary()} (holes first)"
    first_hit = next(k for k, line in enumerate(lines[2:]) if line.split()[0] != "HOLE")
    assert all(line.split()[0] != "HOLE" for line in lines[2 + first_hit :])
    assert "exercised only" in render_coverage(cov)  # collision 'unknown': exercised, not checked


def test_aggregated_points_name_what_was_never_seen() -> None:
    c = one_port()
    cov = coverage_of(c, measure(c, arrays_of_cycles(c, [(write(4, 1, 0b0001),)])))
    by_key = {r.point.key: r for r in cov.points}
    assert by_key["a:address.bits"].missing == ("bit 0 at 1", "bit 1 at 1", "bit 2 at 0")
    assert by_key["a:lanes.each"].missing == ("lane 1", "lane 2", "lane 3")
    assert isinstance(by_key["a:op.read"].point, CoverPoint)


def test_the_check_report_shows_the_figure_the_table_and_the_json_section() -> None:
    from memcheck.records import CheckResult, CheckVerdict, PhaseResult
    from memcheck.report import render_report, report_dict

    c = one_port()
    cov = coverage_of(c, measure(c, arrays_of_cycles(c, [(write(0, 1),), (read(0),)])))
    result = CheckResult(
        verdict=CheckVerdict.PASS,
        contract=c,
        contract_path=None,
        seed=1,
        phases=(PhaseResult("property", "pass", 2, 2, 0.1),),
        coverage=cov,
    )
    assert result.summary().splitlines()[0].endswith(f"conforms; {cov.hit} of {cov.total} cover points hit")
    text = render_report(result)
    assert render_coverage(cov) in text and text.index("HOLE") < text.index("Verdicts cover")
    assert report_dict(result)["coverage"] == cov.to_json()
    assert not result.covered and cov.holes
