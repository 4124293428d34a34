"""The fast engine gives exactly the reference engine's verdicts and witnesses, and the counted
universes equal explicit enumeration."""

from __future__ import annotations

from collections import Counter
from itertools import combinations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from memcheck.errors import FaultModelError
from memcheck.faults.coverage import coverage
from memcheck.faults.fast import simulate
from memcheck.faults.geometry import Arrangement
from memcheck.faults.instances import Cell, CellFault, CouplingFault, DecoderFault, StuckOpenFault
from memcheck.faults.primitives import model_named
from memcheck.faults.reference import simulate_reference
from memcheck.faults.sampling import enumerate_class
from memcheck.faults.universe import CLASSES, inversions_by_class
from memcheck.march.library import resolve_test
from memcheck.march.notation import parse_march
from tests.fault_strategies import faults, setups, valid_tests


@settings(max_examples=60)
@given(data=st.data(), setup=setups())
def test_fast_engine_equals_reference(data: st.DataObject, setup: Arrangement) -> None:
    test = data.draw(valid_tests(setup))
    fault_list = data.draw(st.lists(faults(setup), min_size=1, max_size=12))
    assert simulate(test, fault_list, setup) == simulate_reference(test, fault_list, setup)


@settings(max_examples=15)
@given(data=st.data(), setup=setups(max_words=4, max_width=2), kind=st.sampled_from(("all", "neighbours")))
def test_counted_universe_equals_enumeration(data: st.DataObject, setup: Arrangement, kind: str) -> None:
    test = data.draw(valid_tests(setup, max_elements=4, max_ops=4))
    report = coverage(test, setup, universe=kind)
    for cls in CLASSES:
        results = simulate(test, enumerate_class(cls, setup, kind), setup)
        tally = Counter(r.verdict for r in results)
        c = report[cls]
        assert (c.faults, c.detected, c.partial) == (len(results), tally["detected"], tally["partial"]), cls
    for group in report.escapes:  # every example is a real instance of its group, with its witness
        assert group.example is not None
        assert group.example.verdict in ("escaped", "partial")
        assert group.example == simulate_reference(test, [group.example.fault], setup)[0]


@settings(max_examples=40)
@given(perm=st.permutations(list(range(9))), classes=st.lists(st.integers(0, 2), min_size=9, max_size=9))
def test_inversion_count_by_class(perm: list[int], classes: list[int]) -> None:
    seq, cls = np.array(perm, np.int64), np.array(classes, np.int64)
    brute = np.zeros((3, 3), np.int64)
    for p, q in combinations(range(9), 2):
        if seq[p] > seq[q]:
            brute[cls[seq[q]], cls[seq[p]]] += 1
    assert (inversions_by_class(seq, cls, 3) == brute).all()


def test_hand_checked_witness() -> None:
    # March C- on 4 words: DRDF0 at word 2 flips the cell on r0 in ⇑(r0,w1) and the w1 right after
    # overwrites the flip before any read: the escape must say exactly that.
    test = resolve_test("March C-")
    setup = Arrangement(4)
    (r,) = simulate(test, [CellFault(model_named("DRDF0"), Cell(2))], setup)
    assert r.verdict == "escaped" and r.witness is not None
    assert r.witness.excited is not None and r.witness.masked is not None
    assert (r.witness.excited.element, r.witness.excited.op, r.witness.excited.word) == (1, 0, 2)
    assert (r.witness.masked.element, r.witness.masked.op, r.witness.masked.word) == (1, 1, 2)
    assert "overwritten" in r.witness.describe(test)


def test_partial_detection_depends_on_power_up() -> None:
    # WDF0 (<0w0/1/->) under March C-: only the first w0 can be a non-transition write, and only when
    # the cell powered up at 0; from power-up 1 nothing sensitises it.
    test = resolve_test("March C-")
    (r,) = simulate(test, [CellFault(model_named("WDF0"), Cell(1))], Arrangement(3))
    assert r.verdict == "partial"
    assert r.witness is not None and r.witness.power_up == (("word 1 bit 0", 1),)
    assert r.witness.excited is None


def test_engines_reject_inconsistent_test() -> None:
    bad = parse_march("{⇕(w0); ⇑(r1)}")
    with pytest.raises(FaultModelError, match="fault-free memory fails"):
        simulate(bad, [StuckOpenFault(Cell(0))], Arrangement(2))
    with pytest.raises(FaultModelError):
        simulate_reference(bad, [StuckOpenFault(Cell(0))], Arrangement(2))
    leading = parse_march("{⇑(r0,w1); ⇓(r1,w0)}")  # fine on one background, the first r0 is not compared
    assert simulate(leading, [StuckOpenFault(Cell(0))], Arrangement(2))[0].verdict == "escaped"
    with pytest.raises(FaultModelError, match="before the test writes"):
        simulate(leading, [StuckOpenFault(Cell(0))], Arrangement(2, 2))


def test_fault_outside_memory_is_rejected() -> None:
    with pytest.raises(FaultModelError, match="outside"):
        simulate(resolve_test("MATS+"), [DecoderFault("wrong-cell", 0, 9)], Arrangement(4))
    with pytest.raises(FaultModelError, match="outside"):
        simulate(
            resolve_test("MATS+"), [CouplingFault(model_named("CFst<0;0>"), Cell(0, 3), Cell(1))], Arrangement(4, 2)
        )
