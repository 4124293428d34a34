"""What a campaign simulates: fault instances, their power-up states, and the fault-table rows.

Power-up states are exactly those of memcheck's fault simulator (``power_up_labels`` of each
instance, first label most significant, as in :mod:`memcheck.faults.reference`): the fault's cells
(single cell; aggressor then victim), the data-out latch bit of a stuck-open cell, and for a decoder
fault the words involved (all bits alike) and the floating read value. A decoder fault is run bit by
bit (the bits never interact; docs/faults.md), so it is ``width x 2^n`` rows.
"""

from __future__ import annotations

import functools
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from memcheck.bist.faulty_memory import AF_KIND_CODES, KIND_FP, KIND_SOF, ROW_BITS, ROW_FIELDS, model_bits
from memcheck.errors import BistError
from memcheck.faults import (
    CellFault,
    CouplingFault,
    DecoderFault,
    Detection,
    FaultInstance,
    StuckOpenFault,
)
from memcheck.faults.geometry import Arrangement
from memcheck.faults.primitives import FaultModel
from memcheck.faults.sampling import class_size, enumerate_class, sample_class
from memcheck.faults.universe import CLASSES, Universe

#: Fault classes the RTL model implements: every class of the fault simulator, static and dynamic.
RTL_CLASSES: tuple[str, ...] = CLASSES


@dataclass(frozen=True)
class Row:
    """One copy in a simulation: instance ``instance`` from power-up ``state`` (on data bit ``bit``
    for a decoder fault, else -1)."""

    instance: int
    state: tuple[int, ...]
    bit: int
    value: int  # the packed table row (:func:`memcheck.bist.faulty_memory.pack_row`), drive bit clear

    def packed(self, drive: bool) -> str:
        return f"{self.value | (_DRIVE if drive else 0):0{ROW_BITS // 4}x}"


def _positions() -> dict[str, tuple[int, int]]:
    """Each table field's (lowest bit, width) in a packed row, as :func:`pack_row` lays them."""
    out, top = {}, ROW_BITS
    for name, bits in ROW_FIELDS:
        top -= bits
        out[name] = (top, bits)
    return out


_POSITIONS = _positions()
_DRIVE = 1 << _POSITIONS["drive"][0]


def _pack(fields: Mapping[str, int]) -> int:
    """:func:`pack_row` as an integer (the same bits; a test holds them equal), without its per-field loop."""
    value = 0
    for name, x in fields.items():
        lsb, bits = _POSITIONS[name]
        if not 0 <= x < 1 << bits:
            raise BistError(f"fault table field {name}={x} does not fit in {bits} bits")
        value |= x << lsb
    return value


@functools.cache
def _model_word(model: FaultModel) -> int:
    return _pack(model_bits(model))


@functools.cache
def states(n: int) -> list[tuple[int, ...]]:
    """All power-up states of ``n`` variables, first variable most significant."""
    return [tuple((s >> (n - 1 - i)) & 1 for i in range(n)) for s in range(1 << n)]


def _fields(fault: FaultInstance, state: tuple[int, ...], bit: int) -> dict[str, int]:
    """A row's own fields (a cell or coupling fault's model flags are packed once per model)."""
    if isinstance(fault, CellFault):
        c = fault.cell
        return {"kind": KIND_FP, "vword": c.word, "vbit": c.bit, "v0": state[0]}
    if isinstance(fault, CouplingFault):
        a, v = fault.aggressor, fault.victim
        out = {"kind": KIND_FP, "vword": v.word, "vbit": v.bit, "has_a": 1, "aword": a.word, "abit": a.bit}
        return {**out, "a0": state[0], "v0": state[1]}
    if isinstance(fault, StuckOpenFault):
        return {"kind": KIND_SOF, "vword": fault.cell.word, "vbit": fault.cell.bit, "l0": state[0]}
    out = {"kind": AF_KIND_CODES[fault.kind], "vword": fault.address, "vbit": bit, "v0": state[0], "l0": state[-1]}
    out["wired_and"] = int(fault.wired == "and")
    if fault.other is not None:
        out.update(has_a=1, aword=fault.other, abit=bit, a0=state[1])
    return out


def rows_of(index: int, fault: FaultInstance, width: int) -> list[Row]:
    n = len(fault.power_up_labels())
    bits = range(width) if isinstance(fault, DecoderFault) else (-1,)
    model = _model_word(fault.model) if isinstance(fault, CellFault | CouplingFault) else 0
    return [Row(index, s, b, _pack(_fields(fault, s, b)) | model) for b in bits for s in states(n)]


MAX_INSTANCES = 2_000_000


def universe_size(setup: Arrangement, classes: Sequence[str], universe: Universe) -> int:
    """Fault instances the campaign would simulate: the whole ``all`` or ``neighbours`` universe, or for
    ``sample:K[:neighbours]`` K per class (a class smaller than K whole), counted without enumerating."""
    base = universe.base if universe.kind == "sample" else universe.kind
    sizes = [class_size(c, setup, base) for c in classes if c in RTL_CLASSES]
    if universe.kind == "sample":
        assert universe.size is not None
        return sum(min(universe.size, n) for n in sizes)
    return sum(sizes)


def check_budget(setup: Arrangement, classes: Sequence[str], universe: Universe) -> None:
    """Refuse a universe too large to simulate instance by instance (before enumerating it)."""
    total = universe_size(setup, classes, universe)
    if total > MAX_INSTANCES:
        name = f"sample:{universe.size}" if universe.kind == "sample" else universe.kind
        name += ":neighbours" if universe.kind == "sample" and universe.base == "neighbours" else ""
        hint = "a smaller sample:K" if universe.kind == "sample" else "--universe sample:K"
        raise BistError(
            f"the {name!r} universe of {setup.words} x {setup.width} has {total:,} fault instances, too many to "
            f"simulate one by one on RTL (at most {MAX_INSTANCES:,}); use {hint}"
        )


def plan_instances(
    setup: Arrangement, classes: Sequence[str], universe: Universe
) -> list[tuple[str, list[FaultInstance]]]:
    """The instances of each class in ``universe`` (samples drawn with the universe's seed)."""
    out = []
    for cls in classes:
        if universe.kind == "sample":
            assert universe.size is not None
            found = sample_class(cls, setup, universe.size, universe.seed, universe.base)
        else:
            found = enumerate_class(cls, setup, universe.kind)
        out.append((cls, found))
    return out


def verdict_of(fault: FaultInstance, rows: Sequence[Row], failed: Sequence[bool], width: int) -> Detection:
    """Detected if fail rose from every power-up state, partial if from some, escaped if none; a decoder
    fault per bit (some bit detected from every state of its own: detected), as the fault simulator."""
    if not isinstance(fault, DecoderFault):
        if all(failed):
            return "detected"
        return "partial" if any(failed) else "escaped"
    per_bit: dict[int, list[bool]] = {}
    for r, f in zip(rows, failed, strict=True):
        per_bit.setdefault(r.bit, []).append(f)
    if any(all(v) for v in per_bit.values()):
        return "detected"
    return "partial" if any(failed) else "escaped"


def state_label(fault: FaultInstance, row: Row) -> str:
    labels = fault.power_up_labels()
    text = ", ".join(f"{k}={v}" for k, v in zip(labels, row.state, strict=True))
    return text + (f" (data bit {row.bit})" if row.bit >= 0 else "")
