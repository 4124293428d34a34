"""March-test synthesis over more of the fault space: many data backgrounds (shared pseudo-rows), SOF
in the search, and the neighbours universe. Each capability is checked against something outside
the search: the per-pass row model run pass by pass, the reference fault engine, brute force."""

from __future__ import annotations

import os

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from memcheck.errors import SynthesisError
from memcheck.faults import Arrangement, enumerate_class, simulate_reference
from memcheck.faults.sampling import class_size, instance_at, sample_numbers
from memcheck.march.notation import MarchTest
from memcheck.synthesis import build_model, detects_all, steps_of, synthesize, to_test
from memcheck.synthesis.passes import expand_passes
from memcheck.synthesis.search import Step
from tests.test_synthesis import _ELEMENT, _all_tests, _consistent, _reference_all_detected

# --- many backgrounds: the shared pseudo-rows against the passes run one after another ----------------


@settings(max_examples=40)
@given(
    raw=st.lists(_ELEMENT, min_size=1, max_size=4),
    cls=st.sampled_from(["SAF", "TF", "CFst", "CFin", "CFid", "CFds", "AF", "dCFds", "DRDF", "SOF"]),
    width=st.sampled_from([2, 4, 8]),
    words=st.integers(2, 3),
)
def test_shared_pseudo_rows_equal_the_passes_run_in_turn(
    raw: list[tuple[list[str], int]], cls: str, width: int, words: int
) -> None:
    """The search's model (per-pass behaviour deduplicated into shared pseudo-rows, composed at the
    end) detects exactly what running the test once per background through the per-pass row model
    detects (``run_steps``, which carries each row's state from pass to pass: an independent path);
    the standard set gives 2, 3 or 4 passes here."""
    steps = _consistent(raw)
    model = build_model([cls], Arrangement(words, width, backgrounds="standard"))
    assert len(model.passes) > 1
    assert detects_all(expand_passes(model), steps) == detects_all(model, steps), to_test(steps).to_unicode()


def test_pseudo_rows_do_not_grow_with_the_backgrounds() -> None:
    """Per-pass behaviour depends only on a row's fault, relation and two flip bits, so the search's
    rows stay few while the bit pairs (and instances) grow with the word width."""
    sizes = {}
    for width in (4, 8, 16):
        model = build_model(["CFst"], Arrangement(4, width, backgrounds="standard"))
        sizes[width] = (len(model.instances), expand_passes(model).rows)
    assert sizes[4][0] < sizes[8][0] < sizes[16][0]
    assert sizes[8][1] == sizes[16][1] <= 4 * sizes[4][1]


@pytest.mark.slow
@pytest.mark.skipif(not os.environ.get("MEMCHECK_SLOW"), reason="about 7 minutes: set MEMCHECK_SLOW=1")
def test_standard_backgrounds_on_8_bit_words_10n_confirmed_by_reference_engine() -> None:
    """SAF/AF/TF/CFin/CFid/CFst on 4 x 8 with the standard set (4 backgrounds): a proven-shortest
    test per pass of 10n, March C-'s length (A.J. van de Goor, "Using March Tests to Test SRAMs",
    IEEE Design & Test 10(1), 1993; that the intra-word faults need the standard backgrounds is
    common practice), re-verified by the reference engine on every instance."""
    classes = "SAF,AF,TF,CFin,CFid,CFst"
    r = synthesize(classes, words=4, width=8, backgrounds="standard")
    assert r.test is not None and r.minimal and r.length == 10
    assert _reference_all_detected(r.test, classes, Arrangement(4, 8, backgrounds="standard"))


def test_standard_backgrounds_on_4_bit_words_coupling_confirmed_by_reference_engine() -> None:
    """CFin/CFst inside and between 4-bit words with the standard set (3 backgrounds): the proven
    shortest per-pass test is re-verified by the reference engine on every instance, and no test of
    that length exists with the solid background alone (intra-word CFst needs several; common practice)."""
    r = synthesize("CFin,CFst", words=2, width=4, backgrounds="standard")
    assert r.test is not None and r.minimal
    assert _reference_all_detected(r.test, "CFin,CFst", Arrangement(2, 4, backgrounds="standard"))
    with pytest.raises(SynthesisError, match="no March test detects"):
        synthesize("CFin,CFst", words=2, width=4, backgrounds="solid")


def _reference_sample_detected(test: MarchTest, classes: str, setup: Arrangement, per_class: int, seed: int) -> bool:
    """A seeded sample of each class's instances, all detected by the reference engine (⇕ walked
    both ways); replay with the same seed."""
    for any_order in ("up", "down"):
        t = to_test(steps_of(test, any_order))
        for stream, cls in enumerate(classes.split(",")):
            picks = sample_numbers(class_size(cls, setup), per_class, seed, stream)
            faults = [instance_at(cls, setup, i) for i in picks]
            if not all(r.verdict == "detected" for r in simulate_reference(t, faults, setup)):
                return False
    return True


