"""Dynamic faults (two operations in a row), worked out by hand operation by operation, one test per
class, each checked on both engines.

Models: the established two-operation dynamic faults (write immediately followed by a read), as
listed in H.-J. Wunderlich (ed.), "Models in Hardware Testing", Springer 2010, ch. 6, sec. 6.4.4,
after S. Hamdioui, Z. Al-Ars and A.J. van de Goor, "Testing Static and Dynamic Faults in Random
Access Memories", IEEE VTS 2002 (value written from memory for the VTS 2002 paper).

"Two operations in a row" (docs/faults.md): the second operation follows the first back to back on
the same word within one element pass; an element boundary or a pause breaks the pair.
"""

from __future__ import annotations

import pytest

from memcheck.errors import FaultModelError
from memcheck.faults.fast import simulate
from memcheck.faults.geometry import Arrangement
from memcheck.faults.instances import Cell, CellFault, CouplingFault, FaultInstance, FaultResult
from memcheck.faults.primitives import fp, model_named, models_of
from memcheck.faults.reference import simulate_reference
from memcheck.march.notation import parse_march


def _both(notation: str, fault: FaultInstance, setup: Arrangement) -> FaultResult:
    test = parse_march(notation)
    (fast,) = simulate(test, [fault], setup)
    (ref,) = simulate_reference(test, [fault], setup)
    assert fast == ref
    return fast


def _cell(name: str, word: int = 0) -> CellFault:
    return CellFault(model_named(name), Cell(word))


def _pair(name: str, aggressor: int, victim: int) -> CouplingFault:
    return CouplingFault(model_named(name), Cell(aggressor), Cell(victim))


def test_drdf_write_then_read() -> None:
    # dRDF <0w1r1/0/0>, one word: w0 (cell 0); w1 (cell 1, it held 0); r1 right after: the cell flips
    # to 0 and the read returns 0, not 1 -> detected from either power-up state (w0 comes first).
    assert _both("{⇕(w0); ⇕(w1,r1)}", _cell("dRDF<0w1r1>"), Arrangement(1)).verdict == "detected"
    # The same w1 and r1 in two elements are not two operations in a row (by definition, even on a
    # one-word memory where nothing happens in between): not sensitised.
    assert _both("{⇕(w0); ⇕(w1); ⇕(r1)}", _cell("dRDF<0w1r1>"), Arrangement(1)).verdict == "escaped"
    # A pause between them breaks the pair too.
    assert _both("{⇕(w0); ⇕(w1); Del; ⇕(r1)}", _cell("dRDF<0w1r1>"), Arrangement(1)).verdict == "escaped"


def test_ddrdf_needs_a_second_read() -> None:
    # dDRDF <0w1r1/0/1>: w0; w1; r1 returns 1 (right) but leaves 0; nothing reads again -> escaped,
    # and the witness names the r1 (element 1, operation 2) that flipped the cell, never undone.
    r = _both("{⇕(w0); ⇕(w1,r1)}", _cell("dDRDF<0w1r1>", 1), Arrangement(2))
    assert r.verdict == "escaped" and r.witness is not None and r.witness.excited is not None
    assert (r.witness.excited.element, r.witness.excited.op, r.witness.excited.word) == (1, 1, 1)
    assert r.witness.masked is None
    # w0; w1; r1 (flips to 0, returns 1); r1 again: the cell holds 0, the read returns 0 -> detected.
    assert _both("{⇕(w0); ⇕(w1,r1,r1)}", _cell("dDRDF<0w1r1>", 1), Arrangement(2)).verdict == "detected"


def test_dirf_depends_on_the_value_before_the_write() -> None:
    # dIRF <1w0r0/0/1>: w1; w0 (the cell held 1); r0 right after returns 1 -> detected.
    assert _both("{⇕(w1); ⇕(w0,r0)}", _cell("dIRF<1w0r0>"), Arrangement(3)).verdict == "detected"
    # w0; w0 (the cell held 0, not 1); r0 returns 0: the primitive needs 1 before the write -> escaped.
    assert _both("{⇕(w0); ⇕(w0,r0)}", _cell("dIRF<1w0r0>"), Arrangement(3)).verdict == "escaped"


def test_dcfds_aggressor_written_and_read() -> None:
    # dCFds <0w1r1;0/1/->, aggressor word 0, victim word 1, ⇑ visits word 0 first:
    # w0 w0 (both 0); ⇑: word 0 r0, w1, r1 -> the victim (0) flips to 1; word 1 r0 returns 1 -> detected.
    test = "{⇕(w0); ⇑(r0,w1,r1)}"
    assert _both(test, _pair("dCFds<0w1r1;0>", 0, 1), Arrangement(2)).verdict == "detected"
    # Aggressor word 1: word 0 (the victim) is read and written to 1 first; when the aggressor is then
    # written and read the victim holds 1, not 0 -> never sensitised.
    assert _both(test, _pair("dCFds<0w1r1;0>", 1, 0), Arrangement(2)).verdict == "escaped"


