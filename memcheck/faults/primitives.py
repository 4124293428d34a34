"""Fault primitives ``<S/F/R>`` and the fault models built from them.

A fault primitive (FP) says which *sensitising sequence* ``S`` makes a cell go wrong, the faulty
value ``F`` the victim cell then holds, and ``R``, what a read returns when ``S`` ends with a read
(``-`` otherwise). Two-cell FPs write ``S`` as ``Sa;Sv`` (aggressor part, victim part). Notation and
taxonomy: A.J. van de Goor and Z. Al-Ars, "Functional Memory Faults: A Formal Notation and a
Taxonomy", IEEE VLSI Test Symposium, 2000.

One part of ``S`` is written as

``0`` / ``1``                a state the cell holds,
``0w1``, ``1w1`` ...         a write (state before, then ``w`` and the written value),
``0r0`` / ``1r1``            a read of a cell holding that value,
``0T`` / ``1T``              a pause (delay element) while the cell holds that value,
``∀``                        anything at all (stuck-at faults),
``0w1r1``, ``1w0r0`` ...     two operations in a row (dynamic faults): the cell holds the first
                             value, is written and then read *back to back* (see below).

*Two operations in a row* (dynamic fault primitives, two operations): the second operation is the
very next operation the memory performs and it goes to the same word within the same March
element (the ``w1, r1`` of ``⇑(w1, r1)``). The last operation of one element and the first of the
next never form a pair, even on the word where the walk turns, nor do operations separated by a
pause. The engines pass the cell's previous operation (:func:`prev_code`) to the semantic functions
when, and only when, it was back to back; 0 otherwise.

The four functions at the end (:func:`victim_op`, :func:`aggressor_op`, :func:`settle`,
:func:`pause`) are the *only* definition of what a fault does; both simulation engines use them,
so the engines can differ only in how they run a test, never in what a fault means.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Literal

from memcheck.errors import FaultModelError

Part = Literal["victim", "aggressor"]

_SENS_RE = re.compile(
    r"^(?:(?P<any>∀)|(?P<state>[01])(?:(?P<op>[rwT])(?P<val>[01])?)?(?:(?P<op2>[rw])(?P<val2>[01]))?)$"
)

NO_PREV = 0  # the cell's previous operation was not back to back (or there was none)


def op_code(kind: str, value: int) -> int:
    """0 for a read, 1 for w0, 2 for w1."""
    return 0 if kind == "r" else 1 + value


def prev_code(state: int, kind: str, value: int) -> int:
    """Code (1..6) of "the cell held ``state`` and then got this operation", kept by the engines for
    the next operation on the cell when that one follows back to back."""
    return 1 + state * 3 + op_code(kind, value)


@dataclass(frozen=True, slots=True)
class Sens:
    """One cell's part of a sensitising sequence.

    ``state`` is the value the cell must hold before (None for ``∀``); ``op`` is ``"r"``, ``"w"``,
    ``"T"`` (pause) or None for a pure state condition; ``value`` is the written value (reads:
    the value read, equal to the value the cell holds). A dynamic part (``0w1r1``) has ``pre``, the
    first operation ``(kind, value)`` applied to ``state``; ``op``/``value`` are then the second one.
    """

    state: int | None
    op: Literal["r", "w", "T"] | None = None
    value: int | None = None
    pre: tuple[str, int] | None = None

    @property
    def is_dynamic(self) -> bool:
        return self.pre is not None

    @property
    def held(self) -> int | None:
        """The value the cell holds when ``op`` runs (after ``pre`` for a dynamic part)."""
        if self.pre is None or self.pre[0] == "r":
            return self.state
        return self.pre[1]

    @property
    def is_any(self) -> bool:
        return self.state is None

    @property
    def is_state(self) -> bool:
        return self.state is not None and self.op is None

    @property
    def is_access(self) -> bool:
        """A read or write (something a March operation can do)."""
        return self.op in ("r", "w")

    def matches(self, state: int, kind: str, value: int, prev: int = NO_PREV) -> bool:
        """Does a ``kind`` (r/w) operation writing ``value`` on a cell holding ``state`` match, when
        the cell's previous operation was ``prev`` (:func:`prev_code`, or ``NO_PREV``)?"""
        if self.held != state or self.op != kind:
            return False
        if self.pre is not None:
            assert self.state is not None
            if prev != prev_code(self.state, *self.pre):
                return False
        return kind == "r" or self.value == value

    def __str__(self) -> str:
        if self.state is None:
            return "∀"
        if self.op is None:
            return str(self.state)
        if self.op == "T":
            return f"{self.state}T"
        first = "" if self.pre is None else f"{self.pre[0]}{self.pre[1]}"
        return f"{self.state}{first}{self.op}{self.value}"


