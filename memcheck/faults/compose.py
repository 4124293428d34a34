"""Detection of single- and two-cell faults background by background: the fast engine's rows for many
signature pairs at the cost of a few.

:func:`memcheck.faults.fast_cells.run_cell_classes` runs the whole interleaved stream (every
background) for every (signature pair x model x power-up state) row. With ``k`` backgrounds a
signature pair is ``k`` bit pairs, so there are up to ``4^k`` pairs (4,096 for the seven standard
backgrounds of 64-bit words), each run over the whole stream.

Inside background ``j`` only bit ``j`` of each signature matters, and what a background hands to the
next is the aggressor's and the victim's values alone: every background starts with a write of both
words before any read (:func:`memcheck.faults.geometry.check_consistent`), so the good value the
victim is compared with is set again, and back-to-back operation codes never span two backgrounds
(``Stream.chained``). So each background is run once for its 4 bit pairs x models x 4 incoming
(aggressor, victim) values — the first background from the power-up states, as the engine does —
giving a transfer table (next values, detected) per background; a row's detection is those tables
chained over its bits. The steps run are the engine's own (its tables and step functions).
tests/test_faults_drawn.py holds the result equal to ``run_cell_classes`` on every signature pair.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
import numpy.typing as npt

from memcheck.faults.fast_cells import NP, _aggressor_step, _Rows, _Tables, _tables, _victim_step
from memcheck.faults.fast_stream import NEVER, Plan, Stream
from memcheck.faults.primitives import FaultModel

IntArray = npt.NDArray[np.int64]
BoolArray = npt.NDArray[np.bool_]

__all__ = ["NP", "cell_detection"]


def _background_ranges(stream: Stream) -> list[tuple[int, int]]:
    """The (first, end) step of each background's part of the stream, in order (contiguous)."""
    bg = [s.background for s in stream.slots]
    starts = [t for t in range(len(bg)) if t == 0 or bg[t] != bg[t - 1]]
    return list(zip(starts, [*starts[1:], len(bg)], strict=True))


def _run_range(stream: Stream, lo: int, hi: int, tab: _Tables, st: _Rows, m2: IntArray, codes: IntArray) -> None:
    """Steps ``lo`` to ``hi`` of the stream on rows ``st`` (the loop of ``run_cell_classes``, without
    excitation tracking); ``codes`` holds each row's (aggressor, victim) bits of this background."""
    ca, cv = codes >> 1, codes & 1
    for t in range(lo, hi):
        side, kind, value = stream.sides[t], stream.kinds[t], stream.values[t]
        a_pre = st.a
        if side == "T":
            st.v = tab.pause[m2 + st.v].astype(np.int64)
        if "V" in side:
            dv = None if kind == "r" else cv ^ value
            _victim_step(tab, st, m2, a_pre, dv, (stream.chained[t], stream.written_before[t]))
        if "A" in side:
            da = None if kind == "r" else ca ^ value
            _aggressor_step(tab, st, m2, a_pre, da, stream.chained[t])
        st.v = tab.settle[(m2 + st.a) * 2 + st.v].astype(np.int64)


def _transfer(stream: Stream, lo: int, hi: int, tab: _Tables, nm: int, first: bool) -> tuple[IntArray, BoolArray]:
    """(next state, detected), each indexed ``[bits, model, state]``: bits = aggressor bit * 2 + victim
    bit of this background, state = aggressor value * 2 + victim value coming in (the first
    background: the power-up state, settled as the engine settles it)."""
    rows = 4 * nm * 4
    r = np.arange(rows, dtype=np.int64)
    bits, m2, s = r // (nm * 4), ((r // 4) % nm) * 2, r % 4
    a, v = s >> 1, s & 1
    v_in = tab.settle[(m2 + a) * 2 + v].astype(np.int64) if first else v
    zero = np.zeros(rows, np.int64)
    never = np.full(rows, NEVER, np.int64)
    st = _Rows(a, v_in, v.copy(), zero, zero, np.zeros(rows, bool), never, never.copy())
    _run_range(stream, lo, hi, tab, st, m2, bits)
    shape = (4, nm, 4)
    return (st.a * 2 + st.v).reshape(shape), st.det.reshape(shape)


def cell_detection(
    plan: Plan, relation: str, code_a: IntArray, code_v: IntArray, models: Sequence[FaultModel]
) -> BoolArray:
    """``detected[c, m, s]`` exactly as ``run_cell_classes(plan, relation, code_a, code_v, models)``
    gives it (power-up states: 2 for ``single``, else 4), computed background by background."""
    stream = plan.stream(relation)
    single = relation == "single"
    nc, nm, ns = len(code_v), len(models), (2 if single else 4)
    tab = _tables(models)
    rows = nc * nm * ns
    r = np.arange(rows, dtype=np.int64)
    row_c, m = r // (nm * ns), (r // ns) % nm
    state = r % ns  # aggressor value * 2 + victim value (single: the aggressor stays 0)
    ca = np.asarray(code_a, np.int64)[row_c]
    cv = np.asarray(code_v, np.int64)[row_c]
    det = np.zeros(rows, bool)
    for j, (lo, hi) in enumerate(_background_ranges(stream)):
        k = stream.slots[lo].background
        nxt, d = _transfer(stream, lo, hi, tab, nm, j == 0)
        bits = ((ca >> k) & 1) * 2 + ((cv >> k) & 1)
        det |= d[bits, m, state]
        state = nxt[bits, m, state]
    out: BoolArray = det.reshape(nc, nm, ns)
    return out
