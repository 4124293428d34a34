"""Fault primitives, fault models, instances and universes."""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import cast

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from memcheck.errors import FaultModelError
from memcheck.faults.coverage import coverage, wilson_interval
from memcheck.faults.geometry import Arrangement
from memcheck.faults.instances import Cell, CellFault, CouplingFault, DecoderFault, DecoderKind, StuckOpenFault
from memcheck.faults.primitives import (
    SINGLE_CELL_MODELS,
    TWO_CELL_MODELS,
    aggressor_op,
    fp,
    model_named,
    models_of,
    settle,
    victim_op,
)
from memcheck.faults.sampling import class_size, enumerate_class, sample_class
from memcheck.faults.universe import CLASSES, parse_classes, parse_universe


def test_two_cell_static_primitives_are_the_36_of_the_taxonomy() -> None:
    # A.J. van de Goor and Z. Al-Ars, "Functional Memory Faults: A Formal Notation and a Taxonomy",
    # IEEE VLSI Test Symposium, 2000: 36 static two-cell FPs — CFst 4, CFds 12, CFtr 4, CFwd 4, CFrd 4,
    # CFdrd 4, CFir 4 (counts: value written from memory; table/page not checked).
    counts = {c: len(models_of(c)) for c in ("CFst", "CFds", "CFtr", "CFwd", "CFrd", "CFdrd", "CFir")}
    assert counts == {"CFst": 4, "CFds": 12, "CFtr": 4, "CFwd": 4, "CFrd": 4, "CFdrd": 4, "CFir": 4}
    notations = {p.notation for c in counts for m in models_of(c) for p in m.primitives}
    assert len(notations) == 36
    # same source: the 10 static single-cell FPs besides the two state faults
    single = {p.notation for c in ("TF", "WDF", "RDF", "DRDF", "IRF") for m in models_of(c) for p in m.primitives}
    assert single == {
        "<0w1/0/->",
        "<1w0/1/->",
        "<0w0/1/->",
        "<1w1/0/->",
        "<0r0/1/1>",
        "<1r1/0/0>",
        "<0r0/1/0>",
        "<1r1/0/1>",
        "<0r0/0/1>",
        "<1r1/1/0>",
    }


def test_classic_coupling_faults_as_primitives() -> None:
    # van de Goor 1991 ("Testing Semiconductor Memories"): CFin <↑;↕> inverts the victim on an up
    # transition of the aggressor; CFid <↑;1> forces it to 1. As FPs: <0w1;0/1/-> and <0w1;1/0/->.
    # Definitions written from memory; table/page not checked.
    cfin = model_named("CFin<↑;↕>")
    assert cfin.notation == "<0w1;0/1/->, <0w1;1/0/->"
    assert [aggressor_op(cfin, 0, v, "w", 1) for v in (0, 1)] == [1, 0]
    assert [aggressor_op(cfin, 1, v, "w", 1) for v in (0, 1)] == [0, 1]  # no transition, no effect
    cfid = model_named("CFid<↑;1>")
    assert [aggressor_op(cfid, 0, v, "w", 1) for v in (0, 1)] == [1, 1]


@pytest.mark.parametrize(
    ("name", "a", "v", "kind", "value", "expected"),
    [
        ("TF↑", 0, 0, "w", 1, (0, 0)),  # cannot rise
        ("TF↑", 0, 1, "w", 1, (1, 1)),  # non-transition write is fine
        ("RDF0", 0, 0, "r", 0, (1, 1)),  # flips and returns the flipped value
        ("DRDF0", 0, 0, "r", 0, (1, 0)),  # flips but returns the correct value
        ("IRF1", 0, 1, "r", 1, (1, 0)),  # wrong value, cell intact
        ("SA1", 0, 0, "w", 0, (1, 1)),
        ("CFtr<1;↑>", 1, 0, "w", 1, (0, 0)),
        ("CFtr<1;↑>", 0, 0, "w", 1, (1, 1)),  # aggressor in the other state: fault-free
        ("CFrd<0;1>", 0, 1, "r", 1, (0, 0)),
    ],
)
def test_victim_operation_semantics(
    name: str, a: int, v: int, kind: str, value: int, expected: tuple[int, int]
) -> None:
    assert victim_op(model_named(name), a, v, kind, value) == expected


