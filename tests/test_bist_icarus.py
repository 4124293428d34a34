"""The generated BIST engine in Icarus Verilog: its memory operations equal the Python expansion
(``memcheck patterns``) cycle by cycle, it finds an injected stuck-at bit where the stream says, and
through the contract adapter it passes the conforming example wrappers and fails the buggy ones at
the operation ``memcheck march run`` names.

Many engines share one compile and one simulation (``run_units``). The default run covers every
library algorithm x orders {linear, complement, gray, lfsr} x backgrounds {solid, standard} on 16x1
and 37x8 (non power of two), and on 256x32 every algorithm once with the orders and backgrounds
rotated (each order 3-4 times, each background 7 times). The full 256x32 cross product is marked
``slow`` and runs with ``MEMCHECK_SLOW=1``.
"""

from __future__ import annotations

import os
import tomllib
from pathlib import Path

import numpy as np
import pytest

from memcheck.bist.adapter import choose_port
from memcheck.bist.microcode import EnginePlan, plan_engine
from memcheck.bist.verify import UnitResult, run_on_wrapper, run_units, verify_engine
from memcheck.contract import Contract, PortSpec, load_contract
from memcheck.examples import examples_dir
from memcheck.march import algorithm_names, limbs_to_int
from memcheck.ops import OpKind

pytestmark = pytest.mark.icarus

ORDERS = ("linear", "complement", "gray", "lfsr")
BACKGROUNDS = ("solid", "standard")
EXAMPLES = examples_dir()
SEED = 11  # LFSR start state for every lfsr engine here (printed in failures via the plan)


def _plans(words: int, width: int, combos: list[tuple[str, str, str]], **kw: object) -> list[tuple[EnginePlan, str]]:
    out = []
    for i, (alg, order, bg) in enumerate(combos):
        plan = plan_engine(alg, words, width, order=order, backgrounds=bg, seed=SEED, module=f"e{i}", **kw)  # type: ignore[arg-type]
        out.append((plan, f"u{i}"))
    return out


def _assert_equal(units: list[tuple[EnginePlan, str]], results: dict[str, UnitResult]) -> None:
    bad = []
    for plan, name in units:
        r = results[name]
        if r.verdict != "PASS" or int(r.values["cycles"]) != plan.cycles():
            bad.append(f"{plan.test.name} order {plan.stream.order.kind} backgrounds {len(plan.backgrounds)}: {r}")
    assert not bad, "\n".join(bad)


@pytest.mark.parametrize("background", BACKGROUNDS)
@pytest.mark.parametrize("geometry", [(16, 1), (37, 8)])
def test_every_algorithm_order_and_background_equals_the_python_stream(
    geometry: tuple[int, int], background: str, tmp_path: Path
) -> None:
    combos = [(a, o, background) for a in algorithm_names() for o in ORDERS]
    units = _plans(*geometry, combos, pause_cycles=3)
    _assert_equal(units, run_units(units, tmp_path))


def test_256x32_every_algorithm_with_rotated_orders_and_backgrounds(tmp_path: Path) -> None:
    combos = [
        (a, ORDERS[i % 4], BACKGROUNDS[i % 2 if i % 4 < 2 else 1 - i % 2]) for i, a in enumerate(algorithm_names())
    ]
    assert {o for _, o, _ in combos} == set(ORDERS) and {b for _, _, b in combos} == set(BACKGROUNDS)
    units = _plans(256, 32, combos, pause_cycles=2)
    _assert_equal(units, run_units(units, tmp_path))


@pytest.mark.slow
@pytest.mark.skipif(not os.environ.get("MEMCHECK_SLOW"), reason="full 256x32 cross product: set MEMCHECK_SLOW=1")
@pytest.mark.parametrize("background", BACKGROUNDS)
def test_256x32_full_cross_product(background: str, tmp_path: Path) -> None:
    combos = [(a, o, background) for a in algorithm_names() for o in ORDERS]
    units = _plans(256, 32, combos, pause_cycles=2)
    _assert_equal(units, run_units(units, tmp_path))


