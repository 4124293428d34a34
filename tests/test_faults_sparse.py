"""The sampled path on a compact memory (memcheck.faults.sparse) gives exactly the fast engine's
results on the whole memory: property test over orders, layouts, backgrounds, tests, every class and both
sampled universes (all and neighbours).
The fast engine itself is checked against the reference engine in tests/test_faults_engines.py."""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings
from hypothesis import strategies as st

from memcheck.faults import Arrangement
from memcheck.faults.fast import simulate
from memcheck.faults.sampling import sample_class
from memcheck.faults.sparse import addresses_at, positions_of, simulate_sparse
from memcheck.faults.universe import CLASSES
from memcheck.march.library import resolve_test
from memcheck.march.orders import AddressOrder

LAYOUTS = {8: (4, 2), 16: (4, 4), 12: (3, 4), 32: (8, 4)}


@st.composite
def setups(draw: st.DrawFn) -> Arrangement:
    words = draw(st.sampled_from(sorted(LAYOUTS)))
    width = draw(st.sampled_from([1, 2, 4]))
    order = draw(st.sampled_from(["linear", "complement", "row-fast", "col-fast", "gray", "lfsr"]))
    bgs = draw(st.sampled_from([None, "solid", "solid,checkerboard", "standard,row-stripe", "col-stripe", "standard"]))
    return Arrangement(
        words,
        width,
        layout=LAYOUTS[words],
        order=order,
        backgrounds=bgs,
        seed=draw(st.integers(0, 50)),
        any_order=draw(st.sampled_from(["up", "down"])),
    )


@settings(max_examples=25, deadline=None)
@given(
    setup=setups(),
    name=st.sampled_from(["MATS+", "March C-", "March SS", "March G", "March RAW"]),
    seed=st.integers(0, 1000),
    kind=st.sampled_from(["all", "neighbours"]),
)
def test_compact_memory_gives_the_whole_memory_results(setup: Arrangement, name: str, seed: int, kind: str) -> None:
    test = resolve_test(name)
    faults = [f for cls in CLASSES for f in sample_class(cls, setup, 5, seed, kind)]
    assert simulate_sparse(test, faults, setup, chunk=7) == simulate(test, faults, setup)


@settings(max_examples=40, deadline=None)
@given(setup=setups())
def test_positions_and_addresses_invert_the_walk(setup: Arrangement) -> None:
    order = AddressOrder(setup.order, setup.words, setup.layout, setup.seed)
    up = order.up()
    assert np.array_equal(addresses_at(order, np.arange(setup.words)), up)
    assert np.array_equal(positions_of(order, up), np.arange(setup.words))
