"""Which tokens of a Verilog source may be mutated.

Left alone, because a change there only breaks elaboration or the pins rather than the behaviour:
module headers (ports and their widths), declaration ranges and parameter/genvar/integer
declarations, ``for`` loop headers (a changed step could make elaboration loop for ever), and
parameter overrides ``#( ... )`` of instances.
"""

from __future__ import annotations

from memcheck.mutation.tokens import Token, matching, semicolon_at

#: Declarations whose whole statement is left alone (widths and elaboration constants).
_WHOLE = frozenset({"parameter", "localparam", "defparam", "genvar", "integer", "real", "time", "specparam"})
#: Declarations whose ranges (before any ``=``) are left alone; an initialiser may be mutated.
_RANGED = frozenset(
    {"input", "output", "inout", "wire", "reg", "logic", "tri", "supply0", "supply1", "signed", "function"}
)


def _statement_stop(tokens: list[Token], i: int) -> int:
    j = semicolon_at(tokens, i)
    return len(tokens) - 1 if j is None else j


def _mark(frozen: list[bool], lo: int, hi: int) -> None:
    for k in range(lo, min(hi + 1, len(frozen))):
        frozen[k] = True


def _mark_ranges(tokens: list[Token], frozen: list[bool], i: int, stop: int) -> None:
    j = i
    while j < stop:
        t = tokens[j].text
        if t == "=":
            return
        if t == "[":
            close = matching(tokens, j)
            end = close if close is not None else stop
            _mark(frozen, j, end)
            j = end
        j += 1


def _mark_one(tokens: list[Token], frozen: list[bool], i: int) -> int:
    """Mark what the token at ``i`` opens; return the index to continue from."""
    t = tokens[i].text
    if t in ("module", "macromodule") or t in _WHOLE:
        stop = _statement_stop(tokens, i)
        _mark(frozen, i, stop)
        return stop + 1
    if t in _RANGED:
        stop = _statement_stop(tokens, i)
        _mark_ranges(tokens, frozen, i, stop)
        return i + 1
    if t in ("for", "#") and i + 1 < len(tokens) and tokens[i + 1].text == "(":
        close = matching(tokens, i + 1)
        end = close if close is not None else len(tokens) - 1
        _mark(frozen, i, end)
        return end + 1
    return i + 1


def frozen_tokens(tokens: list[Token]) -> list[bool]:
    """One flag per token: True where no mutation may touch it (see the module docstring)."""
    frozen = [False] * len(tokens)
    i = 0
    while i < len(tokens):
        i = _mark_one(tokens, frozen, i)
    return frozen


__all__ = ["frozen_tokens"]
