"""The fast engine: exact verdicts without running the whole memory.

Why this is exact. A single fault involves one or two cells (a decoder fault: two words). Only
operations on the fault's own words can change those cells or be compared against them; every word
sees the same per-word operation list (:func:`memcheck.faults.geometry.schedule`); and inside one
element, whether the aggressor's word is visited before the victim's depends only on their
positions in the ⇑ order (⇓ is its exact reverse). So a fault's behaviour is fixed by

* its *relation*: one cell, same word, aggressor first in the ⇑ order, or victim first;
* the *signature* of each involved cell: the bit each background writes to it for ``w0``.

The engine builds the short interleaved operation stream of each relation once and runs it for all
(signature pair x fault model x power-up state) rows at once with numpy, using lookup tables built
from the fault semantics in :mod:`memcheck.faults.primitives` (the rules the reference engine uses).
A stuck-open cell also depends on the word read just before it, which the SOF path computes per
cell from the ⇑ order.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
import numpy.typing as npt

from memcheck.faults.fast_cells import _cell_results, cell_relation, run_cell_classes
from memcheck.faults.fast_stream import (
    _DETECTION_NAMES,
    AF_RELATIONS,
    AF_VARIANTS,
    CELL_RELATIONS,
    NEVER,
    ClassRun,
    Plan,
    Stream,
    _track,
    build_stream,
)
from memcheck.faults.geometry import Arrangement, Slot
from memcheck.faults.instances import (
    Cell,
    CellFault,
    CouplingFault,
    DecoderFault,
    Detection,
    FaultInstance,
    FaultResult,
    StuckOpenFault,
    Witness,
)
from memcheck.march.notation import MarchTest

IntArray = npt.NDArray[np.int64]
BoolArray = npt.NDArray[np.bool_]

__all__ = [
    "AF_RELATIONS",
    "AF_VARIANTS",
    "CELL_RELATIONS",
    "NEVER",
    "ClassRun",
    "Plan",
    "Stream",
    "af_relation",
    "build_stream",
    "cell_relation",
    "combine_bits",
    "run_af_classes",
    "run_cell_classes",
    "simulate",
    "sof_detection",
]

# ---------------------------------------------------------------------------------------------------
# Stuck-open cells
# ---------------------------------------------------------------------------------------------------


def _last_writes(slots: Sequence[Slot]) -> list[int]:
    """Per slot, the index of the last write slot before it (-1: none yet)."""
    out: list[int] = []
    lw = -1
    for i, s in enumerate(slots):
        out.append(lw)
        if s.kind == "w":
            lw = i
    return out


def _reading_visits(slots: Sequence[Slot]) -> list[tuple[Slot, list[int]]]:
    """Each (background, element) pass that reads: its first slot and the indices of its read slots."""
    visits: list[tuple[Slot, list[int]]] = []
    for i, s in enumerate(slots):
        if s.kind == "T":
            continue
        if not visits or (visits[-1][0].background, visits[-1][0].element) != (s.background, s.element):
            visits.append((s, []))
        if s.kind == "r":
            visits[-1][1].append(i)
    return [v for v in visits if v[1]]


def sof_detection(plan: Plan, words: IntArray, bits: IntArray) -> tuple[BoolArray, BoolArray]:
    """Whether some compared read of each stuck-open cell differs, for data-out latch power-up 0 and 1.

    The open cell's read returns the latch, which holds the value of the last read of a *different*
    word on that data bit (reads of the open cell leave it unchanged): inside an element that is the
    word visited just before; for the first word of an element, the last word of the previous
    element that reads (or the one before it, when that is this same word).
    """
    rs, slots = plan.rs, plan.slots
    n = plan.setup.words
    up = rs.up
    last_write = _last_writes(slots)
    codes_cls = rs.class_codes()

    def good_value(u: IntArray, t: int) -> IntArray:
        """The fault-free value of cell (u, bits) when slot ``t`` runs (never written: 0)."""
        w = last_write[t]
        if w < 0:
            return np.zeros(len(u), np.int64)
        return ((codes_cls[rs.wclass[u], bits] >> slots[w].background) & 1) ^ slots[w].value

    visits = _reading_visits(slots)
    p = rs.pos[words]
    det = [np.zeros(len(words), bool), np.zeros(len(words), bool)]
    for vi, (first, reads) in enumerate(visits):
        t_last = reads[-1]
        down = first.direction == "down"
        q = (n - 1 - p) if down else p
        pred = up[np.clip(p + 1 if down else p - 1, 0, n - 1)]
        latch = good_value(pred, t_last)
        initial = np.zeros(len(words), bool)
        at_start = q == 0
        if at_start.any():
            if vi == 0 or n == 1:
                initial |= at_start
            else:
                pfirst, preads = visits[vi - 1]
                pt = preads[-1]
                pdown = pfirst.direction == "down"
                last_word = up[0] if pdown else up[n - 1]
                second = up[1] if pdown else up[n - 2]
                src = np.where(words == last_word, second, last_word)
                latch = np.where(at_start, good_value(src, pt), latch)
        for t in reads:
            compared = last_write[t] >= 0
            if not compared:
                continue
            expected = good_value(words, t)
            for l0 in (0, 1):
                got = np.where(initial, l0, latch)
                det[l0] |= got != expected
    return det[0], det[1]


def _sof_results(plan: Plan, faults: Sequence[StuckOpenFault]) -> list[FaultResult]:
    words = np.array([f.cell.word for f in faults], np.int64)
    bits = np.array([f.cell.bit for f in faults], np.int64)
    d0, d1 = sof_detection(plan, words, bits)
    out = []
    for i, f in enumerate(faults):
        if d0[i] and d1[i]:
            out.append(FaultResult(f, "detected"))
            continue
        verdict: Detection = "partial" if d0[i] or d1[i] else "escaped"
        l0 = 1 if d0[i] else 0
        out.append(FaultResult(f, verdict, Witness(((f.power_up_labels()[0], l0),), None, None)))
    return out


# ---------------------------------------------------------------------------------------------------
# Address-decoder faults (one data bit at a time: the bits of a word never interact)
# ---------------------------------------------------------------------------------------------------


def _reach(kind: str) -> tuple[tuple[int, int], tuple[int, int]]:
    """((x reaches cell x, x reaches cell y), (y reaches cell x, y reaches cell y))."""
    return {
        "no-cell": ((0, 0), (0, 1)),
        "no-cell-shared": ((0, 0), (1, 1)),
        "wrong-cell": ((0, 1), (0, 1)),
        "extra-cell": ((1, 1), (0, 1)),
    }[kind]


def run_af_classes(
    plan: Plan, relation: str, code_x: IntArray, code_y: IntArray, variants: Sequence[tuple[str, str | None]]
) -> ClassRun:
    """Rows (signature pair, variant, power-up state (cell x, cell y, floating value)) of one bit."""
    stream = plan.stream(relation)
    nc, nm, ns = len(code_x), len(variants), 8
    rows = nc * nm * ns
    r = np.arange(rows, dtype=np.int64)
    row_c, row_m, s = r // (nm * ns), (r // ns) % nm, r % ns
    reach = np.array([_reach(k) for k, _ in variants], np.int64)[row_m]  # (rows, 2, 2)
    wired_and = np.array([w != "or" for _, w in variants], bool)[row_m]
    cx, cy, fl = (s >> 2) & 1, (s >> 1) & 1, s & 1
    gx, gy = cx.copy(), cy.copy()
    codes = {"X": np.asarray(code_x, np.int64)[row_c], "Y": np.asarray(code_y, np.int64)[row_c]}
    det = np.zeros(rows, bool)
    exc = np.full(rows, NEVER, np.int64)
    mask = np.full(rows, NEVER, np.int64)
    for t in range(len(stream)):
        side, kind, value, k = stream.sides[t], stream.kinds[t], stream.values[t], stream.slots[t].background
        z = 0 if side == "X" else 1
        hx, hy = reach[:, z, 0] == 1, reach[:, z, 1] == 1
        if kind == "w":
            d = ((codes[side] >> k) & 1) ^ value
            cx = np.where(hx, d, cx)
            cy = np.where(hy, d, cy)
            if z == 0:
                gx = d
            else:
                gy = d
        else:
            both = np.where(wired_and, cx & cy, cx | cy)
            out = np.where(hx & hy, both, np.where(hx, cx, np.where(hy, cy, fl)))
            if stream.written_before[t]:
                det |= out != (gx if z == 0 else gy)
        _track(t, (cx != gx) | (cy != gy), exc, mask)
    shape = (nc, nm, ns)
    return ClassRun(stream, det.reshape(shape), exc.reshape(shape), mask.reshape(shape))


def af_relation(pos: IntArray, x: IntArray, y: IntArray | None) -> IntArray:
    """Relation index into AF_RELATIONS."""
    if y is None:
        return np.zeros(len(x), np.int64)
    return np.where(pos[x] < pos[y], 1, 2).astype(np.int64)


def af_state_values(s: int, has_y: bool) -> tuple[int, ...]:
    """Power-up values (word x, [word y,] floating) of 8-state index ``s`` for one bit."""
    return ((s >> 2) & 1, (s >> 1) & 1, s & 1) if has_y else ((s >> 2) & 1, s & 1)


def combine_bits(det: BoolArray) -> tuple[int, IntArray]:
    """Detection code of a decoder fault from its per-bit detection ``det[b, s]`` over the states it
    uses, and the first escaping state of each bit (see the reference engine for why bits combine so)."""
    all_d = bool(det.all(axis=1).any())
    any_d = bool(det.any())
    return (0 if all_d else (1 if any_d else 2)), np.argmin(det, axis=1)


def _af_results(plan: Plan, faults: Sequence[DecoderFault]) -> list[FaultResult]:
    rs = plan.rs
    width = plan.setup.width
    var_index = {v: i for i, v in enumerate(AF_VARIANTS)}
    vi = np.array([var_index[(f.kind, f.wired)] for f in faults], np.int64)
    x = np.array([f.address for f in faults], np.int64)
    has_y = np.array([f.other is not None for f in faults], bool)
    y = np.array([f.other if f.other is not None else f.address for f in faults], np.int64)
    rel = np.where(has_y, af_relation(rs.pos, x, y), 0)
    bits = np.arange(width, dtype=np.int64)
    codes = rs.class_codes()
    cx = codes[rs.wclass[x]]  # (n, width)
    cy = codes[rs.wclass[y]]
    runs: dict[int, tuple[ClassRun, dict[tuple[int, int], int], dict[int, int]]] = {}
    for ri, relation in enumerate(AF_RELATIONS):
        idx = np.flatnonzero(rel == ri)
        if idx.size == 0:
            continue
        pairs = np.stack([cx[idx].reshape(-1), cy[idx].reshape(-1)], axis=1)
        keys = np.unique(pairs, axis=0)
        used = sorted(set(vi[idx].tolist()))
        run = run_af_classes(plan, relation, keys[:, 0], keys[:, 1], [AF_VARIANTS[u] for u in used])
        runs[ri] = (run, {(int(a), int(b)): i for i, (a, b) in enumerate(keys)}, {u: i for i, u in enumerate(used)})
    out: list[FaultResult] = []
    for i, f in enumerate(faults):
        run, key_index, local = runs[int(rel[i])]
        m = local[int(vi[i])]
        cls_rows = [key_index[(int(cx[i, b]), int(cy[i, b]))] for b in bits]
        states = np.arange(8) if f.other is not None else np.array([0, 1, 4, 5])  # y's cell unused: keep it 0
        det = run.detected[cls_rows, m][:, states]  # (width, ns)
        code, first = combine_bits(det)
        verdict = _DETECTION_NAMES[code]
        if verdict == "detected":
            out.append(FaultResult(f, verdict))
            continue
        chosen = states[first]
        labels = f.power_up_labels()
        per_bit = [af_state_values(int(chosen[b]), f.other is not None) for b in range(width)]
        values = tuple(sum(per_bit[b][j] << b for b in range(width)) for j in range(len(labels)))
        best: tuple[int, int] | None = None
        for b in bits:
            e = int(run.excited[cls_rows[b], m, chosen[b]])
            if e != NEVER and (best is None or e < best[0]):
                best = (e, int(run.masked[cls_rows[b], m, chosen[b]]))
        words = {"X": int(x[i]), "Y": int(y[i])}
        e, mk = best if best is not None else (NEVER, NEVER)
        out.append(
            FaultResult(
                f,
                verdict,
                Witness(tuple(zip(labels, values, strict=True)), run.stream.ref(e, words), run.stream.ref(mk, words)),
            )
        )
    return out


# ---------------------------------------------------------------------------------------------------
# Public entry point for explicit fault lists
# ---------------------------------------------------------------------------------------------------


def simulate(
    test: MarchTest, faults: Sequence[FaultInstance], setup: Arrangement, plan: Plan | None = None
) -> list[FaultResult]:
    """Fast verdicts for ``faults`` (same results as :func:`memcheck.faults.reference.simulate_reference`)."""
    plan = plan if plan is not None else Plan.build(test, setup)
    for f in faults:
        _check_inside(f, setup)
    groups: dict[type, list[int]] = {}
    for i, f in enumerate(faults):
        key = CellFault if isinstance(f, CouplingFault) else type(f)
        groups.setdefault(key, []).append(i)
    out: list[FaultResult | None] = [None] * len(faults)
    handlers = {CellFault: _cell_results, StuckOpenFault: _sof_results, DecoderFault: _af_results}
    for key, idx in groups.items():
        results = handlers[key](plan, [faults[i] for i in idx])  # type: ignore[operator]
        for i, r in zip(idx, results, strict=True):
            out[i] = r
    return [r for r in out if r is not None]


def _check_inside(f: FaultInstance, setup: Arrangement) -> None:
    from memcheck.errors import FaultModelError

    cells: tuple[Cell, ...] = () if isinstance(f, DecoderFault) else f.cells
    words = f.words if isinstance(f, DecoderFault) else tuple(c.word for c in cells)
    if any(not 0 <= w < setup.words for w in words) or any(not 0 <= c.bit < setup.width for c in cells):
        raise FaultModelError(f"fault '{f.describe()}' lies outside the {setup.words} x {setup.width} memory")
