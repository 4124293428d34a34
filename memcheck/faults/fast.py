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
from dataclasses import dataclass, field

import numpy as np
import numpy.typing as npt

from memcheck.faults.geometry import Arrangement, Resolved, Slot, check_consistent, schedule
from memcheck.faults.instances import (
    Cell,
    CellFault,
    CouplingFault,
    DecoderFault,
    DecoderKind,
    Detection,
    FaultInstance,
    FaultResult,
    OpRef,
    StuckOpenFault,
    Wired,
    Witness,
)
from memcheck.faults.primitives import FaultModel, aggressor_op, pause, settle, victim_op
from memcheck.march.notation import MarchTest

IntArray = npt.NDArray[np.int64]
BoolArray = npt.NDArray[np.bool_]
ByteArray = npt.NDArray[np.uint8]

NEVER = -2  # step index meaning "did not happen"; -1 is the power-up moment

CELL_RELATIONS = ("single", "same", "AV", "VA")
AF_RELATIONS = ("X", "XY", "YX")

# (kind, wired) of every decoder-fault variant, in a fixed order
AF_VARIANTS: tuple[tuple[DecoderKind, Wired | None], ...] = (
    ("no-cell", None),
    ("no-cell-shared", "and"),
    ("no-cell-shared", "or"),
    ("wrong-cell", None),
    ("extra-cell", "and"),
    ("extra-cell", "or"),
)


# ---------------------------------------------------------------------------------------------------
# Streams
# ---------------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Stream:
    """The operations on a fault's cells in time order. ``sides[t]`` names the cells operated on:
    ``V``/``A`` (victim/aggressor word), ``VA`` (one word holding both), ``X``/``Y`` (the two words
    of a decoder fault) or ``T`` (a pause). ``written_before[t]`` says whether that word has been
    written before step ``t`` (only then is a read compared)."""

    sides: tuple[str, ...]
    kinds: tuple[str, ...]
    values: tuple[int, ...]
    slots: tuple[Slot, ...]
    written_before: tuple[bool, ...]

    def __len__(self) -> int:
        return len(self.sides)

    def ref(self, t: int, words: dict[str, int]) -> OpRef | None:
        """The place of step ``t`` for a fault whose side words are ``words`` (e.g. {"V": 9, "A": 4})."""
        if t == NEVER:
            return None
        if t < 0:
            return OpRef.power_up()
        s = self.slots[t]
        if self.sides[t] == "T":
            return OpRef(s.background, s.element, -1, -1)
        return OpRef(s.background, s.element, s.op, words[self.sides[t][0]])


def build_stream(slots: Sequence[Slot], relation: str) -> Stream:
    """The interleaved stream of one relation (see the module docstring)."""
    steps: list[tuple[str, Slot]] = []
    if relation in ("single", "same", "X"):
        side = {"single": "V", "same": "VA", "X": "X"}[relation]
        for s in slots:
            if s.kind == "T":
                if relation == "single":
                    steps.append(("T", s))
            else:
                steps.append((side, s))
    else:
        first_up, second_up = relation[0], relation[1]
        i = 0
        while i < len(slots):
            s = slots[i]
            if s.kind == "T":
                i += 1
                continue
            j = i
            while j < len(slots) and (slots[j].background, slots[j].element) == (s.background, s.element):
                j += 1
            element = slots[i:j]
            first, second = (first_up, second_up) if s.direction == "up" else (second_up, first_up)
            steps.extend((first, x) for x in element)
            steps.extend((second, x) for x in element)
            i = j
    written: set[str] = set()
    before: list[bool] = []
    for side, s in steps:
        before.append(any(c in written for c in side) and side != "T")
        if s.kind == "w":
            written.update(side)
    return Stream(
        tuple(sd for sd, _ in steps),
        tuple(s.kind for _, s in steps),
        tuple(s.value for _, s in steps),
        tuple(s for _, s in steps),
        tuple(before),
    )


