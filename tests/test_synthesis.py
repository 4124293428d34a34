"""March-test synthesis: known minimal lengths, re-verification by the reference engine, pruning
against brute force, the row model against the reference engine, bad input."""

from __future__ import annotations

import itertools
import json
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from memcheck.cli import main
from memcheck.errors import SynthesisError
from memcheck.faults import Arrangement, enumerate_class, models_of, simulate_reference
from memcheck.march.notation import MarchTest
from memcheck.synthesis import build_model, detects_all, shortest_library_test, steps_of, synthesize, to_test
from memcheck.synthesis.elements import DOWN, UP
from memcheck.synthesis.evaluate import instance_detected
from memcheck.synthesis.search import Step

# (classes, known minimal length, the published test of that length and its source). The lengths are
# the published tests' lengths; that no shorter March test exists for these classes is the
# literature's claim (van de Goor, "Testing Semiconductor Memories", 1991, ch. 9) -- value written
# from memory; the search's own exhaustive proof is what these tests check against it.
KNOWN = [
    ("SAF", 4, "MATS: R. Nair, IEEE Trans. Computers C-28(3), 1979"),
    ("SAF,AF", 5, "MATS+: M.S. Abadir, H.K. Reghbati, ACM Computing Surveys 15(3), 1983"),
    ("SAF,AF,TF", 6, "MATS++: A.J. van de Goor, Testing Semiconductor Memories, 1991"),
    ("SAF,AF,TF,CFin", 6, "March X: A.J. van de Goor, Testing Semiconductor Memories, 1991"),
]


def _reference_all_detected(test: MarchTest, classes: str, setup: Arrangement, kind: str = "all") -> bool:
    """Every instance of every class (``kind`` universe) detected by the reference engine, ⇕ walked
    both ways."""
    for any_order in ("up", "down"):
        t = to_test(steps_of(test, any_order))
        for cls in classes.split(","):
            results = simulate_reference(t, enumerate_class(cls, setup, kind), setup)
            if not all(r.verdict == "detected" for r in results):
                return False
    return True


@pytest.mark.parametrize(("classes", "length", "source"), KNOWN)
def test_known_minimal_lengths(classes: str, length: int, source: str) -> None:
    result = synthesize(classes, words=64)
    assert result.test is not None, source
    assert result.length == length, source
    assert result.proof.complete_below == length and not result.proof.timed_out
    assert all(c.detected == c.faults for c in result.report.classes)  # type: ignore[union-attr]
    assert _reference_all_detected(result.test, classes, Arrangement(5))


def test_march_c_minus_length() -> None:
    """Unlinked SAF/AF/TF/CFin/CFid/CFst: 10n, March C-'s length (A.J. van de Goor, "Using March Tests to
    Test SRAMs", IEEE Design & Test 10(1), 1993; minimality: value written from memory)."""
    classes = "SAF,AF,TF,CFin,CFid,CFst"
    result = synthesize(classes, words=64)
    assert result.length == 10
    assert _reference_all_detected(result.test, classes, Arrangement(4))  # type: ignore[arg-type]


def test_delays_only_for_drf() -> None:
    result = synthesize("SAF,DRF", words=16)
    assert result.test is not None and result.test.delays >= 1
    assert _reference_all_detected(result.test, "SAF,DRF", Arrangement(4))
    assert synthesize("SAF,TF", words=16).test.delays == 0  # type: ignore[union-attr]


# --- pruning against brute force --------------------------------------------------------------


def _all_tests(length: int) -> list[tuple[Step, ...]]:
    """Every test of exactly ``length`` ops in the space (first op a write, reads expecting the
    fault-free value, any split into elements, each ⇑ or ⇓), no symmetry or state pruning."""
    out = []
    for ops in itertools.product(("r", "w0", "w1"), repeat=length):
        if ops[0] == "r":
            continue
        idx: list[int] = []
        g = 0  # ops[0] is a write, so g is set before the first read
        for o in ops:
            if o == "r":
                idx.append(g)
            else:
                g = int(o[1])
                idx.append(2 + g)
        for cuts in itertools.product((False, True), repeat=length - 1):
            bounds = [0] + [i + 1 for i, c in enumerate(cuts) if c] + [length]
            parts = [tuple(idx[a:b]) for a, b in itertools.pairwise(bounds)]
            for dirs in itertools.product((UP, DOWN), repeat=len(parts)):
                out.append(tuple(Step(p, d) for p, d in zip(parts, dirs, strict=True)))
    return out