def parse_sens(text: str) -> Sens:
    m = _SENS_RE.match(text.strip())
    if not m:
        raise FaultModelError(f"bad sensitising sequence {text!r}: expected 0, 1, 0w1, 1r1, 0T, ∀ ...")
    if m["any"]:
        return Sens(None)
    state = int(m["state"])
    op = m["op"]
    if op is None:
        return Sens(state)
    if op == "T" and m["op2"] is not None:
        raise FaultModelError(f"bad sensitising sequence {text!r}: a pause is not followed by an operation")
    if op == "T":
        return Sens(state, "T")
    if m["val"] is None:
        raise FaultModelError(f"bad sensitising sequence {text!r}: {op} needs a value")
    value = int(m["val"])
    if op == "r" and value != state:
        raise FaultModelError(f"bad sensitising sequence {text!r}: a read returns the value the cell holds")
    if m["op2"] is None:
        return Sens(state, "r" if op == "r" else "w", value)
    value2 = int(m["val2"])
    if m["op2"] == "r" and value2 != value:
        raise FaultModelError(f"bad sensitising sequence {text!r}: a read returns the value the cell holds")
    return Sens(state, "r" if m["op2"] == "r" else "w", value2, (op, value))


@dataclass(frozen=True, slots=True)
class FaultPrimitive:
    """``<S/F/R>`` (single cell) or ``<Sa;Sv/F/R>`` (two cells)."""

    victim: Sens
    f: int
    r: int | None = None
    aggressor: Sens | None = None

    @property
    def notation(self) -> str:
        s = str(self.victim) if self.aggressor is None else f"{self.aggressor};{self.victim}"
        return f"<{s}/{self.f}/{'-' if self.r is None else self.r}>"

    def __str__(self) -> str:
        return self.notation


def fp(text: str) -> FaultPrimitive:
    """Parse ``<S/F/R>`` or ``<Sa;Sv/F/R>``, e.g. ``fp("<0w1;0/1/->")``."""
    t = text.strip()
    if not (t.startswith("<") and t.endswith(">")):
        raise FaultModelError(f"a fault primitive is written <S/F/R>, not {text!r}")
    parts = t[1:-1].split("/")
    if len(parts) != 3:
        raise FaultModelError(f"a fault primitive has three parts S/F/R: {text!r}")
    s, f, r = (p.strip() for p in parts)
    agg_text, _, vic_text = s.rpartition(";")
    victim = parse_sens(vic_text)
    aggressor = parse_sens(agg_text) if agg_text else None
    if f not in ("0", "1") or r not in ("0", "1", "-"):
        raise FaultModelError(f"F must be 0 or 1 and R 0, 1 or -: {text!r}")
    if (r == "-") != (victim.op != "r"):
        raise FaultModelError(f"R is given exactly when the victim's sequence ends with a read: {text!r}")
    if aggressor is not None and not (aggressor.is_state or aggressor.is_access):
        raise FaultModelError(f"an aggressor's part is a state, a read or a write: {text!r}")
    if aggressor is not None and aggressor.is_access and not victim.is_state:
        raise FaultModelError(f"only one cell of a two-cell primitive is operated on: {text!r}")
    return FaultPrimitive(victim, int(f), None if r == "-" else int(r), aggressor)


@dataclass(frozen=True, slots=True)
class FaultModel:
    """A named fault: one or more FPs that hold together (e.g. CFin is two FPs), its class
    abbreviation and a description template (``{v}`` victim, ``{a}`` aggressor)."""

    cls: str
    name: str
    primitives: tuple[FaultPrimitive, ...]
    template: str

    @property
    def two_cell(self) -> bool:
        return any(p.aggressor is not None for p in self.primitives)

    @property
    def notation(self) -> str:
        return ", ".join(p.notation for p in self.primitives)

    @property
    def dynamic(self) -> bool:
        """Sensitised by two operations in a row (see the module docstring)."""
        return any(p.victim.is_dynamic or (p.aggressor is not None and p.aggressor.is_dynamic) for p in self.primitives)

    def describe(self, victim: str, aggressor: str = "") -> str:
        return self.template.format(v=victim, a=aggressor)

    def __str__(self) -> str:
        return f"{self.name} {self.notation}"