@dataclass(eq=False)
class Plan:
    """A test resolved over one setup, with its streams built on demand."""

    test: MarchTest
    setup: Arrangement
    rs: Resolved
    slots: tuple[Slot, ...]
    _streams: dict[str, Stream] = field(default_factory=dict)

    @classmethod
    def build(cls, test: MarchTest, setup: Arrangement) -> Plan:
        rs = setup.resolve()
        check_consistent(test, rs.nbg)
        return cls(test, setup, rs, schedule(test, rs.nbg, setup.any_order))

    def stream(self, relation: str) -> Stream:
        if relation not in self._streams:
            self._streams[relation] = build_stream(self.slots, relation)
        return self._streams[relation]


# ---------------------------------------------------------------------------------------------------
# Single- and two-cell FP faults
# ---------------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class _Tables:
    """Fault semantics as flat lookup tables, index ``((m*2 + a)*2 + v)`` (times 3 plus the
    operation code 0=read, 1=w0, 2=w1 where there is an operation)."""

    victim: ByteArray
    read_out: ByteArray
    aggressor: ByteArray
    settle: ByteArray
    pause: ByteArray


def _tables(models: Sequence[FaultModel]) -> _Tables:
    nm = len(models)
    tv = np.zeros(nm * 12, np.uint8)
    tr = np.zeros(nm * 4, np.uint8)
    ta = np.zeros(nm * 12, np.uint8)
    ts = np.zeros(nm * 4, np.uint8)
    tp = np.zeros(nm * 2, np.uint8)
    for m, model in enumerate(models):
        for v in (0, 1):
            tp[m * 2 + v] = pause(model, v)
            for a in (0, 1):
                base = (m * 2 + a) * 2 + v
                new_v, out = victim_op(model, a, v, "r", v)
                tv[base * 3], tr[base] = new_v, out
                ta[base * 3] = aggressor_op(model, a, v, "r", a)
                ts[base] = settle(model, a, v)
                for d in (0, 1):
                    tv[base * 3 + 1 + d] = victim_op(model, a, v, "w", d)[0]
                    ta[base * 3 + 1 + d] = aggressor_op(model, a, v, "w", d)
    return _Tables(tv, tr, ta, ts, tp)


@dataclass(frozen=True)
class ClassRun:
    """Per (class, model, power-up state): detection and the first excitation/masking step."""

    stream: Stream
    detected: BoolArray  # (C, M, S)
    excited: IntArray
    masked: IntArray

    def verdicts(self) -> npt.NDArray[np.int8]:
        """(C, M): 0 detected, 1 partial, 2 escaped."""
        all_d = self.detected.all(axis=2)
        any_d = self.detected.any(axis=2)
        return np.where(all_d, 0, np.where(any_d, 1, 2)).astype(np.int8)

    def escape_state(self) -> IntArray:
        """(C, M): the first power-up state that escapes (0 when none does)."""
        out: IntArray = np.argmin(self.detected, axis=2).astype(np.int64)
        return out


def _track(t: int, diff: BoolArray, exc: IntArray, mask: IntArray) -> None:
    exc[diff & (exc == NEVER)] = t
    mask[~diff & (exc != NEVER) & (mask == NEVER)] = t