def test_latencies_layouts_stripes_and_pauses(tmp_path: Path) -> None:
    units = []
    for i, lat in enumerate((0, 2, 3, 4)):
        p = plan_engine(
            "March G",
            37,
            8,
            backgrounds="solid",
            order=ORDERS[i],
            seed=5,
            pause_cycles=i,
            read_latency=lat,
            module=f"l{i}",
        )
        units.append((p, f"lat{i}"))
    layouts = [("row-fast", (8, 4)), ("col-fast", (16, 2)), ("gray", (4, 8)), ("lfsr", (2, 16))]
    for i, (order, layout) in enumerate(layouts):
        bgs = "checkerboard,row-stripe,col-stripe,std2,0x5a"
        p = plan_engine("March SS", 32, 8, order=order, layout=layout, backgrounds=bgs, seed=9, module=f"y{i}")
        units.append((p, f"lay{i}"))
    p = plan_engine("March C-", 37, 8, backgrounds="checkerboard,col-stripe", any_order="down", module="cb")
    units.append((p, "checker"))
    _assert_equal(units, run_units(units, tmp_path))


@pytest.mark.parametrize("order", ["linear", "lfsr"])
@pytest.mark.parametrize("value", [0, 1])
def test_stuck_at_bit_is_reported_where_the_stream_first_reads_the_other_value(
    order: str, value: int, tmp_path: Path
) -> None:
    addr, bit = 29, 5
    plan = plan_engine("March C-", 37, 8, order=order, seed=SEED, backgrounds="standard")
    args = [f"+stuck_addr={addr}", f"+stuck_bit={bit}", f"+stuck_value={value}"]
    r = run_units([(plan, "u")], tmp_path, plusargs=args)["u"]
    # Oracle: the Python stream's first read of that address expecting the other value at that bit.
    s = plan.stream.collect()
    expected = np.array([limbs_to_int(w) for w in s.expected])
    hit = (s.op == OpKind.READ) & (s.address == addr) & (((expected >> bit) & 1) != value)
    first = int(np.flatnonzero(hit)[0])
    assert r.verdict == "FAIL", r
    assert r.int_value("fail_addr") == addr
    assert r.int_value("fail_element") == s.element[first]
    assert r.int_value("fail_op") == s.step[first]
    assert r.int_value("fail_background") == s.background[first]
    assert r.int_value("fail_expected") == expected[first]
    assert r.int_value("fail_actual") == expected[first] ^ (1 << bit)
    assert int(r.values["cycles"]) == plan.cycles()  # the run goes on to the end; the first failure is held


def test_verify_engine_reports_equal_and_renders() -> None:
    res = verify_engine(plan_engine("MATS+", 16, 4, backgrounds="solid", order="complement"))
    assert res.equal, res.render()
    assert "equal" in res.render()


def _examples(expect: str) -> list[str]:
    index = tomllib.loads((EXAMPLES / "index.toml").read_text())
    out = []
    for ex in index["example"]:
        contract = load_contract(EXAMPLES / ex["contract"])
        if ex["expect"] == expect and any(p.role == "readwrite" for p in contract.ports):
            out.append(ex["name"])
    return out


def _on_wrapper(name: str, work: Path) -> tuple[Contract, PortSpec, UnitResult]:
    """March C- (solid background) through the adapter on the example's first readwrite port."""
    contract = load_contract(EXAMPLES / name / "contract.toml")
    port = choose_port(contract, None)
    m = contract.memory
    plan = plan_engine("March C-", m.words, m.width, backgrounds="solid", read_latency=m.read_latency)
    return contract, port, run_on_wrapper(plan, contract, port, work)


@pytest.mark.parametrize("name", _examples("pass"))
def test_engine_through_adapter_passes_conforming_wrappers_in_the_stated_cycles(name: str, tmp_path: Path) -> None:
    contract, _, r = _on_wrapper(name, tmp_path)
    m = contract.memory
    assert r.verdict == "PASS", r
    # March C- is 10n (van de Goor 1993; docs/march.md): 10 x words operations + latency + 1
    assert int(r.values["cycles"]) == 10 * m.words + m.read_latency + 1


@pytest.mark.parametrize("name", _examples("fail"))
def test_engine_on_buggy_wrappers_agrees_with_march_run(name: str, tmp_path: Path) -> None:
    from memcheck.sim import run_march

    contract, port, r = _on_wrapper(name, tmp_path / "bist")
    ref = run_march(contract, "March C-", backgrounds="solid", port=port.name, out_dir=tmp_path / "run", waveform=False)
    if ref.passed:
        assert r.verdict == "PASS", r
        return
    f = ref.failure
    assert f is not None and f.step is not None
    assert r.verdict == "FAIL", r
    got = (r.int_value("fail_addr"), r.int_value("fail_element"), r.int_value("fail_op"))
    assert got == (f.step.op.address, f.step.element, f.step.step)
    assert r.int_value("fail_background") == f.step.background
