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


def _declared_ranges(tokens: list[Token]) -> dict[str, tuple[int, int]]:
    """``wire [23:0] q, r;`` -> {"q": (23, 0), "r": (23, 0)} for numeric ranges."""
    out: dict[str, tuple[int, int]] = {}
    for i, t in enumerate(tokens[:-6]):
        texts = [x.text for x in tokens[i + 1 : i + 6]]
        if t.text not in _DECLARE or texts[0] != "[" or texts[2] != ":" or texts[4] != "]":
            continue
        if not (texts[1].isdigit() and texts[3].isdigit()):
            continue
        hi, lo = int(texts[1]), int(texts[3])
        j = i + 6
        while j < len(tokens) and tokens[j].kind == Kind.NAME:
            out[tokens[j].text] = (hi, lo)
            j += 2 if j + 1 < len(tokens) and tokens[j + 1].text == "," else len(tokens)
    return out


def _bits_read(tokens: list[Token], k: int, hi: int, lo: int) -> set[int]:
    """Bits of the name at ``k`` that this occurrence reads (a constant select, or all of them)."""
    sel = [x.text for x in tokens[k + 1 : k + 6]]
    if len(sel) >= 5 and sel[0] == "[" and sel[2] == ":" and sel[4] == "]" and sel[1].isdigit() and sel[3].isdigit():
        return set(range(int(sel[3]), int(sel[1]) + 1))
    if len(sel) >= 3 and sel[0] == "[" and sel[2] == "]" and sel[1].isdigit():
        return {int(sel[1])}
    return set(range(lo, hi + 1))


def _ranges(bits: set[int]) -> str:
    out: list[str] = []
    for b in sorted(bits, reverse=True):
        if out and int(out[-1].split(":")[-1]) == b + 1:
            out[-1] = f"{out[-1].split(':')[0]}:{b}"
        else:
            out.append(str(b))
    return ", ".join(out)


def _whole_connection(tokens: list[Token], k: int) -> bool:
    """True for ``.PIN(name)``: the name at ``k`` connected whole to an instance pin."""
    if k < 3 or k + 1 >= len(tokens):
        return False
    dot, pin, paren, close = tokens[k - 3], tokens[k - 2], tokens[k - 1], tokens[k + 1]
    return dot.text == "." and pin.kind == Kind.NAME and paren.text == "(" and close.text == ")"


def partially_read(tokens: list[Token]) -> dict[str, tuple[tuple[int, int], set[int]]]:
    """Signals of which the file reads only some bits: name -> ((hi, lo) declared, bits read)."""
    declared = _declared_ranges(tokens)
    frozen = frozen_tokens(tokens)
    lhs = _lhs_positions(tokens)
    assigned = {tokens[k].text for k in lhs}
    skip = lhs | _declared_positions(tokens)
    read: dict[str, set[int]] = {}
    for k, t in enumerate(tokens):
        if t.text not in assigned and _whole_connection(tokens, k):
            continue  # never assigned here, so an instance drives it through this connection
        if t.text in declared and not frozen[k] and k not in skip:
            hi, lo = declared[t.text]
            read.setdefault(t.text, set()).update(_bits_read(tokens, k, hi, lo))
    return {
        n: (declared[n], bits) for n, bits in read.items() if bits and len(bits) < declared[n][0] - declared[n][1] + 1
    }


def _statement_tokens(tokens: list[Token], mutant: Mutant) -> list[Token]:
    at = next((k for k, t in enumerate(tokens) if t.end > mutant.start), len(tokens) - 1)
    lo = next((k + 1 for k in range(at - 1, -1, -1) if tokens[k].text == ";"), 0)
    hi = next((k for k in range(at, len(tokens)) if tokens[k].text == ";"), len(tokens) - 1)
    return tokens[lo : hi + 1]


def _partial_hint(tokens: list[Token], mutant: Mutant) -> str:
    partial = partially_read(tokens)
    names = sorted({t.text for t in _statement_tokens(tokens, mutant) if t.text in partial})
    parts = [
        f"only bits {_ranges(partial[n][1])} of '{n}' (declared [{partial[n][0][0]}:{partial[n][0][1]}])" for n in names
    ]
    return (
        f" The file reads {'; '.join(parts)}: a change that reaches only the other bits is equivalent." if parts else ""
    )


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
        f"that exercises line {mutant.line}.{_partial_hint(tokens, mutant)}",
    )


__all__ = ["Reason", "partially_read", "survivor_reason"]