@pytest.mark.slow
@pytest.mark.skipif(not os.environ.get("MEMCHECK_SLOW"), reason="about 2 minutes: set MEMCHECK_SLOW=1")
def test_standard_backgrounds_on_1k_x_32_known_lengths() -> None:
    """1K x 32 with the six standard backgrounds: SAF 4n and SAF/AF/TF/CFin/CFid/CFst 10n per pass,
    proven shortest (MATS and March C- lengths, sources as in tests/test_synthesis.py; minimality
    there from the literature, value written from memory), confirmed by the fast engine inside
    ``synthesize`` over every instance, and by the reference engine on a seeded sample of 40
    instances per class of a 4 x 32 memory with the same backgrounds (seed 14)."""
    for classes, length in (("SAF", 4), ("SAF,AF,TF,CFin,CFid,CFst", 10)):
        r = synthesize(classes, words=1024, width=32, backgrounds="standard")
        assert r.test is not None and r.minimal and r.length == length
        assert _reference_sample_detected(r.test, classes, Arrangement(4, 32, backgrounds="standard"), 40, 14)


# --- SOF ---------------------------------------------------------------------------------------------


@settings(max_examples=60)
@given(
    raw=st.lists(_ELEMENT, min_size=1, max_size=4),
    words=st.integers(1, 4),
    width=st.integers(1, 2),
    several=st.booleans(),
)
def test_sof_rows_match_reference_engine(
    raw: list[tuple[list[str], int]], words: int, width: int, several: bool
) -> None:
    """SOF rows (inner word, first and last word in ⇑, one-word memory) detect every stuck-open cell
    iff the reference engine does, with one background or the standard set (the latch carrying over
    between passes)."""
    steps = _consistent(raw)
    setup = Arrangement(words, width, backgrounds="standard" if several and width > 1 else "solid")
    results = simulate_reference(to_test(steps), enumerate_class("SOF", setup), setup)
    expected = all(r.verdict == "detected" for r in results)
    model = build_model(["SOF"], setup)
    assert detects_all(model, steps) == expected, to_test(steps).to_unicode()


@pytest.mark.parametrize("classes", ["SOF", "SAF,SOF"])
def test_sof_minimum_equals_brute_force(classes: str) -> None:
    """The search's minimum with SOF equals an enumeration of every test up to length 5 without
    pruning, run through the reference engine (not the row model)."""
    setup = Arrangement(4)

    def ref_ok(steps: tuple[Step, ...]) -> bool:
        t = to_test(steps)
        return all(
            r.verdict == "detected"
            for cls in classes.split(",")
            for r in simulate_reference(t, enumerate_class(cls, setup), setup)
        )

    model = build_model(classes.split(","), setup)
    brute = None
    for n in range(1, 6):
        cands = [t for t in _all_tests(n) if detects_all(model, t)]
        if cands:
            assert all(ref_ok(t) for t in cands[:20])
            brute = n
            break
    result = synthesize(classes, words=4, max_length=5)
    assert (result.length if result.test is not None else None) == brute


def test_sof_with_saf_af_tf_is_6n_confirmed_by_reference_engine() -> None:
    """SAF/AF/TF plus SOF: 6n, MATS++'s length (A.J. van de Goor, Testing Semiconductor Memories,
    1991; that MATS++'s final read covers SOF there: value written from memory), proven shortest and
    re-verified by the reference engine."""
    r = synthesize("SAF,AF,TF,SOF", words=64)
    assert r.test is not None and r.minimal and r.length == 6
    assert _reference_all_detected(r.test, "SAF,AF,TF,SOF", Arrangement(5))


def test_sof_refused_where_words_differ_by_address() -> None:
    with pytest.raises(SynthesisError, match="treat every word alike"):
        synthesize("SOF", words=4, width=2, backgrounds="checkerboard", layout=(2, 2))


# --- the neighbours universe ---------------------------------------------------------------------------


@pytest.mark.parametrize("classes", ["SAF,AF,TF,CFin", "CFst,CFid"])
def test_neighbours_universe_confirmed_by_reference_engine(classes: str) -> None:
    """On a 3 x 3 layout the neighbours universe's shortest test is re-verified by the reference
    engine over every instance of that universe, and is no longer than the ``all`` universe's (a
    subset of its instances)."""
    near = synthesize(classes, words=9, layout=(3, 3), universe="neighbours")
    every = synthesize(classes, words=9, layout=(3, 3))
    assert near.test is not None and near.minimal and near.universe == "neighbours"
    assert every.length is not None and near.length is not None and near.length <= every.length
    assert _reference_all_detected(near.test, classes, Arrangement(9, 1, (3, 3)), "neighbours")


def test_neighbours_universe_needs_a_layout_and_no_sample() -> None:
    with pytest.raises(Exception, match="layout"):
        synthesize("CFin", words=9, universe="neighbours")
    with pytest.raises(SynthesisError, match="every instance"):
        synthesize("CFin", words=9, universe="sample:10")
