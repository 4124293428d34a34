"""The fast engine for fault-primitive faults (single-cell and two-cell, static and dynamic): every
(signature pair x fault model x power-up state) row of one cell relation at once, with numpy lookup
tables built from :mod:`memcheck.faults.primitives` (the rules the reference engine uses).

A dynamic fault also depends on the previous operation on its cell when it came back to back; the
stream marks those steps (``Stream.chained``) and each row carries the victim's and the aggressor's
previous-operation code (:func:`memcheck.faults.primitives.prev_code`).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import numpy.typing as npt

from memcheck.faults.fast_stream import _DETECTION_NAMES, CELL_RELATIONS, NEVER, ClassRun, Plan, _track
from memcheck.faults.instances import CellFault, CouplingFault, FaultResult, Witness
from memcheck.faults.primitives import FaultModel, aggressor_op, pause, settle, victim_op

IntArray = npt.NDArray[np.int64]
ByteArray = npt.NDArray[np.uint8]

# ---------------------------------------------------------------------------------------------------
# Single- and two-cell FP faults
# ---------------------------------------------------------------------------------------------------


NP = 7  # previous-operation codes: NO_PREV and prev_code 1..6


@dataclass(frozen=True)
class _Tables:
    """Fault semantics as flat lookup tables. ``settle`` is indexed ``base = (m*2 + a)*2 + v``,
    ``pause`` ``m*2 + v``, ``read_out`` ``base*NP + prev`` and ``victim``/``aggressor``
    ``(base*NP + prev)*3 + op`` (op 0 = read, 1 = w0, 2 = w1; ``prev`` the operated cell's previous
    operation code when back to back, else 0)."""

    victim: ByteArray
    read_out: ByteArray
    aggressor: ByteArray
    settle: ByteArray
    pause: ByteArray


def _tables(models: Sequence[FaultModel]) -> _Tables:
    nm = len(models)
    tv = np.zeros(nm * 4 * NP * 3, np.uint8)
    tr = np.zeros(nm * 4 * NP, np.uint8)
    ta = np.zeros(nm * 4 * NP * 3, np.uint8)
    ts = np.zeros(nm * 4, np.uint8)
    tp = np.zeros(nm * 2, np.uint8)
    for m, model in enumerate(models):
        for v in (0, 1):
            tp[m * 2 + v] = pause(model, v)
            for a in (0, 1):
                base = (m * 2 + a) * 2 + v
                ts[base] = settle(model, a, v)
                for p in range(NP):
                    i = base * NP + p
                    tv[i * 3], tr[i] = victim_op(model, a, v, "r", v, p)
                    ta[i * 3] = aggressor_op(model, a, v, "r", a, p)
                    for d in (0, 1):
                        tv[i * 3 + 1 + d] = victim_op(model, a, v, "w", d, p)[0]
                        ta[i * 3 + 1 + d] = aggressor_op(model, a, v, "w", d, p)
    return _Tables(tv, tr, ta, ts, tp)


@dataclass
class _Rows:
    """The state of every row while the stream runs: aggressor and victim values, the victim's good
    value, the previous-operation codes of both cells, detection and excitation/masking steps."""

    a: IntArray
    v: IntArray
    gv: IntArray
    pv: IntArray
    pa: IntArray
    det: npt.NDArray[np.bool_]
    exc: IntArray
    mask: IntArray


def _victim_step(
    tab: _Tables, st: _Rows, m2: IntArray, a_pre: IntArray, d: IntArray | None, plan_t: tuple[bool, bool]
) -> None:
    """The victim cell's own operation (``d`` the written bit, None for a read)."""
    chained, compared = plan_t
    prev = st.pv if chained else 0
    i = ((m2 + a_pre) * 2 + st.v) * NP + prev
    if d is None:
        if compared:
            st.det |= tab.read_out[i] != st.gv
        st.pv = 1 + st.v * 3
        st.v = tab.victim[i * 3].astype(np.int64)
        return
    st.pv = 1 + st.v * 3 + 1 + d
    st.v = tab.victim[i * 3 + 1 + d].astype(np.int64)
    st.gv = d


def _aggressor_step(tab: _Tables, st: _Rows, m2: IntArray, a_pre: IntArray, d: IntArray | None, chained: bool) -> None:
    """The aggressor's operation and its disturbance of the victim (``d`` the written bit, None for a read)."""
    prev = st.pa if chained else 0
    i = ((m2 + a_pre) * 2 + st.v) * NP + prev
    op = 0 if d is None else 1 + d
    st.v = tab.aggressor[i * 3 + op].astype(np.int64)
    st.pa = 1 + a_pre * 3 + op
    if d is not None:
        st.a = d


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
    m2 = ((r // ns) % nm) * 2
    s = r % ns
    a = np.zeros(rows, np.int64) if single else (s >> 1)
    v = s & 1
    cv = np.asarray(code_v, np.int64)[row_c]
    ca = np.asarray(code_a, np.int64)[row_c]
    zero = np.zeros(rows, np.int64)
    st = _Rows(
        a,
        tab.settle[(m2 + a) * 2 + v].astype(np.int64),
        v.copy(),
        zero,
        zero,
        np.zeros(rows, bool),
        np.full(rows, NEVER, np.int64),
        np.full(rows, NEVER, np.int64),
    )
    _track(-1, st.v != st.gv, st.exc, st.mask)
    for t in range(len(stream)):
        side, kind, value, k = stream.sides[t], stream.kinds[t], stream.values[t], stream.slots[t].background
        a_pre = st.a
        if side == "T":
            st.v = tab.pause[m2 + st.v].astype(np.int64)
        if "V" in side:
            dv = None if kind == "r" else ((cv >> k) & 1) ^ value
            _victim_step(tab, st, m2, a_pre, dv, (stream.chained[t], stream.written_before[t]))
        if "A" in side:
            da = None if kind == "r" else ((ca >> k) & 1) ^ value
            _aggressor_step(tab, st, m2, a_pre, da, stream.chained[t])
        st.v = tab.settle[(m2 + st.a) * 2 + st.v].astype(np.int64)
        _track(t, st.v != st.gv, st.exc, st.mask)
    shape = (nc, nm, ns)
    return ClassRun(stream, st.det.reshape(shape), st.exc.reshape(shape), st.mask.reshape(shape))


def cell_relation(pos: IntArray, wa: IntArray | None, wv: IntArray) -> IntArray:
    """Relation index into CELL_RELATIONS for (aggressor word, victim word) pairs."""
    if wa is None:
        return np.zeros(len(wv), np.int64)
    return np.where(wa == wv, 1, np.where(pos[wa] < pos[wv], 2, 3)).astype(np.int64)


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