def run_cell_classes(
    plan: Plan, relation: str, code_a: IntArray, code_v: IntArray, models: Sequence[FaultModel]
) -> ClassRun:
    """Simulate every (signature pair, model, power-up state) row of one relation at once."""
    stream = plan.stream(relation)
    single = relation == "single"
    nc, nm, ns = len(code_v), len(models), (2 if single else 4)
    tab = _tables(models)
    rows = nc * nm * ns
    r = np.arange(rows, dtype=np.int64)
    row_c = r // (nm * ns)
    row_m = (r // ns) % nm
    s = r % ns
    a = np.zeros(rows, np.int64) if single else (s >> 1)
    v = s & 1
    gv = v.copy()
    cv = np.asarray(code_v, np.int64)[row_c]
    ca = np.asarray(code_a, np.int64)[row_c]
    m2 = row_m * 2
    v = tab.settle[(m2 + a) * 2 + v].astype(np.int64)
    det = np.zeros(rows, bool)
    exc = np.full(rows, NEVER, np.int64)
    mask = np.full(rows, NEVER, np.int64)
    _track(-1, v != gv, exc, mask)
    for t in range(len(stream)):
        side, kind, value, k = stream.sides[t], stream.kinds[t], stream.values[t], stream.slots[t].background
        a_pre = a
        if side == "T":
            v = tab.pause[m2 + v].astype(np.int64)
        if "V" in side:
            base = (m2 + a_pre) * 2 + v
            if kind == "r":
                out = tab.read_out[base]
                if stream.written_before[t]:
                    det |= out != gv
                v = tab.victim[base * 3].astype(np.int64)
            else:
                d = ((cv >> k) & 1) ^ value
                v = tab.victim[base * 3 + 1 + d].astype(np.int64)
                gv = d
        if "A" in side:
            base = (m2 + a_pre) * 2 + v
            if kind == "r":
                v = tab.aggressor[base * 3].astype(np.int64)
            else:
                d = ((ca >> k) & 1) ^ value
                v = tab.aggressor[base * 3 + 1 + d].astype(np.int64)
                a = d
        v = tab.settle[(m2 + a) * 2 + v].astype(np.int64)
        _track(t, v != gv, exc, mask)
    shape = (nc, nm, ns)
    return ClassRun(stream, det.reshape(shape), exc.reshape(shape), mask.reshape(shape))


def cell_relation(pos: IntArray, wa: IntArray | None, wv: IntArray) -> IntArray:
    """Relation index into CELL_RELATIONS for (aggressor word, victim word) pairs."""
    if wa is None:
        return np.zeros(len(wv), np.int64)
    return np.where(wa == wv, 1, np.where(pos[wa] < pos[wv], 2, 3)).astype(np.int64)


_DETECTION_NAMES: tuple[Detection, ...] = ("detected", "partial", "escaped")


def _cell_results(plan: Plan, faults: Sequence[CellFault | CouplingFault]) -> list[FaultResult]:
    rs = plan.rs
    n = len(faults)
    models = sorted({f.model for f in faults}, key=lambda m: m.name)
    m_index = {m: i for i, m in enumerate(models)}
    mi = np.array([m_index[f.model] for f in faults], np.int64)
    wv = np.array([f.cell.word if isinstance(f, CellFault) else f.victim.word for f in faults], np.int64)
    bv = np.array([f.cell.bit if isinstance(f, CellFault) else f.victim.bit for f in faults], np.int64)
    coupling = np.array([isinstance(f, CouplingFault) for f in faults], bool)
    wa = np.array([f.aggressor.word if isinstance(f, CouplingFault) else 0 for f in faults], np.int64)
    ba = np.array([f.aggressor.bit if isinstance(f, CouplingFault) else 0 for f in faults], np.int64)
    rel = np.where(coupling, cell_relation(rs.pos, wa, wv), 0)
    cv = rs.cell_code(wv, bv)
    ca = np.where(coupling, rs.cell_code(wa, ba), 0)
    out: list[FaultResult | None] = [None] * n
    for ri, relation in enumerate(CELL_RELATIONS):
        idx = np.flatnonzero(rel == ri)
        if idx.size == 0:
            continue
        keys, inv = np.unique(np.stack([ca[idx], cv[idx]], axis=1), axis=0, return_inverse=True)
        inv = inv.reshape(-1)
        used = sorted(set(mi[idx].tolist()))
        run = run_cell_classes(plan, relation, keys[:, 0], keys[:, 1], [models[u] for u in used])
        local = {u: i for i, u in enumerate(used)}
        verdicts = run.verdicts()
        esc = run.escape_state()
        for j, i in enumerate(idx.tolist()):
            c, m = int(inv[j]), local[int(mi[i])]
            f = faults[i]
            verdict = _DETECTION_NAMES[verdicts[c, m]]
            if verdict == "detected":
                out[i] = FaultResult(f, verdict)
                continue
            s = int(esc[c, m])
            words = {"V": int(wv[i]), "A": int(wa[i])}
            labels = f.power_up_labels()
            values = (s,) if len(labels) == 1 else (s >> 1, s & 1)
            witness = Witness(
                tuple(zip(labels, values, strict=True)),
                run.stream.ref(int(run.excited[c, m, s]), words),
                run.stream.ref(int(run.masked[c, m, s]), words),
            )
            out[i] = FaultResult(f, verdict, witness)
    return [r for r in out if r is not None]


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