def _m(cls: str, name: str, fps: str, template: str) -> FaultModel:
    return FaultModel(cls, name, tuple(fp(t) for t in fps.split()), template)


def _two_cell(cls: str, name: str, fps: str, template: str) -> tuple[FaultModel, ...]:
    """The same victim behaviour for aggressor state 0 and 1 (``{x}`` in ``fps``/``template``)."""
    return tuple(_m(cls, name.format(x=x), fps.format(x=x), template.replace("{x}", str(x))) for x in (0, 1))


# Single-cell static faults (van de Goor & Al-Ars 2000) plus SAF (van de Goor, "Testing
# Semiconductor Memories: Theory and Practice", 1991) and DRF (ibid.).
SINGLE_CELL_MODELS: tuple[FaultModel, ...] = (
    _m("SAF", "SA0", "<∀/0/->", "{v} is stuck at 0"),
    _m("SAF", "SA1", "<∀/1/->", "{v} is stuck at 1"),
    _m("TF", "TF↑", "<0w1/0/->", "{v} cannot rise (writing 1 over 0 leaves 0)"),
    _m("TF", "TF↓", "<1w0/1/->", "{v} cannot fall (writing 0 over 1 leaves 1)"),
    _m("WDF", "WDF0", "<0w0/1/->", "writing 0 to {v} while it holds 0 flips it to 1"),
    _m("WDF", "WDF1", "<1w1/0/->", "writing 1 to {v} while it holds 1 flips it to 0"),
    _m("RDF", "RDF0", "<0r0/1/1>", "reading 0 from {v} flips it to 1 and returns 1"),
    _m("RDF", "RDF1", "<1r1/0/0>", "reading 1 from {v} flips it to 0 and returns 0"),
    _m("DRDF", "DRDF0", "<0r0/1/0>", "reading 0 from {v} returns 0 but flips it to 1"),
    _m("DRDF", "DRDF1", "<1r1/0/1>", "reading 1 from {v} returns 1 but flips it to 0"),
    _m("IRF", "IRF0", "<0r0/0/1>", "reading 0 from {v} returns 1 (the cell keeps 0)"),
    _m("IRF", "IRF1", "<1r1/1/0>", "reading 1 from {v} returns 0 (the cell keeps 1)"),
    _m("DRF", "DRF1", "<1T/0/->", "{v} loses a stored 1 during a pause"),
    _m("DRF", "DRF0", "<0T/1/->", "{v} loses a stored 0 during a pause"),
)