def test_state_coupling_acts_at_once() -> None:
    m = model_named("CFst<0;1>")  # <0;1/0/->: the victim cannot hold 1 while the aggressor holds 0
    assert settle(m, 0, 1) == 0
    assert settle(m, 1, 1) == 1


@pytest.mark.parametrize(
    "text",
    [
        "<0w1/0>",
        "0w1/0/-",
        "<0w2/0/->",
        "<0r1/0/1>",
        "<0w1/0/1>",
        "<0r0/1/->",
        "<0w1;0r0/1/1>",
        "<0T;0/1/->",
        "<x/0/->",
    ],
)
def test_bad_primitives_are_rejected(text: str) -> None:
    with pytest.raises(FaultModelError):
        fp(text)


@pytest.mark.parametrize(
    "text", ["<0w1/0/->", "<1r1/0/1>", "<0;1/0/->", "<1w0;0/1/->", "<0r0;1/0/->", "<∀/1/->", "<1T/0/->"]
)
def test_primitive_notation_round_trips(text: str) -> None:
    assert fp(text).notation == text


def test_instance_descriptions() -> None:
    assert (
        CellFault(model_named("TF↑"), Cell(17, 3)).describe()
        == "bit 3 of word 17 cannot rise (writing 1 over 0 leaves 0)"
    )
    assert (
        CouplingFault(model_named("CFds<0w1;0>"), Cell(4), Cell(9)).describe()
        == "writing 1 to word 4 bit 0 (holding 0) flips word 9 bit 0 from 0 to 1"
    )
    assert CouplingFault(model_named("CFst<1;0>"), Cell(9), Cell(4)).scope == "aggressor above"
    assert StuckOpenFault(Cell(2, 1)).describe().startswith("bit 1 of word 2 is stuck open")
    assert DecoderFault("extra-cell", 5, 9, "or").describe() == "address 5 reaches words 5 and 9 (read as wired-OR)"
    assert DecoderFault("wrong-cell", 5, 9).targets() == {5: (9,)}
    for m in (*SINGLE_CELL_MODELS, *TWO_CELL_MODELS):  # every model has a one-line description
        text = m.describe("V", "A")
        assert "\n" not in text and "{" not in text


@pytest.mark.parametrize(
    "bad",
    [
        lambda: DecoderFault("no-cell", 1, 2),
        lambda: DecoderFault("extra-cell", 1, 2),
        lambda: DecoderFault("wrong-cell", 1, 1),
        lambda: DecoderFault(cast(DecoderKind, "nowhere"), 1),
        lambda: CouplingFault(model_named("CFst<0;0>"), Cell(1), Cell(1)),
        lambda: CellFault(model_named("CFst<0;0>"), Cell(1)),
    ],
)
def test_bad_instances_are_rejected(bad: Callable[[], object]) -> None:
    with pytest.raises(FaultModelError):
        bad()


def test_universe_sizes() -> None:
    setup = Arrangement(6, 2, layout=(3, 2))
    n = 12
    assert class_size("SAF", setup) == 2 * n
    assert class_size("CFds", setup) == 12 * n * (n - 1)
    assert class_size("AF", setup) == 6 + 5 * 6 * 5
    # eight-neighbour ordered pairs of an R x C cell grid: 2 * (R(C-1) + (R-1)C + 2(R-1)(C-1)), common practice
    r, c = 3, 4  # 3 rows x (2 mux columns x 2 bits)
    pairs = 2 * (r * (c - 1) + (r - 1) * c + 2 * (r - 1) * (c - 1))
    assert len(enumerate_class("CFst", setup, "neighbours")) == 4 * pairs
    report = coverage("March C-", setup, universe="neighbours", classes="CFst,AF")
    assert report["CFst"].faults == 4 * pairs
    # decoder faults: every word (no-cell) plus five variants per ordered 4-neighbour word pair of 3 x 2
    assert report["AF"].faults == 6 + 5 * 2 * (3 * 1 + 2 * 2)


