"""Mutation operators on Verilog source text: each finds the places it applies to and the edit.

A :class:`Mutant` is one text splice (offsets in the original file) with the operator that made it
and a one-line description; applying it never needs a parser. The operators:

* ``SWAP`` -- ``==``/``!=``, ``===``/``!==``, ``&``/``|``, ``&&``/``||``, ``+``/``-``, ``<``/``>=``
  and ``>`` to ``<=`` (``<=`` itself is left alone: it is also the non-blocking assignment);
* ``INVERT`` -- ``if (c)`` to ``if (!(c))``, the condition of ``c ? a : b`` when it is a name
  or a parenthesised group, and a unary ``!``/``~`` removed (``~cs_n`` to ``cs_n``);
* ``CONSTANT`` -- one bit of a sized literal flipped (lowest, highest and middle bit);
* ``INDEX`` -- ``[i]`` to ``[i+1]``, ``[7:0]`` to ``[6:0]`` and ``[7:1]``, ``[b +: 8]`` to ``[b +: 7]``;
* ``ENABLE`` / ``RESET`` -- ``if (en)`` to ``if (1'b1)`` (the enable dropped) and, when the
  condition names a reset, ``if (!rst_n)`` to ``if (1'b0)`` (the reset dropped);
* ``ARM`` -- an ``if`` arm, an ``else`` arm or a ``case`` item removed.

Places the module header, declarations and loop headers cover are never touched (context.py).
"""

from __future__ import annotations

import re
from collections.abc import Iterator
from dataclasses import dataclass
from enum import IntEnum
from pathlib import Path

from memcheck.mutation.context import frozen_tokens
from memcheck.mutation.tokens import Kind, Token, matching, statement_end, tokenize


class Operator(IntEnum):
    """The kinds of mutation (see the module docstring)."""

    SWAP = 0
    INVERT = 1
    CONSTANT = 2
    INDEX = 3
    ENABLE = 4
    RESET = 5
    ARM = 6

    @property
    def label(self) -> str:
        return _LABELS[self]


_LABELS = {
    Operator.SWAP: "operator swapped",
    Operator.INVERT: "condition inverted",
    Operator.CONSTANT: "constant bit flipped",
    Operator.INDEX: "index off by one",
    Operator.ENABLE: "enable dropped",
    Operator.RESET: "reset dropped",
    Operator.ARM: "arm removed",
}

SWAPS = {
    "==": "!=",
    "!=": "==",
    "===": "!==",
    "!==": "===",
    "&": "|",
    "|": "&",
    "&&": "||",
    "||": "&&",
    "+": "-",
    "-": "+",
    "<": ">=",
    ">=": "<",
    ">": "<=",
}
_RESET_NAME = re.compile(r"rst|reset|clr|clear", re.IGNORECASE)
_CONTROL_PREV = frozenset({"=", "(", "?", ":", ",", "<=", "{", "return"})


@dataclass(frozen=True)
class Mutant:
    """One small change to one source file: replace ``text[start:end]`` by ``replacement``."""

    file: Path
    operator: Operator
    line: int
    start: int
    end: int
    original: str
    replacement: str
    description: str

    def apply(self, text: str) -> str:
        """``text`` (the file's original contents) with the change made."""
        if text[self.start : self.end] != self.original:
            raise ValueError(f"{self.file}: the text at offset {self.start} is not {self.original!r}")
        return text[: self.start] + self.replacement + text[self.end :]

    @classmethod
    def from_edit(cls, file: Path | str, text: str, old: str, new: str, operator: Operator, description: str) -> Mutant:
        """A hand-made mutant: the one occurrence of ``old`` in ``text`` (the file's contents) replaced
        by ``new``.

        Raises
        ------
        ValueError
            ``old`` does not occur exactly once.
        """
        if text.count(old) != 1:
            raise ValueError(f"{file}: {old!r} occurs {text.count(old)} times; allowed: exactly once")
        start = text.index(old)
        line = text.count("\n", 0, start) + 1
        return cls(Path(file), operator, line, start, start + len(old), old, new, description)

    def key(self) -> tuple[str, int, int, int, str]:
        return (str(self.file), self.start, self.end, int(self.operator), self.replacement)


@dataclass(frozen=True)
class _Src:
    file: Path
    text: str
    tokens: list[Token]
    frozen: list[bool]

    def mutant(self, op: Operator, lo: int, hi: int, replacement: str, description: str) -> Mutant:
        """A mutant replacing tokens ``lo`` .. ``hi`` (inclusive)."""
        a, b = self.tokens[lo].start, self.tokens[hi].end
        return Mutant(self.file, op, self.tokens[lo].line, a, b, self.text[a:b], replacement, description)

    def span(self, lo: int, hi: int) -> str:
        return self.text[self.tokens[lo].start : self.tokens[hi].end]

    def free(self, lo: int, hi: int) -> bool:
        return not any(self.frozen[lo : hi + 1])