# Two-cell static faults (van de Goor & Al-Ars 2000; Hamdioui, van de Goor and Rodgers, "March SS: a
# Test for All Static Simple RAM Faults", MTDT 2002) and the classic CFin / CFid (van de Goor 1991).
TWO_CELL_MODELS: tuple[FaultModel, ...] = (
    *(
        _m(
            "CFst",
            f"CFst<{x};{y}>",
            f"<{x};{y}/{1 - y}/->",
            f"{{v}} cannot hold {y} while {{a}} holds {x} (it flips to {1 - y})",
        )
        for x in (0, 1)
        for y in (0, 1)
    ),
    *(
        _m(
            "CFds",
            f"CFds<{x}w{w};{y}>",
            f"<{x}w{w};{y}/{1 - y}/->",
            f"writing {w} to {{a}} (holding {x}) flips {{v}} from {y} to {1 - y}",
        )
        for x in (0, 1)
        for w in (0, 1)
        for y in (0, 1)
    ),
    *(
        _m(
            "CFds",
            f"CFds<{x}r{x};{y}>",
            f"<{x}r{x};{y}/{1 - y}/->",
            f"reading {x} from {{a}} flips {{v}} from {y} to {1 - y}",
        )
        for x in (0, 1)
        for y in (0, 1)
    ),
    *_two_cell("CFtr", "CFtr<{x};↑>", "<{x};0w1/0/->", "{v} cannot rise while {a} holds {x}"),
    *_two_cell("CFtr", "CFtr<{x};↓>", "<{x};1w0/1/->", "{v} cannot fall while {a} holds {x}"),
    *_two_cell("CFwd", "CFwd<{x};0>", "<{x};0w0/1/->", "writing 0 over 0 in {v} flips it to 1 while {a} holds {x}"),
    *_two_cell("CFwd", "CFwd<{x};1>", "<{x};1w1/0/->", "writing 1 over 1 in {v} flips it to 0 while {a} holds {x}"),
    *_two_cell("CFrd", "CFrd<{x};0>", "<{x};0r0/1/1>", "reading 0 from {v} flips it and returns 1 while {a} holds {x}"),
    *_two_cell("CFrd", "CFrd<{x};1>", "<{x};1r1/0/0>", "reading 1 from {v} flips it and returns 0 while {a} holds {x}"),
    *_two_cell(
        "CFdrd", "CFdrd<{x};0>", "<{x};0r0/1/0>", "reading 0 from {v} returns 0 but flips it while {a} holds {x}"
    ),
    *_two_cell(
        "CFdrd", "CFdrd<{x};1>", "<{x};1r1/0/1>", "reading 1 from {v} returns 1 but flips it while {a} holds {x}"
    ),
    *_two_cell("CFir", "CFir<{x};0>", "<{x};0r0/0/1>", "reading 0 from {v} returns 1 while {a} holds {x}"),
    *_two_cell("CFir", "CFir<{x};1>", "<{x};1r1/1/0>", "reading 1 from {v} returns 0 while {a} holds {x}"),
    _m("CFin", "CFin<↑;↕>", "<0w1;0/1/-> <0w1;1/0/->", "writing 1 over 0 in {a} inverts {v}"),
    _m("CFin", "CFin<↓;↕>", "<1w0;0/1/-> <1w0;1/0/->", "writing 0 over 1 in {a} inverts {v}"),
    _m("CFid", "CFid<↑;0>", "<0w1;1/0/->", "writing 1 over 0 in {a} forces {v} to 0"),
    _m("CFid", "CFid<↑;1>", "<0w1;0/1/->", "writing 1 over 0 in {a} forces {v} to 1"),
    _m("CFid", "CFid<↓;0>", "<1w0;1/0/->", "writing 0 over 1 in {a} forces {v} to 0"),
    _m("CFid", "CFid<↓;1>", "<1w0;0/1/->", "writing 0 over 1 in {a} forces {v} to 1"),
)

# Two-operation dynamic faults: a write immediately followed by a read (x, y, z in {0, 1}). The
# lists of the seven classes follow the established two-operation dynamic fault models as listed in
# H.-J. Wunderlich (ed.), "Models in Hardware Testing", Springer 2010, ch. 6, sec. 6.4.4 (after
# A.J. van de Goor et al. and S. Hamdioui, Z. Al-Ars and A.J. van de Goor, "Testing Static and
# Dynamic Faults in Random Access Memories", IEEE VTS 2002, whose March RAW targets them; value
# written from memory for the VTS 2002 paper): dRDF <xwyry/¬y/¬y>, dDRDF <xwyry/¬y/y>,
# dIRF <xwyry/y/¬y> (4 each); dCFds <xwzrz;y/¬y/-> (the aggressor is written and read, 8);
# dCFrd <x;ywzrz/¬z/¬z>, dCFdrd <x;ywzrz/¬z/z>, dCFir <x;ywzrz/z/¬z> (the victim is written and
# read while the aggressor holds x, 8 each). dCFdrd is called dCFdr in that chapter.
_READ_AFTER_WRITE = (  # (class suffix, victim flips, read returns the wrong value, what happens)
    ("RDF", 1, 1, "flips it and returns the flipped value"),
    ("DRDF", 1, 0, "returns the right value but flips it"),
    ("IRF", 0, 1, "returns the wrong value (the cell keeps it)"),
)
DYNAMIC_SINGLE_CELL_MODELS: tuple[FaultModel, ...] = tuple(
    _m(
        f"d{cls}",
        f"d{cls}<{x}w{y}r{y}>",
        f"<{x}w{y}r{y}/{y ^ f}/{y ^ r}>",
        f"writing {y} to {{v}} (holding {x}) and reading it right after {what}",
    )
    for cls, f, r, what in _READ_AFTER_WRITE
    for x in (0, 1)
    for y in (0, 1)
)
DYNAMIC_TWO_CELL_MODELS: tuple[FaultModel, ...] = (
    *(
        _m(
            "dCFds",
            f"dCFds<{x}w{z}r{z};{y}>",
            f"<{x}w{z}r{z};{y}/{1 - y}/->",
            f"writing {z} to {{a}} (holding {x}) and reading it right after flips {{v}} from {y} to {1 - y}",
        )
        for x in (0, 1)
        for z in (0, 1)
        for y in (0, 1)
    ),
    *(
        _m(
            f"dCF{cls[:-1].lower()}",
            f"dCF{cls[:-1].lower()}<{x};{y}w{z}r{z}>",
            f"<{x};{y}w{z}r{z}/{z ^ f}/{z ^ r}>",
            f"writing {z} to {{v}} (holding {y}) and reading it right after {what} while {{a}} holds {x}",
        )
        for cls, f, r, what in _READ_AFTER_WRITE
        for x in (0, 1)
        for y in (0, 1)
        for z in (0, 1)
    ),
)