def test_sample_is_seeded_and_without_replacement() -> None:
    setup = Arrangement(32, 2)
    a = sample_class("CFds", setup, 50, seed=7)
    assert a == sample_class("CFds", setup, 50, seed=7)
    assert a != sample_class("CFds", setup, 50, seed=8)
    assert len(set(a)) == 50
    assert len(sample_class("AF", Arrangement(2), 100, seed=1)) == class_size("AF", Arrangement(2))  # all of them


def test_sample_universe_reports_wilson_interval() -> None:
    report = coverage("MATS+", Arrangement(64), universe="sample:40", classes="TF,SAF", seed=3)
    tf = report["TF"]
    assert tf.faults == 40 and tf.ci95 is not None
    assert tf.ci95 == wilson_interval(tf.detected, 40)
    assert report.to_json()["universe"] == "sample:40"


@pytest.mark.parametrize(
    ("k", "n", "lo", "hi"),
    [(81, 263, 0.2553, 0.3662), (15, 148, 0.0624, 0.1605), (0, 20, 0.0, 0.1611), (1, 29, 0.0061, 0.1718)],
)
def test_wilson_interval_published_values(k: int, n: int, lo: float, hi: float) -> None:
    # R.G. Newcombe, "Two-Sided Confidence Intervals for the Single Proportion: Comparison of Seven
    # Methods", Statistics in Medicine 17, 1998, Table II, Wilson score method (values written from
    # memory; the table itself was not rechecked).
    got = wilson_interval(k, n)
    assert got == pytest.approx((lo, hi), abs=6e-5)


@settings(max_examples=50)
@given(n=st.integers(1, 10_000), data=st.data())
def test_wilson_bounds_solve_the_score_equation(n: int, data: st.DataObject) -> None:
    # E.B. Wilson, "Probable Inference, the Law of Succession, and Statistical Inference", JASA 22, 1927:
    # the bounds are the p where |p_hat - p| = z sqrt(p(1-p)/n) (the defining equation; no table).
    k = data.draw(st.integers(0, n))
    z = 1.959963984540054
    for p in wilson_interval(k, n):
        if 0 < p < 1:
            assert abs(k / n - p) == pytest.approx(z * math.sqrt(p * (1 - p) / n), rel=1e-6, abs=1e-12)


def test_parsers() -> None:
    assert parse_classes("cfst, SAF") == ("SAF", "CFst")
    assert parse_classes(None) == CLASSES
    assert parse_universe("neighbors").kind == "neighbours"
    assert parse_universe("sample:12", 5).size == 12
    for bad in ("sample:0", "some", "sample:x"):
        with pytest.raises(FaultModelError):
            parse_universe(bad)
    with pytest.raises(FaultModelError, match="unknown fault class"):
        parse_classes("SAF,XYZ")
    with pytest.raises(FaultModelError, match="layout"):
        coverage("MATS+", Arrangement(8), universe="neighbours")


def test_json_has_the_documented_keys() -> None:
    doc = coverage("March C-", Arrangement(4), classes="SAF,AF").to_json()
    assert {"test", "words", "width", "universe", "classes"} <= set(doc)
    assert set(doc["classes"]) == {"SAF", "AF"}
    for entry in doc["classes"].values():
        assert {"faults", "detected", "partial", "coverage"} <= set(entry)
        assert 0.0 <= entry["coverage"] <= 1.0
    assert "not sign-off" in doc["note"]
    assert np.isclose(doc["classes"]["SAF"]["coverage"], 1.0)