@pytest.mark.parametrize("classes", ["SAF", "SAF,AF", "TF", "CFin", "SAF,AF,TF", "CFst"])
def test_search_minimum_equals_brute_force(classes: str) -> None:
    """Enumerate every test up to length 5 without pruning: its minimum equals the search's."""
    setup = Arrangement(4)
    model = build_model(classes.split(","), setup)
    brute = next((n for n in range(1, 6) if any(detects_all(model, t) for t in _all_tests(n))), None)
    result = synthesize(classes, words=4, max_length=5)
    assert (result.length if result.test is not None else None) == brute
    if brute is None:
        assert result.proof.complete_below == 6


@pytest.mark.parametrize(
    ("classes", "words", "width", "backgrounds"),
    [("SAF,AF", 4, 2, "standard"), ("CFin", 4, 2, "standard"), ("TF,CFst", 3, 1, "solid,checkerboard")],
)
def test_several_backgrounds_minimum_equals_brute_force(classes: str, words: int, width: int, backgrounds: str) -> None:
    """Several backgrounds: the search (on pseudo-rows, passes composed at the end) finds the same
    minimum as enumerating every test up to length 5 through the per-pass row model (``run_steps``
    runs each pass in turn, an independent path); a found test is confirmed by the reference engine."""
    setup = Arrangement(words, width, backgrounds=backgrounds)
    model = build_model(classes.split(","), setup)
    assert len(model.passes) == 2
    brute = next((n for n in range(1, 6) if any(detects_all(model, t) for t in _all_tests(n))), None)
    result = synthesize(classes, words=words, width=width, backgrounds=backgrounds, max_length=5)
    assert (result.length if result.test is not None else None) == brute
    if result.test is not None:
        assert _reference_all_detected(result.test, classes, setup)


def test_intra_word_coupling_needs_and_gets_several_backgrounds() -> None:
    """CFst inside a 2-bit word: no test with the solid background alone (the search proves it), a 6n
    test (per pass) with the standard pair of backgrounds, confirmed by the reference engine."""
    with pytest.raises(SynthesisError, match="no March test detects"):
        synthesize("CFst", words=4, width=2, backgrounds="solid")
    r = synthesize("CFst", words=4, width=2, backgrounds="standard")
    assert r.test is not None and r.length == 6 and r.minimal
    assert _reference_all_detected(r.test, "CFst", Arrangement(4, 2, backgrounds="standard"))


# --- the row model against the reference engine -------------------------------------------------

_ELEMENT = st.tuples(st.lists(st.sampled_from(("r", "w0", "w1")), min_size=1, max_size=4), st.sampled_from((UP, DOWN)))


def _consistent(raw: list[tuple[list[str], int]]) -> tuple[Step, ...]:
    steps = []
    g: int | None = None
    for ops, d in raw:
        idx: list[int] = []
        for o in ops:
            if o == "r" and g is None:
                o = "w0"
            if o == "r" and g is not None:
                idx.append(g)
            else:
                g = int(o[1])
                idx.append(2 + g)
        steps.append(Step(tuple(idx), d))
    return tuple(steps)


@settings(max_examples=60)
@given(
    raw=st.lists(_ELEMENT, min_size=1, max_size=4),
    cls=st.sampled_from(
        [
            "SAF",
            "TF",
            "WDF",
            "RDF",
            "DRDF",
            "IRF",
            "CFst",
            "CFds",
            "CFin",
            "CFid",
            "CFir",
            "AF",
            "dRDF",
            "dDRDF",
            "dIRF",
            "dCFds",
            "dCFrd",
            "dCFdrd",
            "dCFir",
        ]
    ),
    words=st.integers(2, 3),
    width=st.integers(1, 2),
    several=st.booleans(),
)
def test_row_model_matches_reference_engine(
    raw: list[tuple[list[str], int]], cls: str, words: int, width: int, several: bool
) -> None:
    """Per fault model: all its instances detected by the row model iff by the reference engine; with
    ``several``, the test runs once per background of a set (solid then checkerboard, or the standard
    set on 2-bit words), the state carrying over between passes."""
    steps = _consistent(raw)
    bgs = ("standard" if width > 1 else "solid,checkerboard") if several else None
    setup = Arrangement(words, width, backgrounds=bgs or ("checkerboard" if width > 1 else "solid"))
    model = build_model([cls], setup)
    test = to_test(steps)
    results = simulate_reference(test, enumerate_class(cls, setup), setup)
    assert detects_all(model, steps) == all(r.verdict == "detected" for r in results), test.to_unicode()
    if cls == "AF":
        return
    found = instance_detected(model, steps)
    for m in models_of(cls):
        mine = [i for i, inst in enumerate(model.instances) if inst.label.split(": ", 1)[1].split(" (")[0] == m.name]
        ref = all(r.verdict == "detected" for r in results if r.fault.name == m.name)
        assert bool(found[mine].all()) == ref, (m.name, test.to_unicode())


