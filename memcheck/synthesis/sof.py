"""Stuck-open cells (SOF) as rows of the synthesis search.

A read of a stuck-open cell returns the data-out latch of its bit: the value of the last read of a
*different* word on that bit (docs/faults.md; the fast engine's :func:`memcheck.faults.fast.sof_detection`).
Inside an element that reads, that is the word visited just before; for the first word of an
element, the last word of the previous reading element (or the one before it, when that is this
same word); before any read, the latch's power-up value (both enumerated).

When every word treats a bit alike under every background (one word class: solid, the standard set,
any background without an address-dependent flip), every fault-free word reads the same physical
value on that bit at the same point of an element, so three rows per bit describe every open cell:

* **inner word** (neither end of the ⇑ walk; one-word row): its latch is the word before it in the
  walk, whichever the direction, i.e. the element's last read. A read is wrong exactly when the
  element reads both values; the state keeps "a read was seen in this element" (bit 2, cleared at
  the end of the word's operations like the dynamic faults' "armed" bit) and its value (bit 0).
* **first word in ⇑** and **last word in ⇑** (two-word rows, with the next / previous word of the
  walk): the state is the physical latch. The neighbour's reads set it; the open cell's reads are
  compared with it and leave it. Walking towards the open cell, the neighbour goes first (the latch
  is this element's last read); walking away, the open cell goes first (the latch is still the
  previous reading element's last read, which the neighbour read too).

The state is physical (the background's flip included), so it carries over between passes as the
engines' latch does. On a one-word memory the latch never changes: the open cell's reads are all
compared with its power-up value.
"""

from __future__ import annotations

from memcheck.faults import Arrangement
from memcheck.synthesis.rowspec import Built, RowSpec, StepFn, flip_bit

_SEEN = 4  # state bit: a read was seen in this element (inner word)


def sof_supported(setup: Arrangement) -> bool:
    """Whether every word treats each bit alike under every background (one word class)."""
    return bool(setup.resolve().class_codes().shape[0] == 1)


def _open_cell(f: int) -> StepFn:
    """The open cell with a physical latch state: a read compares, nothing changes the latch."""

    def step(s: int, kind: str, x: int) -> tuple[int, bool]:
        return s, kind == "r" and (s & 1) != (f ^ x)

    return step


def _neighbour(f: int) -> StepFn:
    """A fault-free word on the open cell's data bit: its read puts its physical value on the latch."""

    def step(s: int, kind: str, x: int) -> tuple[int, bool]:
        return (f ^ x if kind == "r" else s), False

    return step


def _inner(f: int) -> StepFn:
    """Inner word: wrong when a read's value differs from an earlier read of the same element."""

    def step(s: int, kind: str, x: int) -> tuple[int, bool]:
        if kind != "r":
            return s, False
        value = f ^ x
        return _SEEN | value, bool(s & _SEEN) and (s & 1) != value

    return step


def _rows(kind: str, f: int) -> list[RowSpec]:
    if kind == "inner":
        return [RowSpec(0, _inner(f), None)]
    if kind == "only":
        return [RowSpec(latch, _open_cell(f), None) for latch in (0, 1)]
    if kind == "first":
        return [RowSpec(latch, _open_cell(f), _neighbour(f)) for latch in (0, 1)]
    return [RowSpec(latch, _neighbour(f), _open_cell(f)) for latch in (0, 1)]


def sof_builder(cls: str, setup: Arrangement, bg: int = 0, universe: str = "all") -> Built:
    """SOF rows for every bit code and walk position present (the same in every universe: SOF is a
    single-cell class). Needs :func:`sof_supported` (the caller checks)."""
    codes = sorted(set(setup.resolve().class_codes()[0].tolist()))
    n = setup.words
    kinds = ["only"] if n == 1 else ["first", "last"] + (["inner"] if n > 2 else [])
    names = {"only": "one word", "first": "first word in ⇑", "last": "last word in ⇑", "inner": "inner word"}
    out: Built = []
    for code in codes:
        for kind in kinds:
            label = f"SOF ({names[kind]}" + (f", code {code})" if code else ")")
            out.append((label, [_rows(kind, flip_bit(code, bg))]))
    return out