def test_dcfrd_victim_written_and_read_while_aggressor_holds_one() -> None:
    # dCFrd <1;0w1r1/0/0>, aggressor word 0, victim word 1: w0 w0; ⇑: word 0 w1, r1 (aggressor 1);
    # word 1 (holding 0) w1, r1 right after while the aggressor holds 1 -> flips to 0, returns 0: detected.
    test = "{⇕(w0); ⇑(w1,r1)}"
    assert _both(test, _pair("dCFrd<1;0w1r1>", 0, 1), Arrangement(2)).verdict == "detected"
    # Aggressor word 1: the victim's w1, r1 run while the aggressor still holds 0 -> escaped.
    assert _both(test, _pair("dCFrd<1;0w1r1>", 1, 0), Arrangement(2)).verdict == "escaped"


def test_dcfdrd_needs_a_later_read() -> None:
    # dCFdrd <1;0w1r1/0/1>, aggressor word 0, victim word 1: as above, the victim's r1 returns 1 but
    # leaves 0; only the final ⇕(r1) sees it.
    pair = _pair("dCFdrd<1;0w1r1>", 0, 1)
    assert _both("{⇕(w0); ⇑(w1,r1)}", pair, Arrangement(2)).verdict == "escaped"
    assert _both("{⇕(w0); ⇑(w1,r1); ⇕(r1)}", pair, Arrangement(2)).verdict == "detected"


def test_dcfir_direction_matters() -> None:
    # dCFir <0;1w0r0/0/1>, aggressor word 1, victim word 0: w1 w1; ⇓ visits word 1 first: w0, r0
    # (aggressor 0); word 0 (holding 1) w0, r0 right after while the aggressor holds 0 -> returns 1.
    pair = _pair("dCFir<0;1w0r0>", 1, 0)
    assert _both("{⇕(w1); ⇓(w0,r0)}", pair, Arrangement(2)).verdict == "detected"
    # ⇑ visits the victim first, while the aggressor still holds 1 -> escaped.
    assert _both("{⇕(w1); ⇑(w0,r0)}", pair, Arrangement(2)).verdict == "escaped"


def test_intra_word_dynamic_coupling() -> None:
    # dCFds <0w1r1;1/0/->, aggressor bit 0 and victim bit 1 of one word, solid background (both bits
    # get the same value). w0: both 0. w1: victim 0->1, aggressor 0->1. r1 right after: the victim's
    # own read comes first and returns 1; then the aggressor's read (its w1, r1 in a row, victim
    # holding 1) flips the victim to 0 (docs/faults.md, "one word, two bits"). The same read saw 1,
    # so the fault escapes without another read and is caught by the final r1.
    f = CouplingFault(model_named("dCFds<0w1r1;1>"), Cell(0, 0), Cell(0, 1))
    solid = Arrangement(1, 2, backgrounds="solid")
    assert _both("{⇕(w0); ⇕(w1,r1)}", f, solid).verdict == "escaped"
    assert _both("{⇕(w0); ⇕(w1,r1); ⇕(r1)}", f, solid).verdict == "detected"


@pytest.mark.parametrize(
    ("cls", "count"), [("dRDF", 4), ("dDRDF", 4), ("dIRF", 4), ("dCFds", 8), ("dCFrd", 8), ("dCFdrd", 8), ("dCFir", 8)]
)
def test_published_primitive_counts(cls: str, count: int) -> None:
    # Four single-cell and eight two-cell primitives per class (Wunderlich (ed.) 2010, sec. 6.4.4).
    models = models_of(cls)
    assert len(models) == count and all(m.dynamic for m in models)
    assert len({m.notation for m in models}) == count


def test_dynamic_notation_round_trips_and_rejects_nonsense() -> None:
    for text in ("<0w1r1/0/0>", "<1;0w0r0/1/0>", "<0w1r1;1/0/->", "<1r1r1/0/0>"):
        assert fp(text).notation == text
    with pytest.raises(FaultModelError, match="read returns"):
        fp("<0w1r0/1/1>")  # a read right after writing 1 reads 1
    with pytest.raises(FaultModelError, match="pause"):
        fp("<0Tr0/1/1>")
    with pytest.raises(FaultModelError, match="only one cell"):
        fp("<0w1r1;0w0/1/->")