def _swaps(src: _Src) -> Iterator[Mutant]:
    for i, t in enumerate(src.tokens):
        if t.kind == Kind.OP and t.text in SWAPS and not src.frozen[i]:
            new = SWAPS[t.text]
            yield src.mutant(Operator.SWAP, i, i, new, f"'{t.text}' became '{new}'")


def _ternary_condition(src: _Src, q: int) -> int | None:
    """Index of the first token of the condition of the ``?`` at ``q`` (a name or a (group))."""
    toks = src.tokens
    prev = q - 1
    if prev < 1:
        return None
    if toks[prev].kind == Kind.NAME:
        first = prev
    elif toks[prev].text == ")":
        first = next((k for k in range(prev, -1, -1) if toks[k].text == "(" and matching(toks, k) == prev), -1)
        if first < 1:
            return None
    else:
        return None
    return first if toks[first - 1].text in _CONTROL_PREV else None


def _negates_operand(src: _Src, i: int) -> bool:
    """True for a unary ``!``/``~`` directly before a name or a parenthesised group."""
    toks = src.tokens
    return i + 1 < len(toks) and not src.frozen[i + 1] and (toks[i + 1].kind == Kind.NAME or toks[i + 1].text == "(")


def _conditions(src: _Src) -> Iterator[Mutant]:
    toks = src.tokens
    for i, t in enumerate(toks):
        if t.text == "if" and t.kind == Kind.NAME and i + 1 < len(toks) and toks[i + 1].text == "(":
            close = matching(toks, i + 1)
            if close is None or close == i + 2 or not src.free(i + 2, close - 1):
                continue
            cond = src.span(i + 2, close - 1)
            yield src.mutant(Operator.INVERT, i + 2, close - 1, f"!({cond})", f"if ({cond}) became if (!({cond}))")
            if _RESET_NAME.search(cond):
                yield src.mutant(Operator.RESET, i + 2, close - 1, "1'b0", f"if ({cond}) became if (1'b0)")
            else:
                yield src.mutant(Operator.ENABLE, i + 2, close - 1, "1'b1", f"if ({cond}) became if (1'b1)")
        elif t.text in ("!", "~") and not src.frozen[i] and _negates_operand(src, i):
            nxt = src.tokens[i + 1].text
            yield src.mutant(Operator.INVERT, i, i, "", f"'{t.text}' before '{nxt}' removed")
        elif t.text == "?" and not src.frozen[i]:
            first = _ternary_condition(src, i)
            if first is not None and src.free(first, i - 1):
                cond = src.span(first, i - 1)
                yield src.mutant(Operator.INVERT, first, i - 1, f"!({cond})", f"{cond} ? became !({cond}) ?")


_LITERAL = re.compile(r"(\d[\d_]*)\s*'([sS]?)([bBoOdDhH])\s*([0-9a-fA-F_]+)$")
_BASES = {"b": 2, "o": 8, "d": 10, "h": 16}