ALL_MODELS: tuple[FaultModel, ...] = (
    SINGLE_CELL_MODELS + TWO_CELL_MODELS + DYNAMIC_SINGLE_CELL_MODELS + DYNAMIC_TWO_CELL_MODELS
)


#: The models of each class, in ALL_MODELS order (a constant table: models_of runs once per sampled instance).
_MODELS_BY_CLASS: dict[str, tuple[FaultModel, ...]] = {
    c: tuple(m for m in ALL_MODELS if m.cls == c) for c in dict.fromkeys(m.cls for m in ALL_MODELS)
}


def models_of(cls: str) -> tuple[FaultModel, ...]:
    """Every FP-based model of one class (empty for SOF and AF, which are behavioural)."""
    return _MODELS_BY_CLASS.get(cls, ())


def model_named(name: str) -> FaultModel:
    for m in ALL_MODELS:
        if m.name == name:
            return m
    raise FaultModelError(f"no fault model named {name!r}")


# --------------------------------------------------------------------------------------------------
# Semantics. Cells hold 0/1; ``a`` is the aggressor's value (0 for single-cell faults), ``v`` the
# victim's. Within one word operation the victim's own operation is applied first, then the
# aggressor's disturbance, then state coupling (see docs/faults.md, "one word, two bits").
# --------------------------------------------------------------------------------------------------


def _aggressor_state_ok(p: FaultPrimitive, a: int) -> bool:
    return p.aggressor is None or (p.aggressor.is_state and p.aggressor.state == a)


def victim_op(model: FaultModel, a: int, v: int, kind: str, value: int, prev: int = NO_PREV) -> tuple[int, int]:
    """An operation on the victim cell: its new value and what a read returns (writes: the new value).

    ``a`` is the aggressor's value before the operation; ``value`` the written value (ignored for reads);
    ``prev`` the victim's previous operation when it was back to back (:func:`prev_code`), else 0.
    """
    for p in model.primitives:
        s = p.victim
        if s.is_any:
            return p.f, p.f
        if s.is_access and s.matches(v, kind, value, prev) and _aggressor_state_ok(p, a):
            return p.f, (p.f if p.r is None else p.r)
    if kind == "w":
        return value, value
    return v, v


def aggressor_op(model: FaultModel, a: int, v: int, kind: str, value: int, prev: int = NO_PREV) -> int:
    """The victim's value after an operation on the aggressor (which itself behaves fault-free).

    ``a`` is the aggressor's value before the operation, ``v`` the victim's current value, ``prev``
    the aggressor's previous operation when it was back to back (:func:`prev_code`), else 0.
    """
    for p in model.primitives:
        s = p.aggressor
        if s is None or not (s.is_access and p.victim.is_state) or p.victim.state != v:
            continue
        if s.matches(a, kind, value, prev):
            return p.f
    return v


def settle(model: FaultModel, a: int, v: int) -> int:
    """State faults act at once: the victim's value once the cells hold ``a`` and ``v``."""
    for p in model.primitives:
        if p.victim.is_any:
            return p.f
        if p.victim.is_state and p.victim.state == v and _aggressor_state_ok(p, a):
            return p.f
    return v


def pause(model: FaultModel, v: int) -> int:
    """The victim's value after a pause (delay element)."""
    for p in model.primitives:
        if p.victim.op == "T" and p.victim.state == v:
            return p.f
    return v
