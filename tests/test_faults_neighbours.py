"""The neighbours universe counted from the layout (memcheck.faults.neighbours, memcheck.faults.lattice)
gives exactly the counts of the fully resolved memory (memcheck.faults.universe), and both equal a
brute-force count: every instance of the universe enumerated and simulated one by one (our own
check; the fast engine is held to the reference engine in tests/test_faults_engines.py)."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from memcheck.cli import main
from memcheck.faults import Arrangement
from memcheck.faults.budget import DEFAULT_MAX_MEMORY, estimate_coverage
from memcheck.faults.counted import CountSource, WholeCounts
from memcheck.faults.coverage import _resolve_examples, _tally_counted, coverage
from memcheck.faults.fast import simulate
from memcheck.faults.fast_stream import Plan
from memcheck.faults.lattice import (
    STEP_ORDERS,
    Band,
    BandCounter,
    Walk,
    _closed_counts,
    _complement_counts,
    _gray_counts,
    _step_first,
    _streamed_counts,
    gray_separable,
)
from memcheck.faults.neighbours import NeighbourCounts
from memcheck.faults.sampling import class_size, enumerate_class
from memcheck.faults.universe import CLASSES, Universe
from memcheck.march.library import resolve_test
from memcheck.march.notation import MarchTest
from memcheck.march.orders import AddressOrder
from tests.fault_strategies import march_tests

ORDERS = ["linear", "gray", "complement", "lfsr", "row-fast", "col-fast"]
BACKGROUNDS = [None, "solid", "checkerboard", "solid,row-stripe", "col-stripe,checkerboard", "standard,checkerboard"]
LIBRARY = ["MATS+", "March C-", "March SS", "March RAW", "March SR", "March G"]


@st.composite
def setups(draw: st.DrawFn, max_side: int = 9, max_width: int = 4) -> Arrangement:
    rows = draw(st.integers(1, max_side))
    cols = draw(st.integers(1, max_side))
    return Arrangement(
        rows * cols,
        draw(st.integers(1, max_width)),
        layout=(rows, cols),
        order=draw(st.sampled_from(ORDERS)),
        backgrounds=draw(st.sampled_from(BACKGROUNDS)),
        seed=draw(st.integers(0, 99)),
        any_order=draw(st.sampled_from(["up", "down"])),
    )


def _tables(src: CountSource) -> list[np.ndarray]:
    pt, wt, ct = src.pair_table(), src.word_pair_table(), src.cell_table()
    reps, counts = src.sof_contexts()
    pairs = [pt.relation, pt.scope, pt.code_a, pt.code_v, pt.count]
    words = [wt.relation, wt.class_x, wt.class_y, wt.count]
    return [*pairs, *words, ct.code, ct.count, reps, counts, src.words_per_class()]


def _counted(src: CountSource) -> tuple[object, object]:
    tally = _tally_counted(src, CLASSES)
    examples = _resolve_examples(src, tally)
    return tally.counts, {g: (r.fault, r.verdict, r.witness) for g, r in examples.items()}


def _test_of(data: st.DataObject, setup: Arrangement) -> MarchTest:
    if data.draw(st.booleans()):
        return resolve_test(data.draw(st.sampled_from(LIBRARY)))
    return data.draw(march_tests(leading_reads=False))


@settings(max_examples=60, deadline=None)
@given(setup=setups(), data=st.data())
def test_layout_counts_equal_the_whole_memory_counts(setup: Arrangement, data: st.DataObject) -> None:
    test = _test_of(data, setup)
    whole = WholeCounts(Plan.build(test, setup), "neighbours")
    lean = NeighbourCounts.build(test, setup)
    for a, b in zip(_tables(whole), _tables(lean), strict=True):
        assert np.array_equal(a, b)
    assert _counted(whole) == _counted(lean)


@settings(max_examples=15, deadline=None)
@given(setup=setups(max_side=5, max_width=3), data=st.data())
def test_counts_equal_instance_by_instance_simulation(setup: Arrangement, data: st.DataObject) -> None:
    """Brute force: every instance of every class (static and dynamic) simulated on its own."""
    test = _test_of(data, setup)
    report = coverage(test, setup, universe="neighbours")
    for cls in CLASSES:
        results = simulate(test, enumerate_class(cls, setup, "neighbours"), setup)
        got = report[cls]
        assert got.faults == len(results) == class_size(cls, setup, "neighbours")
        assert got.detected == sum(r.verdict == "detected" for r in results)
        assert got.partial == sum(r.verdict == "partial" for r in results)


@settings(max_examples=200, deadline=None)
@given(
    rows=st.integers(1, 40),
    cols=st.integers(1, 40),
    dr=st.integers(-1, 1),
    dc=st.integers(-3, 3),
    order=st.sampled_from(ORDERS),
)
def test_step_decided_bands_equal_streamed_bands(rows: int, cols: int, dr: int, dc: int, order: str) -> None:
    """The O(1) count of a band (step-decided walks) and the split count of the complement walk equal
    the pair-by-pair count, and a band's reverse, derived from the band, equals its own pair-by-pair
    count (every walk)."""
    band = Band(dr, dc, max(0, -dr), rows - max(0, dr), max(0, -dc), cols - max(0, dc))
    if band.size == 0 or (dr, dc) == (0, 0):
        return
    walk = Walk(AddressOrder(order, rows * cols, (rows, cols), seed=rows))
    streamed = _streamed_counts(walk, band, cols, block_pairs=7)
    if order == "complement":  # step-decided inside each half of the addresses, streamed across
        assert _complement_counts(walk, band, cols, block_pairs=3) == streamed
    if order in STEP_ORDERS:
        assert _closed_counts(band, _step_first(walk.order, band, cols), cols) == streamed
    counter = BandCounter(walk, cols)
    counter.counts(band)
    assert counter.counts(band.reverse()) == _streamed_counts(walk, band.reverse(), cols, 1 << 20)


def test_instances_counted_exactly_on_128_mbit() -> None:
    """Class sizes of the neighbours universe on 128 Mwords x 1 bit and 2 Mwords x 64, against the
    closed-form universe size (memcheck.faults.sampling.class_size), without per-word arrays."""
    for setup in (Arrangement(1 << 27, 1, layout=(16384, 8192)), Arrangement(1 << 21, 64, layout=(4096, 512))):
        report = coverage("March C-", setup, classes="SAF,SOF,CFid,dCFds,AF", universe="neighbours")
        for c in report.classes:
            assert c.faults == class_size(c.cls, setup, "neighbours")
        assert (
            report["CFid"].detected == report["CFid"].faults
        )  # March C- detects every CFid (van de Goor 1991; value written from memory)


def test_memory_estimate_refuses_only_walks_built_whole(capsys: pytest.CaptureFixture[str]) -> None:
    big = 1 << 30
    uni = Universe("neighbours")
    linear = estimate_coverage(Arrangement(big, 1, layout=(1 << 15, 1 << 15)), uni, CLASSES, 1)
    assert linear.bytes < DEFAULT_MAX_MEMORY
    lfsr = estimate_coverage(Arrangement(big, 1, layout=(1 << 15, 1 << 15), order="lfsr"), uni, CLASSES, 1)
    assert lfsr.bytes > DEFAULT_MAX_MEMORY
    rc = main(["coverage", "March C-", "--layout", "32768x32768", "--order", "lfsr", "--universe", "neighbours"])
    err = capsys.readouterr().err
    assert rc == 2
    assert "--max-memory" in err and "lfsr walk" in err and "Traceback" not in err


@settings(max_examples=100, deadline=None)
@given(
    rows=st.sampled_from([1, 2, 4, 8, 16, 32]),
    cols=st.sampled_from([1, 2, 4, 8, 16, 32]),
    dr=st.integers(-1, 1),
    dc=st.integers(-31, 31),
)
def test_gray_bands_split_into_row_and_column_terms(rows: int, cols: int, dr: int, dc: int) -> None:
    """The separable Gray count (row term XOR column term) equals the pair-by-pair count."""
    band = Band(dr, dc, max(0, -dr), rows - max(0, dr), max(0, -dc), cols - max(0, dc))
    if band.size == 0 or band.step(cols) == 0:
        return
    walk = Walk(AddressOrder("gray", rows * cols, (rows, cols)))
    assert gray_separable(walk.order, cols)
    assert _gray_counts(band, cols) == _streamed_counts(walk, band, cols, block_pairs=5)