def flipped_literals(text: str) -> list[tuple[int, str]]:
    """The sized literal ``text`` with one bit flipped: (bit, new literal) for the lowest, middle and
    highest bit; empty for literals with x/z digits or that cannot be read."""
    m = _LITERAL.match(text)
    if m is None:
        return []
    width = int(m.group(1).replace("_", ""))
    sign, base = m.group(2), m.group(3).lower()
    digits = m.group(4).replace("_", "")
    if width < 1 or width > 4096:
        return []
    try:
        value = int(digits, _BASES[base])
    except ValueError:
        return []
    value &= (1 << width) - 1
    out = []
    for bit in sorted({0, width // 2, width - 1}):
        new = value ^ (1 << bit)
        out.append((bit, f"{width}'{sign}{base}{_digits(new, base, width)}"))
    return out


def _digits(value: int, base: str, width: int) -> str:
    if base == "d":
        return str(value)
    per = {"b": 1, "o": 3, "h": 4}[base]
    n = -(-width // per)
    fmt = {"b": "b", "o": "o", "h": "x"}[base]
    return format(value, f"0{n}{fmt}")


def _constants(src: _Src) -> Iterator[Mutant]:
    for i, t in enumerate(src.tokens):
        if t.kind == Kind.SIZED and not src.frozen[i]:
            for bit, new in flipped_literals(t.text):
                yield src.mutant(Operator.CONSTANT, i, i, new, f"bit {bit} of {t.text} flipped: {new}")


def _is_select(src: _Src, i: int) -> bool:
    """True when the ``[`` at ``i`` selects bits of something (after a name or another select)."""
    return i > 0 and (src.tokens[i - 1].kind == Kind.NAME or src.tokens[i - 1].text == "]")


def _index(src: _Src, i: int, close: int) -> Iterator[Mutant]:
    toks = src.tokens
    inner = toks[i + 1 : close]
    if len(inner) == 1 and inner[0].kind in (Kind.NAME, Kind.NUMBER) and inner[0].text.isidentifier():
        new = f"{inner[0].text}+1"
        yield src.mutant(Operator.INDEX, i + 1, i + 1, new, f"[{inner[0].text}] became [{new}]")
    elif len(inner) == 1 and inner[0].kind == Kind.NUMBER and inner[0].text.isdigit():
        new = str(int(inner[0].text) + 1)
        yield src.mutant(Operator.INDEX, i + 1, i + 1, new, f"[{inner[0].text}] became [{new}]")
    elif len(inner) == 3 and inner[1].text == ":" and all(t.text.isdigit() for t in (inner[0], inner[2])):
        hi, lo = int(inner[0].text), int(inner[2].text)
        if hi > lo:
            yield src.mutant(Operator.INDEX, i + 1, i + 1, str(hi - 1), f"[{hi}:{lo}] became [{hi - 1}:{lo}]")
            yield src.mutant(Operator.INDEX, i + 3, i + 3, str(lo + 1), f"[{hi}:{lo}] became [{hi}:{lo + 1}]")
    elif len(inner) >= 3 and inner[-2].text in ("+:", "-:") and inner[-1].text.isdigit() and int(inner[-1].text) > 1:
        w = int(inner[-1].text)
        yield src.mutant(
            Operator.INDEX, close - 1, close - 1, str(w - 1), f"width {w} of [{inner[-2].text}] became {w - 1}"
        )


def _indices(src: _Src) -> Iterator[Mutant]:
    for i, t in enumerate(src.tokens):
        if t.text != "[" or src.frozen[i] or not _is_select(src, i):
            continue
        close = matching(src.tokens, i)
        if close is not None and src.free(i, close):
            yield from _index(src, i, close)


def _case_items(src: _Src, i: int) -> Iterator[Mutant]:
    """Each item of the ``case`` at ``i`` removed."""
    toks = src.tokens
    after = matching(toks, i + 1) if i + 1 < len(toks) and toks[i + 1].text == "(" else None
    if after is None:
        return
    j = after + 1
    while j < len(toks) and toks[j].text != "endcase":
        colon = j
        depth = 0
        while colon < len(toks) and not (toks[colon].text == ":" and depth == 0):
            depth += toks[colon].text in ("(", "[", "{")
            depth -= toks[colon].text in (")", "]", "}")
            colon += 1
        if colon >= len(toks):
            return
        if toks[j].text == "default" and colon != j + 1:
            colon = j  # ``default stmt`` without a colon
        end = statement_end(toks, colon + 1)
        if end is None:
            return
        label = src.span(j, colon) if colon > j else "default"
        if src.free(j, end - 1):
            yield src.mutant(Operator.ARM, j, end - 1, "", f"case item '{label.rstrip(':').strip()}' removed")
        j = end


def _if_arms(src: _Src, i: int) -> Iterator[Mutant]:
    toks = src.tokens
    close = matching(toks, i + 1)
    if close is None:
        return
    then_end = statement_end(toks, close + 1)
    if then_end is None or not src.free(close + 1, then_end - 1):
        return
    cond = src.span(i + 2, close - 1)
    if toks[close + 1].text != ";":
        yield src.mutant(Operator.ARM, close + 1, then_end - 1, ";", f"the arm of if ({cond}) removed")
    if then_end < len(toks) and toks[then_end].text == "else":
        else_end = statement_end(toks, then_end + 1)
        if else_end is not None and src.free(then_end, else_end - 1):
            yield src.mutant(Operator.ARM, then_end, else_end - 1, "", f"the else arm of if ({cond}) removed")


def _arms(src: _Src) -> Iterator[Mutant]:
    toks = src.tokens
    for i, t in enumerate(toks):
        if t.kind != Kind.NAME or src.frozen[i] or i + 1 >= len(toks) or toks[i + 1].text != "(":
            continue
        if t.text in ("case", "casez", "casex"):
            yield from _case_items(src, i)
        elif t.text == "if":
            yield from _if_arms(src, i)


_FINDERS = (_swaps, _conditions, _constants, _indices, _arms)


def find_mutants(text: str, file: Path | str = "source.v") -> list[Mutant]:
    """Every mutant of one Verilog source, in file order (offset, then operator); two edits that give
    the same text are kept once."""
    toks = tokenize(text)
    src = _Src(Path(file), text, toks, frozen_tokens(toks))
    found = sorted((m for finder in _FINDERS for m in finder(src)), key=Mutant.key)
    seen: set[str] = set()
    out = []
    for m in found:
        new = m.apply(text)
        if new != text and new not in seen:
            seen.add(new)
            out.append(m)
    return out


__all__ = ["SWAPS", "Mutant", "Operator", "find_mutants", "flipped_literals"]
