"""March notation: parsing, printing, exact round-trips and error positions."""

from __future__ import annotations

import contextlib
from collections.abc import Callable
from typing import Any, cast

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from memcheck.errors import NotationError
from memcheck.march import Delay, MarchElement, MarchOp, MarchTest, parse_march

ops = st.builds(MarchOp, st.sampled_from(["r", "w"]), st.sampled_from([0, 1]))
elements = st.builds(
    MarchElement, st.sampled_from(["up", "down", "any"]), st.lists(ops, min_size=1, max_size=8).map(tuple)
)
delays = st.builds(Delay, st.from_regex(r"[A-Za-z0-9_.+\-]{0,6}", fullmatch=True))
march_tests = (
    st.lists(st.one_of(elements, elements, elements, delays), min_size=1, max_size=8)
    .filter(lambda es: any(isinstance(e, MarchElement) for e in es))
    .map(lambda es: MarchTest(tuple(es)))
)


@settings(max_examples=200, deadline=None)
@given(march_tests)
def test_round_trip_both_spellings(test: MarchTest) -> None:
    uni, asc = test.to_unicode(), test.to_ascii()
    assert parse_march(uni) == test
    assert parse_march(asc) == test
    assert parse_march(uni).to_unicode() == uni
    assert parse_march(asc).to_ascii() == asc
    assert test.length == sum(len(e.ops) for e in test.elements if isinstance(e, MarchElement))


@settings(max_examples=300, deadline=None)
@given(march_tests, st.data())
def test_broken_strings_raise_only_notation_error(test: MarchTest, data: st.DataObject) -> None:
    text = data.draw(st.sampled_from([test.to_unicode(), test.to_ascii()]))
    # mutate: delete, insert or replace one character
    pos = data.draw(st.integers(0, len(text)))
    junk = data.draw(st.sampled_from(list("{}();,rw01xyz⇑⇓⇕ ud-9#")))
    mode = data.draw(st.sampled_from(["delete", "insert", "replace"]))
    if mode == "delete" and pos < len(text):
        broken = text[:pos] + text[pos + 1 :]
    elif mode == "insert":
        broken = text[:pos] + junk + text[pos:]
    else:
        broken = text[:pos] + junk + text[pos + 1 :]
    try:
        parsed = parse_march(broken)
    except NotationError as exc:
        assert exc.text == broken
        assert -1 <= exc.position <= len(broken)
    else:
        assert isinstance(parsed, MarchTest)


@settings(max_examples=200, deadline=None)
@given(st.text(max_size=40))
def test_arbitrary_text_raises_only_notation_error(text: str) -> None:
    with contextlib.suppress(NotationError):
        parse_march(text)


def test_march_c_minus_prints_as_published() -> None:
    # A.J. van de Goor, "Using March Tests to Test SRAMs", IEEE Design & Test of Computers, 1993
    # (notation: value written from memory; table/page not checked).
    t = parse_march("{⇕(w0); ⇑(r0,w1); ⇑(r1,w0); ⇓(r0,w1); ⇓(r1,w0); ⇕(r0)}")
    assert t.length == 10
    assert t.to_unicode() == "{⇕(w0); ⇑(r0,w1); ⇑(r1,w0); ⇓(r0,w1); ⇓(r1,w0); ⇕(r0)}"
    assert t.to_ascii() == "{any(w0); up(r0,w1); up(r1,w0); down(r0,w1); down(r1,w0); any(r0)}"
    assert t.elements[1] == MarchElement("up", (MarchOp("r", 0), MarchOp("w", 1)))


def test_lenient_input_canonical_output() -> None:
    t = parse_march("  ↑ ( R0 , W1 ) ;DEL( 100ms ); ↕(r1)  ")
    assert t.to_unicode() == "{⇑(r0,w1); Del(100ms); ⇕(r1)}"
    assert t.to_ascii() == "{up(r0,w1); del(100ms); any(r1)}"
    assert t.length == 3 and t.delays == 1


def test_name_is_not_part_of_equality() -> None:
    a = MarchTest((MarchElement("up", (MarchOp("w", 0),)),), name="mine")
    assert a == parse_march(a.to_ascii())
    assert hash(a) == hash(parse_march(a.to_unicode()))


@pytest.mark.parametrize(
    ("text", "position", "expected"),
    [
        ("{up(w0)", 7, "';' or '}'"),
        ("{up(w2)}", 5, "0 or 1"),
        ("{side(w0)}", 1, "an element"),
        ("{up(w0,)}", 7, "an operation"),
        ("{up(w0)} x", 9, "end of text"),
        ("{up w0}", 4, "'('"),
        ("{up(w0) down(r0)}", 8, "';' or '}'"),
        ("", 0, "an element"),
    ],
)
def test_error_points_at_character_and_says_what_was_expected(text: str, position: int, expected: str) -> None:
    with pytest.raises(NotationError) as info:
        parse_march(text)
    assert info.value.position == position
    assert f"expected {expected}" in str(info.value)
    if text:
        assert " " * position + "^" in str(info.value)


def test_only_delays_rejected() -> None:
    with pytest.raises(NotationError, match="at least one element"):
        parse_march("{del; del}")


@pytest.mark.parametrize(
    "make",
    [
        lambda: MarchOp(cast(Any, "x"), 0),  # values outside the declared types, on purpose
        lambda: MarchOp("r", cast(Any, 2)),
        lambda: MarchElement(cast(Any, "sideways"), (MarchOp("r", 0),)),
        lambda: MarchElement("up", ()),
        lambda: Delay("a b"),
        lambda: MarchTest((Delay(),)),
    ],
)
def test_constructors_reject_values_that_cannot_round_trip(make: Callable[[], object]) -> None:
    with pytest.raises(NotationError):
        make()
