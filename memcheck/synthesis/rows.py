"""The cell-level row model the synthesis search runs on.

The fast fault engine shows that a fault's behaviour under a March test depends only on its
*relation* (one cell, two cells of one word, aggressor word first or second in the ⇑ order; for
decoder faults: one word, or the two words in either order), the cells' signature codes and the
fault model. A *row* is one such case together with one power-up state. Its state is a small
integer (the faulty cell values, at most 8 values) or ``DET`` once a compared read has returned a
wrong value; ``DET`` is absorbing (a fault detected early stays detected).

Every row sees the operations of a March element on the word visited *first* in the ⇑ order and
then on the word visited *second* (⇓: the other way round); a one-word row only has the first
word. So a row is fully described by two tables ``first[op]`` and ``second[op]`` mapping state ->
state for the four logical operations r0, r1, w0, w1, plus a ``pause`` table for delay elements.
The tables are built from the same fault semantics the engines use
(:mod:`memcheck.faults.primitives`) and the same per-step rules as the fast engine; a Hypothesis
property test holds this model equal to the reference engine.

A fault *instance* is detected when all its rows (its power-up states) reach ``DET``; a decoder
fault on words of several bits when, for some bit, all its rows do (as both engines combine bits).
Fault classes plug in by name through :data:`ROW_BUILDERS`.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from functools import lru_cache

import numpy as np
import numpy.typing as npt

from memcheck.faults import Arrangement
from memcheck.faults.fast import AF_VARIANTS  # the fast engine's decoder variants, in its order
from memcheck.faults.primitives import FaultModel, aggressor_op, models_of, pause, prev_code, settle, victim_op
from memcheck.faults.universe import cell_table, pair_table_all, pair_table_neighbours, word_pair_table
from memcheck.synthesis.rowspec import Built, RowSpec, StepFn, flip_bit
from memcheck.synthesis.sof import sof_builder

U8 = npt.NDArray[np.uint8]
IntArray = npt.NDArray[np.int64]
BoolArray = npt.NDArray[np.bool_]

NSTATE = 8  # row states 0..7
DET = NSTATE  # the absorbing "detected" state
WIDTH = NSTATE + 1
OPS: tuple[tuple[str, int], ...] = (("r", 0), ("r", 1), ("w", 0), ("w", 1))  # op index -> (kind, logical value)
UNWRITTEN = 2  # "good value" before the first write
# End of a word's operations in an element: two operations in a row never span words or elements, so
# the "armed" bit (state bit 2: the previous operation could start a dynamic fault) is dropped.
CLEAR = np.array([s & 3 for s in range(NSTATE)] + [NSTATE], np.uint8)


@dataclass(frozen=True)
class Instance:
    """Rows that must all be detected (one fault case, every power-up state); ``alternatives``
    lists row groups of which one must be fully detected (bits of a decoder fault)."""

    label: str
    alternatives: tuple[tuple[int, ...], ...]


# ---------------------------------------------------------------------------------------------------
# Cell faults (the FP-based classes): state = aggressor value * 2 + victim value
# ---------------------------------------------------------------------------------------------------


def _armed(model: FaultModel, part: str) -> int:
    """The previous-operation code a dynamic primitive of ``model`` needs on its victim or aggressor
    part (0: none). A row remembers only whether that code is the one it saw (bit 2 of its state), so
    a model may have one such code."""
    codes = set()
    for p in model.primitives:
        s = p.victim if part == "victim" else p.aggressor
        if s is not None and s.pre is not None and s.state is not None:
            codes.add(prev_code(s.state, *s.pre))
    if len(codes) > 1:
        raise ValueError(f"{model.name}: more than one dynamic first operation per cell")
    return codes.pop() if codes else 0


def _victim_step(m: FaultModel, ca: int, cv: int, *, also_aggressor: bool) -> StepFn:
    arm_v, arm_a = _armed(m, "victim"), _armed(m, "aggressor")

    def step(s: int, kind: str, x: int) -> tuple[int, bool]:
        a, v, armed = (s >> 1) & 1, s & 1, s >> 2
        det = False
        d = v if kind == "r" else cv ^ x
        new_v, out = victim_op(m, a, v, kind, d, arm_v if armed else 0)
        if kind == "r":
            det = out != (cv ^ x)
        armed_new = int(arm_v != 0 and prev_code(v, kind, d) == arm_v)
        a_new = a
        if also_aggressor:  # the aggressor bit shares the word: its disturbance comes second
            da = a if kind == "r" else ca ^ x
            new_v = aggressor_op(m, a, new_v, kind, da, arm_a if armed else 0)
            armed_new |= int(arm_a != 0 and prev_code(a, kind, da) == arm_a)
            a_new = da
        return armed_new * 4 + a_new * 2 + settle(m, a_new, new_v), det

    return step


def _aggressor_step(m: FaultModel, ca: int) -> StepFn:
    arm_a = _armed(m, "aggressor")

    def step(s: int, kind: str, x: int) -> tuple[int, bool]:
        a, v, armed = (s >> 1) & 1, s & 1, s >> 2
        d = a if kind == "r" else ca ^ x
        new_v = aggressor_op(m, a, v, kind, d, arm_a if armed else 0)
        armed_new = int(arm_a != 0 and prev_code(a, kind, d) == arm_a)
        return armed_new * 4 + d * 2 + settle(m, d, new_v), False

    return step


@lru_cache(maxsize=4096)  # rows depend only on these arguments: built once per (model, relation, bits)
def _cell_rows(m: FaultModel, relation: int, ca: int, cv: int) -> list[RowSpec]:
    """relation: 0 one cell, 1 same word, 2 aggressor word first in ⇑, 3 victim word first."""
    states = [(0, v) for v in (0, 1)] if relation == 0 else [(a, v) for a in (0, 1) for v in (0, 1)]
    vstep = _victim_step(m, ca, cv, also_aggressor=relation == 1)
    out = []
    for a, v in states:
        init = a * 2 + settle(m, a, v)
        if relation <= 1:
            p = (lambda s, m=m: settle(m, s >> 1, pause(m, s & 1))) if relation == 0 else None
            out.append(RowSpec(init, vstep, None, p))
        elif relation == 2:
            out.append(RowSpec(init, _aggressor_step(m, ca), vstep))
        else:
            out.append(RowSpec(init, vstep, _aggressor_step(m, ca)))
    return out


# ---------------------------------------------------------------------------------------------------
# Address-decoder faults (one data bit): state = cell x * 2 + cell y, the floating value is fixed
# ---------------------------------------------------------------------------------------------------

_REACH = {  # ((x reaches cell x, x reaches cell y), (y reaches cell x, y reaches cell y))
    "no-cell": ((0, 0), (0, 1)),
    "no-cell-shared": ((0, 0), (1, 1)),
    "wrong-cell": ((0, 1), (0, 1)),
    "extra-cell": ((1, 1), (0, 1)),
}


def _af_step(kind: str, wired: str | None, side: int, code: int, fl: int) -> StepFn:
    hx, hy = _REACH[kind][side]

    def step(s: int, op: str, x: int) -> tuple[int, bool]:
        cx, cy = (s >> 1) & 1, s & 1
        if op == "w":
            d = code ^ x
            return (d if hx else cx) * 2 + (d if hy else cy), False
        both = (cx & cy) if wired != "or" else (cx | cy)
        out = both if hx and hy else (cx if hx else (cy if hy else fl))
        return s, out != (code ^ x)

    return step


@lru_cache(maxsize=1024)
def _af_rows(variant: int, relation: int, cx: int, cy: int) -> list[RowSpec]:
    """relation: 0 one word (x only), 1 x first in ⇑, 2 y first."""
    kind, wired = AF_VARIANTS[variant]
    out = []
    for s in range(4 if relation == 0 else 8):
        x, y, fl = (s >> 1) & 1, 0, s & 1
        if relation:
            x, y, fl = (s >> 2) & 1, (s >> 1) & 1, s & 1
        sx, sy = _af_step(kind, wired, 0, cx, fl), _af_step(kind, wired, 1, cy, fl)
        if relation == 0:
            out.append(RowSpec(x * 2 + y, sx, None))
        else:
            out.append(RowSpec(x * 2 + y, sx, sy) if relation == 1 else RowSpec(x * 2 + y, sy, sx))
    return out


# ---------------------------------------------------------------------------------------------------
# Builders: one per fault class (FP-based classes share one), registered by name
# ---------------------------------------------------------------------------------------------------

_RELATION_NAMES = ("one cell", "same word", "aggressor's word first in ⇑", "victim's word first in ⇑")
_AF_RELATION_NAMES = ("", "x first in ⇑", "y first in ⇑")  # (label, alternatives of row lists)


def fp_builder(cls: str, setup: Arrangement, bg: int = 0, universe: str = "all") -> Built:
    """Rows of an FP-based class over the relations and codes present in ``setup``, as they behave
    in pass ``bg`` (the data background's flip bits of each signature code)."""
    rs = setup.resolve()
    models = models_of(cls)
    out: Built = []
    if not models[0].two_cell:
        for code in sorted(set(cell_table(rs).code.tolist())):
            out += [
                (m.name + (f" (code {code})" if code else ""), [_cell_rows(m, 0, 0, flip_bit(code, bg))])
                for m in models
            ]
        return out
    if setup.cells < 2:
        return out
    pt = pair_table_all(rs) if universe == "all" else pair_table_neighbours(rs)
    keys = sorted({(int(r), int(a), int(v)) for r, a, v in zip(pt.relation, pt.code_a, pt.code_v, strict=True)})
    for rel, ca, cv in keys:
        where = _RELATION_NAMES[rel] + (f", codes {ca}{cv}" if ca or cv else "")
        out += [(f"{m.name} ({where})", [_cell_rows(m, rel, flip_bit(ca, bg), flip_bit(cv, bg))]) for m in models]
    return out


def af_builder(cls: str, setup: Arrangement, bg: int = 0, universe: str = "all") -> Built:
    """Decoder-fault rows: per word pair class, one alternative per data bit (pass ``bg``)."""
    rs = setup.resolve()
    codes = rs.class_codes()
    per_class = np.bincount(rs.wclass, minlength=codes.shape[0])
    groups: set[tuple[int, tuple[int, ...], tuple[int, ...]]] = set()
    for c in np.flatnonzero(per_class).tolist():
        groups.add((0, tuple(codes[c].tolist()), tuple(codes[c].tolist())))
    wt = word_pair_table(rs, universe)
    for r, x, y in zip(wt.relation.tolist(), wt.class_x.tolist(), wt.class_y.tolist(), strict=True):
        groups.add((r, tuple(codes[x].tolist()), tuple(codes[y].tolist())))
    out: Built = []
    for rel, bx, by in sorted(groups):
        for variant in (0,) if rel == 0 else range(1, 6):
            bits = sorted(set(zip(bx, by, strict=True)))
            kind, wired = AF_VARIANTS[variant]
            label = kind + (f" ({wired})" if wired else "") + ("" if rel == 0 else f", {_AF_RELATION_NAMES[rel]}")
            out.append((label, [_af_rows(variant, rel, flip_bit(cx, bg), flip_bit(cy, bg)) for cx, cy in bits]))
    return out


Builder = Callable[[str, Arrangement, int, str], Built]  # (class, memory, background index, universe kind)
ROW_BUILDERS: dict[str, Builder] = {"AF": af_builder, "SOF": sof_builder}


def builder_for(cls: str) -> Builder | None:
    """The row builder of a class: registered by name, or the generic one for FP-based classes."""
    if cls in ROW_BUILDERS:
        return ROW_BUILDERS[cls]
    return fp_builder if models_of(cls) else None


# ---------------------------------------------------------------------------------------------------
# The model: tables over all rows, duplicates merged
# ---------------------------------------------------------------------------------------------------


@dataclass(frozen=True, eq=False)
class RowModel:
    """Tables ``first[op, row, state]``, ``second[...]`` and ``pause[row, state]`` (``DET`` maps to
    itself), the power-up state of every row and the instances that must be detected.
    ``passes[bg]`` holds the (first, second) tables of each data background's pass (the test runs
    once per background, the state carrying over); ``first``/``second`` are background 0's."""

    classes: tuple[str, ...]
    init: U8
    first: U8
    second: U8
    pause: U8
    instances: tuple[Instance, ...]
    passes: tuple[tuple[U8, U8], ...] = ()

    @property
    def nbg(self) -> int:
        return max(1, len(self.passes))

    @property
    def rows(self) -> int:
        return int(self.init.size)

    def restrict(self, index: int) -> RowModel:
        """The model of instance ``index`` alone (its rows renumbered)."""
        inst = self.instances[index]
        rows = sorted({r for alt in inst.alternatives for r in alt})
        new = {r: i for i, r in enumerate(rows)}
        alts = tuple(tuple(new[r] for r in alt) for alt in inst.alternatives)
        sel = np.array(rows, np.int64)
        return RowModel(
            self.classes,
            self.init[sel],
            np.ascontiguousarray(self.first[:, sel]),
            np.ascontiguousarray(self.second[:, sel]),
            self.pause[sel],
            (Instance(inst.label, alts),),
            tuple((np.ascontiguousarray(f[:, sel]), np.ascontiguousarray(q[:, sel])) for f, q in self.passes),
        )

    def final(self, states: U8) -> U8:
        """The state each instance's row ends the whole test in (the state itself here; a model over
        several passes composes them, see :mod:`memcheck.synthesis.passes`)."""
        return states

    def score(self, states: U8) -> IntArray:
        """Rows each of ``states`` has detected (the beam search's ranking)."""
        det: IntArray = (self.final(states) == DET).sum(axis=1)
        return det

    def complete(self, states: U8) -> BoolArray:
        """Which of ``states`` (n, rows) detect every instance."""
        done = self.final(states) == DET
        ok = np.ones(states.shape[0], bool)
        for inst in self.instances:
            any_alt = np.zeros(states.shape[0], bool)
            for alt in inst.alternatives:
                any_alt |= done[:, list(alt)].all(axis=1)
            ok &= any_alt
            if not ok.any():
                break
        return ok


def _table(step: StepFn | None) -> U8:
    t = np.empty((4, WIDTH), np.uint8)
    for o, (kind, x) in enumerate(OPS):
        for s in range(NSTATE):
            if step is None:
                t[o, s] = s
                continue
            ns, det = step(s, kind, x)
            t[o, s] = DET if det else ns
        t[o, DET] = DET
    return t


Tables = tuple[U8, U8, U8]


def _row_tables(spec: RowSpec) -> Tables:
    f, s = _table(spec.first), _table(spec.second)
    p = np.arange(WIDTH, dtype=np.uint8)
    if spec.pause is not None:
        p[:NSTATE] = [spec.pause(x & 3) for x in range(NSTATE)]  # a pause ends a pair
    return f, s, p


def _cached_tables(spec: RowSpec, cache: dict[int, tuple[RowSpec, Tables, bytes]]) -> tuple[Tables, bytes]:
    """The tables of ``spec`` and their bytes, built once per spec object (the entry holds the spec,
    so its id cannot be reused while the cache lives)."""
    hit = cache.get(id(spec))
    if hit is None or hit[0] is not spec:
        t = _row_tables(spec)
        hit = cache[id(spec)] = (spec, t, b"".join(x.tobytes() for x in t))
    return hit[1], hit[2]


def build_model(classes: Sequence[str], setup: Arrangement, universe: str = "all") -> RowModel:
    """The row model of ``classes`` on ``setup`` over the ``universe`` kind (``all`` or
    ``neighbours``): one pass per data background, the rows of each pass built from the same cases
    (signature codes) in the same order. Classes without a builder raise KeyError (the caller
    reports it)."""
    nbg = setup.resolve().nbg
    rows: dict[bytes, int] = {}
    cache: dict[int, tuple[RowSpec, Tables, bytes]] = {}
    tabs: list[list[tuple[U8, U8, U8]]] = []
    inits: list[int] = []
    instances: list[Instance] = []
    for cls in classes:
        builder = builder_for(cls)
        if builder is None:
            raise KeyError(cls)
        per_bg = [builder(cls, setup, k, universe) for k in range(nbg)]
        for cases in zip(*per_bg, strict=True):
            alts = []
            for specs in zip(*(alternatives for _, alternatives in cases), strict=True):
                ids = []
                for row in zip(*specs, strict=True):
                    t = [_cached_tables(spec, cache) for spec in row]
                    key = bytes([row[0].init]) + b"".join(k for _, k in t)
                    if key not in rows:
                        rows[key] = len(inits)
                        inits.append(row[0].init)
                        tabs.append([tt for tt, _ in t])
                    ids.append(rows[key])
                alts.append(tuple(sorted(set(ids))))
            instances.append(Instance(f"{cls}: {cases[0][0]}", tuple(alts)))
    passes = tuple(
        (
            np.ascontiguousarray(np.stack([t[k][0] for t in tabs], axis=1)),
            np.ascontiguousarray(np.stack([t[k][1] for t in tabs], axis=1)),
        )
        for k in range(nbg)
    )
    return RowModel(
        tuple(classes),
        np.array(inits, np.uint8),
        passes[0][0],
        passes[0][1],
        np.stack([t[0][2] for t in tabs]),
        tuple(instances),
        passes,
    )


# ---------------------------------------------------------------------------------------------------
# Symmetries the search may use (each checked, never assumed)
# ---------------------------------------------------------------------------------------------------

_FLIP = str.maketrans("01", "10")


def _complement(m: FaultModel) -> frozenset[str]:
    return frozenset(p.notation.translate(_FLIP) for p in m.primitives)


def complement_closed(classes: Sequence[str]) -> bool:
    """True when swapping 0 and 1 in every fault of ``classes`` gives faults of the same classes, so
    a test and its 0/1 complement detect the same instances (AF: wired-AND and wired-OR and both
    floating values are all in the universe, so AF is closed)."""
    for cls in classes:
        if cls in ("AF", "SOF"):  # SOF: both latch power-up values are in the universe
            continue
        if cls in ROW_BUILDERS:
            return False
        mine = {frozenset(p.notation for p in m.primitives) for m in models_of(cls)}
        if any(_complement(m) not in mine for m in models_of(cls)):
            return False
    return True


def mirror_closed(setup: Arrangement, universe: str = "all") -> bool:
    """True when reversing every element's direction maps the fault universe onto itself: for each
    cell pair with the aggressor's word first in ⇑ there is one with the same codes and the victim's
    word first, and likewise for decoder word pairs."""
    rs = setup.resolve()
    pt = None if setup.cells < 2 else (pair_table_all(rs) if universe == "all" else pair_table_neighbours(rs))
    if pt is not None:
        keys = {(int(r), int(a), int(v)) for r, a, v in zip(pt.relation, pt.code_a, pt.code_v, strict=True)}
        swap = {2: 3, 3: 2}
        if keys != {(swap.get(r, r), a, v) for r, a, v in keys}:
            return False
    codes = rs.class_codes()
    wt = word_pair_table(rs, universe)
    groups = {
        (int(r), codes[x].tobytes(), codes[y].tobytes())
        for r, x, y in zip(wt.relation, wt.class_x, wt.class_y, strict=True)
    }
    return groups == {(3 - r, bx, by) for r, bx, by in groups}