# --- bad input -----------------------------------------------------------------------------------


@pytest.mark.parametrize(
    ("kwargs", "needle"),
    [
        ({"classes": "SAF,CFx"}, "Did you mean"),
        (
            {"classes": "SOF", "words": 4, "width": 2, "backgrounds": "checkerboard", "layout": (2, 2)},
            "every word alike",
        ),
        ({"classes": "SAF", "max_length": 1}, "below any possible test"),
        ({"classes": "CFst", "width": 2, "words": 4, "backgrounds": "solid"}, "no March test detects"),
        ({"classes": "SAF", "width": 128, "words": 4, "backgrounds": "standard"}, "more than the 7"),
    ],
)
def test_bad_input(kwargs: dict[str, object], needle: str) -> None:
    classes = kwargs.pop("classes")
    with pytest.raises(SynthesisError, match=needle):
        synthesize(classes, **kwargs)  # type: ignore[arg-type]


def test_cli_exit_codes(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    out = tmp_path / "s.json"
    assert main(["march", "synthesize", "--faults", "SAF,AF", "--words", "16", "--json", str(out)]) == 0
    text = capsys.readouterr().out
    assert "5n" in text and "{any(w0)" in text.replace("up(", "any(") and "1..4" in text
    data = json.loads(out.read_text())
    assert data["length"] == 5 and data["proof"]["no_test_below"] == 5
    assert main(["march", "synthesize", "--faults", "SAF,AF,TF", "--max-length", "5", "--words", "8"]) == 1
    assert "no test of length ≤ 5" in capsys.readouterr().out
    assert main(["march", "synthesize", "--faults", "SAF,XYZ"]) == 2
    err = capsys.readouterr().err
    assert "unknown fault class" in err and "Traceback" not in err


def test_single_cell_dynamic_faults_need_11n() -> None:
    # Two-operation (write then read) single-cell dynamic faults: the search proves nothing shorter than 11n
    # exists in its space, the fast engine confirms on the memory and the reference engine re-verifies. 11n is
    # also the length of March AB1 (A. Benso et al., ITC 2005), published for single-cell dynamic faults; value
    # written from memory, table/page not checked, so only the length is compared, not the test.
    classes = "dRDF,dDRDF,dIRF"
    result = synthesize(classes, words=16)
    assert result.test is not None and result.length == 11
    assert result.proof.complete_below == 11 and not result.proof.timed_out
    assert _reference_all_detected(result.test, classes, Arrangement(4))


def test_single_cell_static_9n_and_wide_words() -> None:
    """The trade-off table's single-cell static row (docs/synthesis.md): the search's test detects
    every instance by the reference engine on 8 x 1 and on 4 x 4 with one background, and no library
    test of that length or shorter does on 64 x 1 (the shortest library one is longer)."""
    classes = "SAF,TF,WDF,RDF,DRDF,IRF"
    r = synthesize(classes, words=8)
    assert r.test is not None and r.length == 9 and r.minimal
    assert _reference_all_detected(r.test, classes, Arrangement(8, 1))
    assert _reference_all_detected(r.test, classes, Arrangement(4, 4, None, "linear", "solid", None))
    fb = shortest_library_test(Arrangement(64, 1), tuple(classes.split(",")))
    assert fb is not None and fb.length > 9


def test_shortest_library_test_saf_af_is_mats_plus() -> None:
    """MATS (4n) misses decoder faults and MATS+ (5n) detects SAF and AF (Abadir and Reghbati, ACM
    Computing Surveys 15(3), 1983; value written from memory)."""
    fb = shortest_library_test(Arrangement(64, 1), ("SAF", "AF"))
    assert fb is not None and fb.name == "MATS+" and fb.length == 5


# --- the beam search: an upper bound the exact search then proves or beats ------------------------


def test_narrow_beam_overshoots_and_the_exact_search_still_finds_the_minimum() -> None:
    """A one-state beam finds a CFid test longer than the 10n minimum (March C-'s length); the exact
    search then rules out every shorter length but finds the 10n test, so the answer is minimal and
    comes from the exact search. The beam's own test is a real test: the reference engine confirms it."""
    result = synthesize("CFid", words=8, beam_width=1)
    beam = result.beam
    assert beam is not None and beam.steps is not None and beam.length is not None
    assert beam.length > result.length == 10  # type: ignore[operator]
    assert result.minimal and result.found_by == "exact search"
    assert _reference_all_detected(to_test(beam.steps), "CFid", Arrangement(4))


def test_beam_length_proven_when_the_exact_search_rules_out_shorter() -> None:
    """Where the beam finds the minimum, the exact search only searches below it and proves it."""
    result = synthesize("SAF,AF,TF,CFin,CFid,CFst", words=16)
    assert result.found_by == "beam search" and result.minimal
    assert result.length == result.proof.complete_below == 10
    assert len(result.proof.states_per_length) == 9  # lengths 1..9 only: the beam bounded the exact search


def test_beam_width_zero_is_the_exact_search_alone() -> None:
    with_beam = synthesize("SAF,AF,TF", words=8)
    alone = synthesize("SAF,AF,TF", words=8, beam_width=0)
    assert alone.beam is None and alone.found_by == "exact search"
    assert alone.length == with_beam.length == 6 and alone.minimal


def test_memory_limit_cuts_the_exact_search_and_says_so(capsys: pytest.CaptureFixture[str]) -> None:
    """A memory limit too small for the exact search: no test is claimed shortest, the cut is named, and
    the CLI exits 1 with the library comparison."""
    result = synthesize("SAF,AF,TF,CFin,CFid,CFst", words=8, memory_limit=200_000)
    assert result.proof.cut_by == "memory limit" and not result.minimal
    assert result.fallback is not None and result.fallback.name == "March C-"
    assert result.to_json()["proof"]["cut_by"] == "memory limit"


def test_cli_prints_a_found_but_unproven_test_and_exits_1(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    out = tmp_path / "s.json"
    args = ["march", "synthesize", "--faults", "CFid", "--words", "8", "--beam-width", "1", "--max-length", "12"]
    assert main([*args, "--time-limit", "0.000001", "--json", str(out)]) == 1
    text = capsys.readouterr().out
    data = json.loads(out.read_text())
    assert data["found"] is False and data["minimal"] is False and data["proof"]["cut_by"] == "time limit"
    assert "before any length was searched to the end" in text
    assert "March C- (10n)" in text  # the library comparison stands in for the missing test
    # a memory limit the one-state beam fits in but the exact search does not: the beam's test, unproven
    result = synthesize("CFid", words=8, beam_width=1, memory_limit=120_000)
    assert result.test is not None and not result.minimal and result.found_by == "beam search"
    assert result.proof.cut_by == "memory limit" and result.proof.complete_below < result.length  # type: ignore[operator]
    assert _reference_all_detected(result.test, "CFid", Arrangement(4))
    assert main(["march", "synthesize", "--faults", "CFid", "--beam-width", "-1"]) == 2
    assert main(["march", "synthesize", "--faults", "CFid", "--beam-width", "-1"]) == 2


@pytest.mark.slow
def test_all_static_faults_beam_finds_18n_confirmed_by_reference_engine() -> None:
    """Every static single- and two-cell class the search models (SOF and DRF aside): the beam finds a
    test of March MSS's length, 18n (G. Harutyunyan, V. A. Vardanian, Y. Zorian, "Minimal March tests for
    unlinked static faults in random access memories", VTS 2005; value written from memory), shorter than
    March SS's 22n (S. Hamdioui, A. J. van de Goor, M. Rodgers, "March SS: a test for all static simple RAM
    faults", MTDT 2002), and the reference engine confirms it detects every instance."""
    from memcheck.faults.universe import STATIC_CLASSES
    from memcheck.synthesis.api import _setup, parse_fault_classes
    from memcheck.synthesis.beam import BeamSearch, beam_search
    from memcheck.synthesis.passes import expand_passes

    classes = ",".join(c for c in STATIC_CLASSES if c not in ("DRF", "SOF"))
    model = expand_passes(build_model(parse_fault_classes(classes), _setup(8, 1, "linear", None, 1)))
    found = beam_search(BeamSearch(model, first_writes=(0,), first_directions=(UP,), width=100), 24)
    assert found.steps is not None and found.length is not None and found.length <= 18
    assert _reference_all_detected(to_test(found.steps), classes, Arrangement(4))
