"""The example wrappers that need several clocks, a sample point, power pins or a lane map, run in a
plain Verilog testbench (tests/plain_tb.py, independent of memcheck's harness) and compared bit for
bit with the reference model: conforming wrappers show no difference over random traces; each buggy
twin differs on a short hand-worked trace on which its twin does not."""

from __future__ import annotations

import random
import tomllib
from pathlib import Path
from typing import Any

import pytest

from memcheck.contract import Contract, load_contract, timeline
from memcheck.examples import examples_dir
from memcheck.ops import NO_EDGE, OpKind, PortOp, Power, Trace, idle, read, write
from tests import plain_tb

pytestmark = pytest.mark.icarus

ROOT = examples_dir()
INDEX: list[dict[str, Any]] = tomllib.loads((ROOT / "index.toml").read_text())["example"]
NEW = ("tile_exchange", "coeff_store_slow", "retention_buffer", "flit_store")


def contract_of(name: str) -> Contract:
    return load_contract(ROOT / name / "contract.toml")


def _op(c: Contract, index: int, rng: random.Random, hot: list[int]) -> PortOp:
    p = c.ports[index]
    m = c.memory
    kinds = [k for k, ok in ((OpKind.IDLE, p.can_idle), (OpKind.READ, p.can_read), (OpKind.WRITE, p.can_write)) if ok]
    kind = rng.choice(kinds)
    address = rng.choice(hot) if rng.random() < 0.8 else rng.randrange(m.words)
    data = rng.getrandbits(m.width)
    if kind == OpKind.IDLE:
        return idle(rng.randrange(m.words), data) if rng.random() < 0.5 else PortOp()
    if kind == OpKind.READ:
        return read(address)
    lanes = None
    if p.lane_enable is not None and rng.random() < 0.6:
        lanes = rng.randrange(1, 1 << m.lanes)
    return write(address, data, lanes)


def _power(c: Contract, rng: random.Random, count: int) -> list[Power]:
    if c.power is None:
        return []
    out: list[Power] = []
    while len(out) < count:
        awake = rng.randrange(2, 12)
        out += [Power.ON] * awake
        state = Power.SHUTDOWN if rng.random() < 0.3 else Power.SLEEP
        out += [state] * rng.randrange(1, 4)
    return out[:count]


def random_trace(c: Contract, count: int, seed: int) -> Trace:
    """``count`` ticks of random operations on a pool of three hot addresses (dense collisions), with
    random sleep and shutdown episodes when the contract has power pins."""
    rng = random.Random(seed)
    hot = [rng.randrange(c.memory.words) for _ in range(3)]
    cycles = []
    for tick in timeline(c.port_clocks, count=count):
        cycles.append(tuple(_op(c, i, rng, hot) if p.clock in tick.clocks else NO_EDGE for i, p in enumerate(c.ports)))
    return Trace.of(cycles, _power(c, rng, count))


@pytest.mark.parametrize("name", NEW)
@pytest.mark.parametrize("seed", [1, 2])
def test_conforming_new_example_matches_the_model(name: str, seed: int, tmp_path: Path) -> None:
    c = contract_of(name)
    trace = random_trace(c, 600, seed)
    samples = plain_tb.run(c, trace, tmp_path)
    assert len(samples) >= 300
    assert plain_tb.compare(c, trace, samples) == []


def test_index_lists_the_new_examples() -> None:
    names = {e["name"] for e in INDEX}
    assert set(NEW) <= names
    assert {"tile_exchange_bypass_bug", "flit_store_lane_bug"} <= names


def test_retention_buffer_hand_worked_power_trace(tmp_path: Path) -> None:
    """Sleep keeps the word and shows zeros; the wake-up edge makes no access; shutdown loses the word.
    Expected values worked by hand from docs/contract.md "Power" (the model and the RTL both hold them)."""
    c = contract_of("retention_buffer")
    on, slp, sd = Power.ON, Power.SLEEP, Power.SHUTDOWN
    steps = [
        (write(5, 0x1234), on, None),  # 0: never read yet
        (read(5), on, None),  # 1: the write cycle keeps the (unknown) read data
        (PortOp(), slp, 0x1234),  # 2: the read of cycle 1, still promised at the edge that samples sleep
        (PortOp(), slp, 0),  # 3: asleep: zero
        (PortOp(), on, None),  # 4: wake-up edge: the data it samples is not checked
        (read(5), on, None),  # 5: after wake-up, unknown until a read completes
        (PortOp(), on, 0x1234),  # 6: retained through sleep
        (PortOp(), sd, 0x1234),  # 7: held until the shutdown edge
        (PortOp(), on, None),  # 8: wake-up edge after shutdown
        (read(5), on, None),  # 9
        (PortOp(), on, None),  # 10: the word was lost
    ]
    trace = Trace.of([(op,) for op, _, _ in steps], [p for _, p, _ in steps])
    from memcheck.model import Model

    got = Model(c).run(trace.cycles, trace.power)
    for k, (_, _, want) in enumerate(steps):
        e = got[k][0]
        if want is None:
            assert e.known == 0, k
        else:
            assert (e.value, e.known) == (want, 0xFFFF), k
    samples = plain_tb.run(c, trace, tmp_path)
    assert plain_tb.compare(c, trace, samples) == []
    assert [s.value for s in samples if s.tick in (2, 3, 6)] == [0x1234, 0, 0x1234]


def lanes_word(widths: list[int], values: list[int]) -> int:
    """One word from per-lane values, lane 0 in the least significant bits."""
    word, shift = 0, 0
    for w, v in zip(widths, values, strict=True):
        assert v < 1 << w
        word |= v << shift
        shift += w
    return word


FLIT = lanes_word([9] * 8 + [4], [0x07E, 0x1C3, 0x00F, 0x1E1, 0x033, 0x0CC, 0x155, 0x0AA, 0x5])

BUG_TRACES: dict[str, list[tuple[PortOp, ...]]] = {
    # ticks at 0 ns (sensor), 5 ns (compute), 10 ns (sensor), 20 ns (both): the compute read at 5 ns
    # must show the word written at 0 ns; the bypass shows the one the sensor writes only at 10 ns.
    "tile_exchange_bypass_bug": [
        (write(1, 0xC0C0C0C0), NO_EDGE),
        (NO_EDGE, read(1)),
        (write(1, 0xD0D0D0D0), NO_EDGE),
        (PortOp(), PortOp()),
    ],
    # write every lane, read back: lane 3 (bits 35:27) holds lane 2's bits
    "flit_store_lane_bug": [
        (write(0, FLIT),),
        (read(0),),
        (PortOp(),),
    ],
}


@pytest.mark.parametrize("name", sorted(BUG_TRACES))
def test_buggy_twin_differs_on_a_short_trace_and_its_twin_does_not(name: str, tmp_path: Path) -> None:
    twin = next(e["twin"] for e in INDEX if e["name"] == name)
    trace = Trace.of(BUG_TRACES[name])
    assert len(trace) <= 6
    buggy = plain_tb.check(contract_of(name), trace, tmp_path / "bug")
    assert buggy, f"{name}: the seeded bug did not show"
    assert plain_tb.check(contract_of(twin), trace, tmp_path / "twin") == []
