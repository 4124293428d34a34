"""March notation: frozen data types for a March test and a parser/printer for its two spellings.

A March test is a sequence of *elements* inside braces, separated by ``;``. Each element has an
address order and a list of operations::

    {⇕(w0); ⇑(r0,w1); ⇑(r1,w0); ⇓(r0,w1); ⇓(r1,w0); ⇕(r0)}            (Unicode, as published)
    {any(w0); up(r0,w1); up(r1,w0); down(r0,w1); down(r1,w0); any(r0)}  (our ASCII spelling)

``⇑``/``up`` is ascending address order, ``⇓``/``down`` descending, ``⇕``/``any`` either (the
expander uses the up order). ``r0``/``w1`` read/write the data background (0) or its complement (1).
A pause element for data-retention testing is written ``Del`` (Unicode) or ``del`` (ASCII),
optionally with a label: ``del(100ms)``.

Both spellings round-trip exactly: ``parse_march(t.to_unicode()) == t == parse_march(t.to_ascii())``.
Parsing is lenient about whitespace, letter case, arrow variants (``↑ ↓ ↕``) and the outer braces;
printing is canonical.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Literal

from memcheck.errors import NotationError

Order = Literal["up", "down", "any"]
OpKindRW = Literal["r", "w"]
Bit = Literal[0, 1]

ORDERS: tuple[Order, ...] = ("up", "down", "any")

UNICODE_ARROW: dict[str, str] = {"up": "⇑", "down": "⇓", "any": "⇕"}
_ARROWS: dict[str, Order] = {
    "⇑": "up",
    "↑": "up",
    "⇓": "down",
    "↓": "down",
    "⇕": "any",
    "↕": "any",
    "⇳": "any",
}
_WORDS: dict[str, Order] = {"up": "up", "down": "down", "any": "any"}
_LABEL_RE = re.compile(r"[A-Za-z0-9_.+\-]*")


@dataclass(frozen=True, slots=True)
class MarchOp:
    """One operation on the current word: read-and-compare or write, of the background (0) or its
    complement (1)."""

    kind: OpKindRW
    value: Bit

    def __post_init__(self) -> None:
        if self.kind not in ("r", "w") or self.value not in (0, 1) or isinstance(self.value, bool):
            raise NotationError(f"a March operation is r0, r1, w0 or w1, not {self.kind!r}{self.value!r}")

    def __str__(self) -> str:
        return f"{self.kind}{self.value}"


@dataclass(frozen=True, slots=True)
class MarchElement:
    """Operations applied, in order, to each address before moving to the next address."""

    order: Order
    ops: tuple[MarchOp, ...]

    def __post_init__(self) -> None:
        if self.order not in ORDERS:
            raise NotationError(f"a March element order is one of {', '.join(ORDERS)}, not {self.order!r}")
        if not isinstance(self.ops, tuple) or not self.ops:
            raise NotationError("a March element needs at least one operation (as a tuple of MarchOp)")
        if not all(isinstance(op, MarchOp) for op in self.ops):
            raise NotationError("March element operations must be MarchOp values")

    def _body(self) -> str:
        return "(" + ",".join(str(op) for op in self.ops) + ")"

    def to_unicode(self) -> str:
        return UNICODE_ARROW[self.order] + self._body()

    def to_ascii(self) -> str:
        return self.order + self._body()


@dataclass(frozen=True, slots=True)
class Delay:
    """A pause with no operations (data-retention testing); the label is free text such as ``100ms``.

    Labels are limited to letters, digits and ``_ . + -`` so the notation round-trips exactly.
    """

    label: str = ""

    def __post_init__(self) -> None:
        if not isinstance(self.label, str) or _LABEL_RE.fullmatch(self.label) is None:
            raise NotationError(f"a delay label may use only letters, digits and _ . + - (got {self.label!r})")

    def _suffix(self) -> str:
        return f"({self.label})" if self.label else ""

    def to_unicode(self) -> str:
        return "Del" + self._suffix()

    def to_ascii(self) -> str:
        return "del" + self._suffix()


@dataclass(frozen=True, slots=True)
class MarchTest:
    """A March test: its elements in order and an optional name (the name is not part of equality,
    so a named library test equals the parse of its own notation)."""

    elements: tuple[MarchElement | Delay, ...]
    name: str | None = field(default=None, compare=False)

    def __post_init__(self) -> None:
        if not isinstance(self.elements, tuple):
            raise NotationError("March test elements must be a tuple")
        if not all(isinstance(e, MarchElement | Delay) for e in self.elements):
            raise NotationError("March test elements must be MarchElement or Delay values")
        if not any(isinstance(e, MarchElement) for e in self.elements):
            raise NotationError("a March test needs at least one element with operations")

    @property
    def length(self) -> int:
        """Operations per word (delays excluded): the ``k`` of a ``kn`` test, e.g. 10 for March C-."""
        return sum(len(e.ops) for e in self.elements if isinstance(e, MarchElement))

    @property
    def march_elements(self) -> tuple[MarchElement, ...]:
        """The elements that carry operations (delays dropped)."""
        return tuple(e for e in self.elements if isinstance(e, MarchElement))

    @property
    def delays(self) -> int:
        """Number of delay (pause) elements."""
        return sum(1 for e in self.elements if isinstance(e, Delay))

    def to_unicode(self) -> str:
        return "{" + "; ".join(e.to_unicode() for e in self.elements) + "}"

    def to_ascii(self) -> str:
        return "{" + "; ".join(e.to_ascii() for e in self.elements) + "}"

    def __str__(self) -> str:
        return self.to_unicode()


class _Parser:
    """Recursive-descent parser; every failure raises NotationError at the offending character."""

    def __init__(self, text: str) -> None:
        self.text = text
        self.pos = 0

    # --- helpers -------------------------------------------------------------------------------
    def fail(self, expected: str, pos: int | None = None) -> NotationError:
        at = self.pos if pos is None else pos
        found = "end of text" if at >= len(self.text) else repr(self.text[at])
        return NotationError(
            f"bad March notation at character {at + 1}: expected {expected}, found {found}", self.text, at
        )

    def skip_ws(self) -> None:
        while self.pos < len(self.text) and self.text[self.pos].isspace():
            self.pos += 1

    def peek(self) -> str:
        return self.text[self.pos] if self.pos < len(self.text) else ""

    def expect(self, ch: str, what: str) -> None:
        self.skip_ws()
        if self.peek() != ch:
            raise self.fail(what)
        self.pos += 1

    def word(self) -> str:
        start = self.pos
        while self.pos < len(self.text) and self.text[self.pos].isascii() and self.text[self.pos].isalpha():
            self.pos += 1
        return self.text[start : self.pos]

    # --- grammar -------------------------------------------------------------------------------
    def parse(self) -> MarchTest:
        self.skip_ws()
        braced = self.peek() == "{"
        if braced:
            self.pos += 1
        elements: list[MarchElement | Delay] = []
        while True:
            elements.append(self.element())
            self.skip_ws()
            if self.peek() == ";":
                self.pos += 1
                continue
            break
        self.skip_ws()
        if braced:
            if self.peek() != "}":
                raise self.fail("';' or '}'")
            self.pos += 1
            self.skip_ws()
        if self.pos < len(self.text):
            raise self.fail("end of text" if braced else "';' or end of text")
        if not any(isinstance(e, MarchElement) for e in elements):
            raise NotationError(
                "a March test needs at least one element with operations, not only delays", self.text, 0
            )
        return MarchTest(tuple(elements))

    def element(self) -> MarchElement | Delay:
        self.skip_ws()
        start = self.pos
        ch = self.peek()
        if ch in _ARROWS:
            self.pos += 1
            return MarchElement(_ARROWS[ch], self.ops())
        w = self.word().lower()
        if w in _WORDS:
            return MarchElement(_WORDS[w], self.ops())
        if w == "del":
            return self.delay()
        raise self.fail("an element: an order (⇑ ⇓ ⇕ or up/down/any) or a delay (del)", start)

    def ops(self) -> tuple[MarchOp, ...]:
        self.expect("(", "'(' opening the element's operations")
        out: list[MarchOp] = []
        while True:
            self.skip_ws()
            start = self.pos
            kind = self.peek().lower()
            if kind not in ("r", "w"):
                raise self.fail("an operation r0, r1, w0 or w1", start)
            self.pos += 1
            bit = self.peek()
            if bit not in ("0", "1"):
                raise self.fail(f"0 or 1 after '{self.text[start]}'")
            self.pos += 1
            out.append(MarchOp("r" if kind == "r" else "w", 0 if bit == "0" else 1))
            self.skip_ws()
            if self.peek() == ",":
                self.pos += 1
                continue
            if self.peek() == ")":
                self.pos += 1
                return tuple(out)
            raise self.fail("',' or ')'")

    def delay(self) -> Delay:
        save = self.pos
        self.skip_ws()
        if self.peek() != "(":
            self.pos = save
            return Delay()
        self.pos += 1
        self.skip_ws()
        start = self.pos
        m = _LABEL_RE.match(self.text, self.pos)
        label = m.group(0) if m else ""
        self.pos = start + len(label)
        self.skip_ws()
        if self.peek() != ")":
            raise self.fail("a delay label (letters, digits, _ . + -) then ')'")
        self.pos += 1
        return Delay(label)


def parse_march(text: str) -> MarchTest:
    """Parse March notation in either spelling; raise NotationError pointing at the bad character."""
    if not isinstance(text, str):
        raise NotationError(f"March notation must be text, not {type(text).__name__}")
    return _Parser(text).parse()
