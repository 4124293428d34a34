"""Published claims about March tests, reproduced by the fault simulator.

Each check names its source. None of the claims below was checked against a table, figure or page
of its publication: each is flagged "value written from memory; table/page not checked", so a
reader knows which to verify first. What the simulator itself computes is checked elsewhere against
an independent second engine (tests/test_faults_engines.py).
Memories are small (the claims are about every address, so 8 words already exercise every relative
position) and bit-oriented unless stated.
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from memcheck.faults.coverage import CoverageReport, coverage
from memcheck.faults.geometry import Arrangement
from memcheck.march.notation import Bit, MarchElement, MarchOp, MarchTest
from tests.fault_strategies import BITS, ORDERS, flip, march_tests

STATIC_SINGLE = ("SAF", "TF", "WDF", "RDF", "DRDF", "IRF")
STATIC_TWO_CELL = ("CFst", "CFds", "CFtr", "CFwd", "CFrd", "CFdrd", "CFir")


def _report(test: str, words: int = 8, order: str = "linear") -> CoverageReport:
    return coverage(test, Arrangement(words, order=order))


def _full(report: CoverageReport, classes: tuple[str, ...]) -> dict[str, float]:
    return {c: report[c].coverage for c in classes}


def test_mats_plus_detects_saf_and_af_not_all_tf() -> None:
    # A.J. van de Goor, "Testing Semiconductor Memories: Theory and Practice", Wiley, 1991 (MATS+ detects
    # all SAFs and AFs; transition faults need MATS++). value written from memory; table/page not checked.
    r = _report("MATS+")
    assert _full(r, ("SAF", "AF")) == {"SAF": 1.0, "AF": 1.0}
    assert r["TF"].coverage < 1.0
    # the cell that cannot fall is only caught if it powered up at 1 (the last w0 is never read back)
    assert r["TF"].by_model[1].label == "TF↓" and r["TF"].by_model[1].detected == 0


def test_mats_plus_plus_adds_tf() -> None:
    # van de Goor 1991 (as above): MATS++ detects all SAFs, AFs and TFs. value written from memory; table/page not
    # checked.
    r = _report("MATS++")
    assert _full(r, ("SAF", "AF", "TF")) == {"SAF": 1.0, "AF": 1.0, "TF": 1.0}


def test_march_x_adds_cfin() -> None:
    # van de Goor 1991 (as above): March X detects SAFs, AFs, TFs and CFins. value written from memory; table/page not
    # checked.
    r = _report("March X")
    assert _full(r, ("SAF", "AF", "TF", "CFin")) == dict.fromkeys(("SAF", "AF", "TF", "CFin"), 1.0)
    assert _report("MATS++")["CFin"].coverage < 1.0  # what March X adds


def test_march_c_minus_unlinked_faults() -> None:
    # A.J. van de Goor, "Using March Tests to Test SRAMs", IEEE Design & Test of Computers 10(1), 1993:
    # March C- detects all unlinked SAFs, TFs, AFs, CFins, CFids and CFsts (aggressor below and above).
    # Value written from memory; table/page not checked.
    classes = ("SAF", "TF", "AF", "CFin", "CFid", "CFst")
    r = _report("March C-")
    assert _full(r, classes) == dict.fromkeys(classes, 1.0)
    for cls in ("CFin", "CFid", "CFst"):
        assert {b.label for b in r[cls].by_scope} == {"aggressor below", "aggressor above"}


def test_march_ss_detects_all_static_simple_faults() -> None:
    # S. Hamdioui, A.J. van de Goor and M. Rodgers, "March SS: a Test for All Static Simple RAM Faults",
    # IEEE MTDT, 2002: all static simple single-cell and two-cell faults, including the read-disturb
    # faults (DRDF, CFdrd) and write-disturb faults (WDF, CFwd) that March C- misses. Value written from
    # memory; table/page not checked.
    r = _report("March SS")
    assert _full(r, STATIC_SINGLE + STATIC_TWO_CELL) == dict.fromkeys(STATIC_SINGLE + STATIC_TWO_CELL, 1.0)
    c = _report("March C-")
    for cls in ("DRDF", "CFdrd"):
        assert c[cls].coverage == 0.0  # no read of March C- is followed by a second read of the same value
    for cls in ("WDF", "CFwd", "CFds"):
        assert c[cls].coverage < 1.0


def test_retention_needs_a_pause() -> None:
    # van de Goor 1991 (as above): data-retention faults need delay elements (March G has two). Value
    # written from memory; table/page not checked.
    assert _report("March G")["DRF"].coverage == 1.0
    assert _report("March SS")["DRF"].coverage == 0.0


def test_stuck_open_needs_a_read_after_the_write() -> None:
    # van de Goor 1991 (as above): MATS++ detects stuck-open faults thanks to the final r0 of
    # ⇓(r1,w0,r0), which reads a value different from the read just before it; MATS+ does not.
    # Value written from memory; table/page not checked.
    assert _report("MATS++")["SOF"].coverage == 1.0
    assert _report("MATS+")["SOF"].coverage < 1.0


def test_word_oriented_backgrounds_expose_intra_word_coupling() -> None:
    # A.J. van de Goor and I.B.S. Tlili, "A Systematic Method for Modifying March Tests for Bit-Oriented
    # Memories into Tests for Word-Oriented Memories", IEEE Trans. Computers 52(10), 2003 (value written
    # from memory; table/page not checked):
    # with one solid background the two bits of a word are always written alike, so half the intra-word
    # state and idempotent coupling faults escape; the log2(width)+1 standard backgrounds catch them.
    solid = coverage("March C-", Arrangement(4, 4, backgrounds="solid"), classes="CFst,CFid")
    standard = coverage("March C-", Arrangement(4, 4, backgrounds="standard"), classes="CFst,CFid")
    for cls in ("CFst", "CFid"):
        intra_solid = next(b for b in solid[cls].by_scope if b.label == "intra-word")
        intra_std = next(b for b in standard[cls].by_scope if b.label == "intra-word")
        assert intra_solid.detected * 2 == intra_solid.faults
        assert intra_std.detected == intra_std.faults
        assert standard[cls].coverage == 1.0


@st.composite
def _af_condition_tests(draw: st.DrawFn) -> MarchTest:
    """Tests holding ⇑(rx,…,w¬x) and ⇓(r¬x,…,wx) with the memory at x when the ⇑ element starts."""
    x = draw(st.sampled_from(BITS))
    prefix = draw(march_tests(max_elements=2, max_ops=3, delays=False)).elements if draw(st.booleans()) else ()

    def middle(start: Bit) -> list[MarchOp]:
        ops, state = [], start
        for _ in range(draw(st.integers(0, 3))):
            if draw(st.booleans()):
                state = draw(st.sampled_from(BITS))
                ops.append(MarchOp("w", state))
            else:
                ops.append(MarchOp("r", state))
        return ops

    up = MarchElement("up", (MarchOp("r", x), *middle(x), MarchOp("w", flip(x))))
    down = MarchElement("down", (MarchOp("r", flip(x)), *middle(flip(x)), MarchOp("w", x)))
    init = MarchElement(draw(st.sampled_from(ORDERS)), (MarchOp("w", x),))
    between = (MarchElement("any", (MarchOp("r", flip(x)),)),) if draw(st.booleans()) else ()
    pair = (up, *between, down) if draw(st.booleans()) else (down, up)
    if pair[0] is down:  # start the ⇓ element from ¬x instead
        init = MarchElement(init.order, (MarchOp("w", flip(x)),))
    return MarchTest((*prefix, init, *pair))


@settings(max_examples=30)
@given(
    test=_af_condition_tests(), words=st.integers(2, 9), order=st.sampled_from(("linear", "gray", "complement", "lfsr"))
)
def test_sufficient_condition_for_address_decoder_faults(test: MarchTest, words: int, order: str) -> None:
    # van de Goor 1991 (as above; condition written from memory, table/page not checked): a March test containing
    # ⇑(rx,…,w¬x) and ⇓(r¬x,…,wx) detects all address-decoder faults, for any address order whose ⇓ is the reverse of
    # ⇑ (with our read conventions: no cell reached -> a fixed unknown value; two cells -> wired AND/OR).
    assert coverage(test, Arrangement(words, order=order), classes="AF")["AF"].coverage == 1.0


@pytest.mark.parametrize("test", ["MATS+", "March C-", "March SS"])
def test_claims_hold_for_every_address_order(test: str) -> None:
    # van de Goor 1991 (as above): up and down only need to be each other's reverse, so a March test's
    # coverage of these classes does not depend on the address order. Value written from memory;
    # table/page not checked.
    base = _report(test)
    for order in ("gray", "complement", "lfsr"):
        other = _report(test, order=order)
        for cls in ("SAF", "TF", "AF", "CFin", "CFid", "CFst"):
            if base[cls].coverage == 1.0:
                assert other[cls].coverage == 1.0, (order, cls)


DYNAMIC = ("dRDF", "dDRDF", "dIRF", "dCFds", "dCFrd", "dCFdrd", "dCFir")


@pytest.mark.parametrize("name", ["March RAW", "March AB"])
def test_dynamic_tests_detect_all_read_after_write_faults(name: str) -> None:
    # S. Hamdioui, Z. Al-Ars and A.J. van de Goor, "Testing Static and Dynamic Faults in Random Access Memories",
    # VTS 2002 (March RAW); A. Benso, A. Bosio, S. Di Carlo, G. Di Natale and P. Prinetto, "March AB, March AB1:
    # New March Tests for Unlinked Dynamic Memory Faults", ITC 2005 (March AB): every two-operation
    # (write then read) dynamic fault, single-cell and two-cell. Value written from memory; table/page not checked.
    r = _report(name)
    assert _full(r, DYNAMIC) == dict.fromkeys(DYNAMIC, 1.0)
    # and the order of the pair matters: reversing the walk of every element keeps the claim
    assert _full(_report(name, order="complement"), DYNAMIC) == dict.fromkeys(DYNAMIC, 1.0)


def test_static_tests_miss_transition_then_read_dynamic_faults() -> None:
    # March SS (Hamdioui, van de Goor and Rodgers, MTDT 2002, as above) targets static faults only: it never
    # reads right after a transition write, so the <0w1r1/...> and <1w0r0/...> halves of each dynamic class
    # escape (consequence of the notation, worked out by hand). March MSS has no write followed by a read at all.
    r = _report("March SS")
    for cls in ("dRDF", "dIRF"):
        assert r[cls].coverage == 0.5
        assert {m.label for m in r[cls].by_model if m.detected == 0} == {f"{cls}<0w1r1>", f"{cls}<1w0r0>"}
    assert all(_report("March MSS")[c].coverage == 0.0 for c in DYNAMIC)


def test_march_mss_detects_all_static_simple_faults_in_18n() -> None:
    # G. Harutunyan, V.A. Vardanian and Y. Zorian, "Minimal March Tests for Unlinked Static Faults in Random Access
    # Memories", VTS 2005: all unlinked static single-cell and two-cell faults, 18n against March SS's 22n.
    # Value written from memory; table/page not checked.
    r = _report("March MSS")
    assert _full(r, STATIC_SINGLE + STATIC_TWO_CELL) == dict.fromkeys(STATIC_SINGLE + STATIC_TWO_CELL, 1.0)


@pytest.mark.parametrize(
    ("name", "classes"),
    [
        ("March C+", ("SAF", "AF", "TF", "CFin", "CFid", "CFst", "SOF")),
        ("PMOVI", ("SAF", "AF", "TF", "CFin")),
        ("March LA", ("SAF", "AF", "TF", "CFin", "CFid", "CFst")),
    ],
)
def test_more_static_claims(name: str, classes: tuple[str, ...]) -> None:
    # March C+: R.D. Adams, "High Performance Memory Testing", Kluwer 2003. PMOVI: J.H. de Jonge and
    # A.J. Smeulders, Computer Design 1976 (claims as summarised in van de Goor 1991). March LA: A.J. van de Goor,
    # G.N. Gaydadjiev, V.G. Mikitjuk and V.N. Yarmolik, ED&TC 1997 (unlinked part of the claim only; linked
    # faults are not modelled). Value written from memory; table/page not checked.
    assert _full(_report(name), classes) == dict.fromkeys(classes, 1.0)
