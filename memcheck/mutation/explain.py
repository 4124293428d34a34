"""Why a mutant may have survived the check: a simple, honest reading of the source, no proof.

Two reasons mark a survivor *likely equivalent* (it cannot change what the contract checks):

* the change only concerns a pin the contract ties to a constant (``[rtl] tie``), or an input no
  port of the contract drives: the check can never give it another value;
* the changed statement only assigns signals that nothing else in the file reads and that are not
  outputs.

Every other survivor is a *possible hole*: no stimulus of the check showed the change. It may still
be equivalent (it may only touch behaviour the contract leaves unknown, or bits no output reads),
which the reason says without claiming either way.
"""

from __future__ import annotations

from collections.abc import Collection, Sequence
from dataclasses import dataclass

from memcheck.mutation.context import frozen_tokens
from memcheck.mutation.operators import Mutant
from memcheck.mutation.tokens import Kind, Token, tokenize

_DIRECTIONS = frozenset({"input", "output", "inout"})
_ASSIGN = frozenset({"=", "<="})
_DECLARE = frozenset({"wire", "reg", "logic", "integer", "tri"})


@dataclass(frozen=True)
class Reason:
    """A survivor's likely cause: ``equivalent`` True when the change cannot be observed."""

    equivalent: bool
    text: str

    @property
    def label(self) -> str:
        return "likely equivalent" if self.equivalent else "possible hole"


def _outputs(tokens: list[Token]) -> set[str]:
    out: set[str] = set()
    direction = ""
    for t in tokens:
        if t.text in _DIRECTIONS:
            direction = t.text
        elif t.text == ";":
            direction = ""
        elif t.kind == Kind.NAME and direction == "output":
            out.add(t.text)
    return out


def _lhs_positions(tokens: list[Token]) -> set[int]:
    """Indices of names written by an assignment (``x =``, ``x <=``, ``x[i] <=``, ``assign x =``)."""
    out: set[int] = set()
    for i, t in enumerate(tokens):
        if t.kind != Kind.NAME or i + 1 >= len(tokens):
            continue
        j = i + 1
        while j < len(tokens) and tokens[j].text == "[":
            depth = 0
            while j < len(tokens):
                depth += tokens[j].text == "["
                depth -= tokens[j].text == "]"
                j += 1
                if depth == 0:
                    break
        prev = tokens[i - 1].text if i else ";"
        if j < len(tokens) and tokens[j].text in _ASSIGN and prev in (";", "begin", "assign", ")", "else", "end"):
            out.add(i)
    return out


def _statement_names(tokens: list[Token], mutant: Mutant) -> tuple[list[str], list[str]]:
    """(names the changed statement writes, names in the changed text or on its line)."""
    lhs = _lhs_positions(tokens)
    on_line = [i for i, t in enumerate(tokens) if t.line == mutant.line]
    inside = [i for i, t in enumerate(tokens) if mutant.start <= t.start < mutant.end and t.kind == Kind.NAME]
    used = [tokens[i].text for i in (inside or on_line) if tokens[i].kind == Kind.NAME]
    written = [tokens[i].text for i in on_line if i in lhs]
    return written, used


def _declared_positions(tokens: list[Token]) -> set[int]:
    """Indices of names being declared (``reg [7:0] a, b;``: up to a ``=`` or the ``;``)."""
    out: set[int] = set()
    inside = False
    for i, t in enumerate(tokens):
        if t.text in _DECLARE:
            inside = True
        elif t.text in ("=", ";"):
            inside = False
        elif inside and t.kind == Kind.NAME:
            out.add(i)
    return out


def _unread(tokens: list[Token], names: Sequence[str]) -> list[str]:
    frozen = frozen_tokens(tokens)
    lhs = _lhs_positions(tokens) | _declared_positions(tokens)
    outputs = _outputs(tokens)
    read = {t.text for i, t in enumerate(tokens) if t.kind == Kind.NAME and not frozen[i] and i not in lhs}
    return [n for n in names if n not in read and n not in outputs]


def survivor_reason(
    mutant: Mutant,
    text: str,
    *,
    tied: Collection[str] = (),
    undriven: Collection[str] = (),
    unknown: Sequence[str] = (),
) -> Reason:
    """Why ``mutant`` (of the file whose original contents are ``text``) may have survived.

    Parameters
    ----------
    tied, undriven:
        Pins the contract ties to a constant, and inputs no port of the contract drives.
    unknown:
        Behaviours the contract leaves unknown (``memcheck.contract.unchecked_behaviours``).
    """
    tokens = tokenize(text)
    written, used = _statement_names(tokens, mutant)
    constant = sorted({n for n in used if n in tied or n in undriven})
    if constant:
        names = ", ".join(f"'{n}'" for n in constant)
        return Reason(True, f"it changes only how {names} is used, and the contract holds it at one constant value.")
    unread = _unread(tokens, written)
    if written and len(unread) == len(set(written)):
        names = ", ".join(f"'{n}'" for n in sorted(set(unread)))
        return Reason(True, f"line {mutant.line} only assigns {names}, which nothing in the file reads.")
    hint = f" or touches behaviour the contract leaves unknown ({'; '.join(unknown)})" if unknown else ""
    return Reason(
        False,
        f"no stimulus of the check showed a difference. It is equivalent only if the change reaches no bit an "
        f"output reads{hint}; otherwise it is a hole in the check: add examples or a directed test "
        f"that exercises line {mutant.line}.",
    )


__all__ = ["Reason", "survivor_reason"]
