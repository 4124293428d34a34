"""A small Verilog tokenizer for source mutation: just enough to find operators, conditions,
literals, selects and statement boundaries, never a full parser.

Comments, strings, attributes ``(* ... *)`` and compiler directives (`` `define `` lines whole, other
`` `timescale ``, `` `include `` and the like to the end of their line, other
directives as one token) are skipped, so a mutation never lands inside them. Each token keeps its
character offsets in the original text, so a mutation is a plain text splice.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from enum import IntEnum


class Kind(IntEnum):
    """What a token is."""

    NAME = 0  # identifiers, keywords and $system names
    NUMBER = 1  # unsized numbers
    SIZED = 2  # sized literals such as 4'b1010
    OP = 3  # operators and punctuation


@dataclass(frozen=True)
class Token:
    """One token: its kind, text, offsets in the source and 1-based line."""

    kind: Kind
    text: str
    start: int
    end: int
    line: int


_SKIP = re.compile(
    r"""
    (?P<ws>\s+)
  | (?P<line_comment>//[^\n]*)
  | (?P<block_comment>/\*.*?\*/)
  | (?P<string>"(?:\\.|[^"\\\n])*")
  | (?P<attribute>\(\*(?!\s*\))[^\n]*?\*\))
  | (?P<define>`define(?:[^\n\\]|\\\n|\\.)*)
  | (?P<line_directive>`(?:timescale|include|default_nettype|undef|line|pragma)\b[^\n]*)
  | (?P<directive>`[A-Za-z_]\w*)
    """,
    re.VERBOSE | re.DOTALL,
)
_SIZED = re.compile(r"\d[\d_]*\s*'[sS]?[bBoOdDhH]\s*[0-9a-fA-FxXzZ?_]+")
_UNSIZED_BASED = re.compile(r"'[sS]?[bBoOdDhH]\s*[0-9a-fA-FxXzZ?_]+|'[01xXzZ]")
_NUMBER = re.compile(r"\d[\d_]*(?:\.\d+)?(?:[eE][+-]?\d+)?")
_NAME = re.compile(r"[A-Za-z_$][\w$]*|\\\S+")
_OPS = (
    "<<<",
    ">>>",
    "===",
    "!==",
    "==",
    "!=",
    "&&",
    "||",
    "<=",
    ">=",
    "<<",
    ">>",
    "~&",
    "~|",
    "~^",
    "^~",
    "+:",
    "-:",
    "**",
    "->",
)
_SINGLE = set("+-*/%&|^~!<>=?:;,.()[]{}#@")


def _next_token(text: str, pos: int) -> tuple[Kind, int]:
    for kind, pattern in ((Kind.SIZED, _SIZED), (Kind.NUMBER, _UNSIZED_BASED), (Kind.NUMBER, _NUMBER)):
        m = pattern.match(text, pos)
        if m:
            return kind, m.end()
    m = _NAME.match(text, pos)
    if m:
        return Kind.NAME, m.end()
    for op in _OPS:
        if text.startswith(op, pos):
            return Kind.OP, pos + len(op)
    return Kind.OP, pos + 1


def tokenize(text: str) -> list[Token]:
    """The tokens of ``text`` (comments, strings, attributes and directives left out)."""
    out: list[Token] = []
    pos = 0
    line = 1
    n = len(text)
    while pos < n:
        m = _SKIP.match(text, pos)
        if m:
            line += text.count("\n", pos, m.end())
            pos = m.end()
            continue
        kind, end = _next_token(text, pos)
        out.append(Token(kind, text[pos:end], pos, end, line))
        line += text.count("\n", pos, end)
        pos = end
    return out


def matching(tokens: list[Token], i: int) -> int | None:
    """Index of the bracket closing the one at ``tokens[i]`` (``(``, ``[`` or ``{``); None if unclosed."""
    pairs = {"(": ")", "[": "]", "{": "}"}
    opener = tokens[i].text
    closer = pairs[opener]
    depth = 0
    for j in range(i, len(tokens)):
        t = tokens[j].text
        if t == opener:
            depth += 1
        elif t == closer:
            depth -= 1
            if depth == 0:
                return j
    return None


def _block_end(tokens: list[Token], i: int, opener: str, closers: tuple[str, ...]) -> int | None:
    depth = 0
    for j in range(i, len(tokens)):
        t = tokens[j]
        if t.kind != Kind.NAME:
            continue
        if t.text == opener or (opener == "case" and t.text in ("casez", "casex")):
            depth += 1
        elif t.text in closers:
            depth -= 1
            if depth == 0:
                return j + 1
    return None


def _after_parens(tokens: list[Token], i: int) -> int | None:
    """Index after the parenthesised group starting at ``i`` (None if there is none)."""
    if i >= len(tokens) or tokens[i].text != "(":
        return None
    close = matching(tokens, i)
    return None if close is None else close + 1


def semicolon_at(tokens: list[Token], i: int) -> int | None:
    """Index of the first ``;`` from ``i`` outside brackets (None if there is none)."""
    depth = 0
    for j in range(i, len(tokens)):
        t = tokens[j].text
        if t in ("(", "[", "{"):
            depth += 1
        elif t in (")", "]", "}"):
            depth -= 1
        elif t == ";" and depth <= 0:
            return j
    return None


def _simple_end(tokens: list[Token], i: int) -> int | None:
    j = semicolon_at(tokens, i)
    return None if j is None else j + 1


def _control_end(tokens: list[Token], i: int) -> int | None:
    """End of ``@(...) stmt`` or ``#d stmt``."""
    j = i + 1
    if j < len(tokens) and tokens[j].text == "(":
        after = _after_parens(tokens, j)
        if after is None:
            return None
        j = after
    else:
        j += 1
    return statement_end(tokens, j)


def statement_end(tokens: list[Token], i: int) -> int | None:
    """Index of the token after the procedural statement starting at ``tokens[i]`` (None if the
    statement cannot be delimited)."""
    if i >= len(tokens):
        return None
    t = tokens[i].text
    if t == "begin":
        return _block_end(tokens, i, "begin", ("end",))
    if t in ("case", "casez", "casex"):
        return _block_end(tokens, i, "case", ("endcase",))
    if t == "if":
        after = _after_parens(tokens, i + 1)
        then_end = None if after is None else statement_end(tokens, after)
        if then_end is not None and then_end < len(tokens) and tokens[then_end].text == "else":
            return statement_end(tokens, then_end + 1)
        return then_end
    if t in ("for", "while", "repeat"):
        after = _after_parens(tokens, i + 1)
        return None if after is None else statement_end(tokens, after)
    if t == "forever":
        return statement_end(tokens, i + 1)
    if t in ("@", "#"):
        return _control_end(tokens, i)
    return _simple_end(tokens, i)


__all__ = ["Kind", "Token", "matching", "semicolon_at", "statement_end", "tokenize"]
