"""Figures that never mislead, exact counting at any size, and sampling of any universe (issue 12)."""

from __future__ import annotations

import numpy as np
from hypothesis import given
from hypothesis import strategies as st

from memcheck.cli._tables import Grid, render
from memcheck.faults.counts import merge_counts, scaled
from memcheck.faults.coverage import wilson_interval
from memcheck.faults.figures import interval, percent
from memcheck.faults.geometry import Arrangement
from memcheck.faults.instances import CouplingFault
from memcheck.faults.sampling import class_size, enumerate_class, instance_at, sample_class, sample_numbers
from memcheck.march.library import get_algorithm
from memcheck.march.timing import march_time


def test_rounding_edges_of_the_issue() -> None:
    # MATS+ CFst: 134,209,536 escapes of 17,179,607,040 instances never print as 100
    assert percent(17_179_607_040 - 134_209_536, 17_179_607_040) == "99.2"
    assert percent(999_760, 1_000_000) == "99.98"  # 99.976 %: one decimal would read 100.0
    assert percent(4, 1_000_000) == "0.0004"  # 0.0004 %: one decimal would read 0.0
    assert percent(64, 64 * 10**9) == "<0.0001"  # too small for four decimals: never "0"
    assert percent(64 * 10**9 - 1, 64 * 10**9) == ">99.9999"
    assert percent(5, 5) == "100" and percent(0, 5) == "0" and percent(0, 0) == "-"
    assert percent(1, 2) == "50.0"
    # 95 % Wilson interval of 20,000 detections in 20,000: lower bound n/(n+z^2) = 0.999808 (worked by hand)
    assert interval(*wilson_interval(20_000, 20_000)) == "99.98-100"
    assert interval(*wilson_interval(0, 20_000)) == "0-0.02"


@given(st.integers(1, 10**15), st.data())
def test_percent_reads_100_or_0_only_when_exact(whole: int, data: st.DataObject) -> None:
    part = data.draw(st.integers(0, whole))
    text = percent(part, whole)
    assert (text == "100") == (part == whole)
    assert (text == "0") == (part == 0)
    if text[0] not in "<>" and text not in ("0", "100"):
        decimals = len(text.split(".")[1])
        assert abs(float(text) - 100 * part / whole) <= 0.5 * 10**-decimals + 1e-9


@given(st.integers(1, 10**6), st.data())
def test_interval_bounds_contain_the_interval(n: int, data: st.DataObject) -> None:
    k = data.draw(st.integers(0, n))
    lo, hi = wilson_interval(k, n)
    lo_t, hi_t = interval(lo, hi).split("-")
    assert float(lo_t) <= 100 * lo + 1e-9 and float(hi_t) >= 100 * hi - 1e-9  # rounded outwards
    assert (lo_t == "0") == (k == 0) or lo < 1e-6  # a positive lower bound is shown as positive
    assert (hi_t == "100") == (k == n) or hi > 1 - 1e-6


def test_exact_counts_beyond_int64() -> None:
    """A 2**30-word x 64 memory has 2**72 ordered cell pairs: sums stay exact (Python integers)."""
    big = np.array([1 << 61, 1 << 61, 1 << 61, 5], np.int64)
    keys, counts = merge_counts([np.array([3, 3, 3, 4])], [big])
    assert keys.tolist() == [3, 4] and counts.tolist() == [3 << 61, 5]
    assert scaled(np.array([4096], np.int64), 1 << 60).tolist() == [1 << 72]
    assert scaled(np.array([3], np.int64), 7).dtype == np.int64  # small stays fast


def test_sampling_a_universe_larger_than_int64() -> None:
    """The OverflowError of ``coverage "March SS" --words 16777216 --width 64 --universe sample:2000``."""
    setup = Arrangement(16_777_216, 64)
    total = class_size("CFds", setup)
    assert total > 1 << 63
    picks = sample_numbers(total, 2000, seed=4, stream=9)
    assert len(set(picks)) == 2000 and all(0 <= p < total for p in picks)
    assert picks == sample_numbers(total, 2000, seed=4, stream=9)
    last = instance_at("CFds", setup, total - 1)
    assert isinstance(last, CouplingFault) and last.victim.word == setup.words - 1


def test_neighbour_sample_draws_neighbour_instances() -> None:
    setup = Arrangement(12, 2, layout=(4, 3))
    for cls in ("CFst", "CFds", "AF", "SAF", "SOF"):
        every = enumerate_class(cls, setup, "neighbours")
        assert len(every) == class_size(cls, setup, "neighbours")
        assert len(set(every)) == len(every)
        drawn = sample_class(cls, setup, 25, seed=3, kind="neighbours")
        assert len(set(drawn)) == min(25, len(every)) and set(drawn) <= set(every)


def test_wide_tables_fit_the_terminal() -> None:
    header = ("class", *(f"Test number {i} (10n)" for i in range(14)))
    rows = tuple((c, *(f"{99.5 + i / 100:.2f} (0.3)" for i in range(14))) for c in ("SAF", "CFst", "CFdrd"))
    g = Grid(header, rows, transposable=True)
    for width in (60, 100, 220):
        text = render(g, "text", width)
        assert max(len(line) for line in text.splitlines()) <= width
        assert "…" not in text and "Test number 13 (10n)" in text  # nothing cut
    assert render(g, "text", 400).splitlines()[0].startswith("class")  # wide enough: not transposed
    assert render(g, "text", 100).splitlines()[0].split() == ["class", "SAF", "CFst", "CFdrd"]  # tests as rows
    assert render(g, "markdown").splitlines()[1].startswith("|---")
    assert render(g, "csv").splitlines()[0].split(",")[1] == "Test number 0 (10n)"


def test_test_time() -> None:
    # MATS+ (5n) on 1,024 words, one background, 100 MHz: 5,120 cycles = 51.2 us
    t = march_time(get_algorithm("MATS+").test, 1024, 1, 100.0)
    assert t.operations == 5120 and abs(t.seconds - 51.2e-6) < 1e-12 and "51.2 µs" in t.text()
    g = march_time(get_algorithm("March G").test, 1024, 2, 50.0, pause_ms=100)
    assert g.operations == 23 * 1024 * 2 and g.pauses == 4
    assert abs(g.seconds - (23 * 1024 * 2 / 50e6 + 0.4)) < 1e-12
