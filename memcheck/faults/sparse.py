"""Sampled instances on a memory of any size: the fast engine on only the words they touch.

The fast engine (:mod:`memcheck.faults.fast`) needs, per word, its position in the ⇑ walk and its
word class (how each background flips it); :meth:`Arrangement.resolve` builds both for every word,
about 130 bytes a word (some 130 GiB for 2^30 words). A sample of K instances touches at most 2K
words, and a fault's verdict depends on those words only through:

* the relative ⇑ order of its words (the relation of a coupling or decoder fault),
* each word's class (its cells' signature codes),
* for a stuck-open cell, the words just before and after it in the walk and the first two and last
  two words of the walk (the data-out latch holds the previous read of another word).

:func:`compact` therefore builds a *compact memory*: the touched words (plus those walk neighbours),
renumbered 0..m-1 in ⇑ order, with their word classes computed from their real addresses. The same
walk on the compact memory is linear, and every fact listed above is the same as on the real memory,
so the verdicts are the same; results are mapped back to the real addresses (instances and witness
addresses). Memory is a few arrays of m entries. Tests check the results equal the full engine's on
small memories (tests/test_faults_sparse.py).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import replace

import numpy as np

from memcheck.faults.fast import simulate
from memcheck.faults.fast_stream import Plan
from memcheck.faults.geometry import Arrangement, Resolved, check_consistent, schedule, word_classes
from memcheck.faults.instances import (
    Cell,
    CellFault,
    CouplingFault,
    DecoderFault,
    FaultInstance,
    FaultResult,
    OpRef,
    StuckOpenFault,
    Witness,
)
from memcheck.march.backgrounds import resolve_backgrounds
from memcheck.march.notation import MarchTest
from memcheck.march.orders import AddressOrder, address_bits

IntArray = np.ndarray

#: Orders with a closed-form position of an address; the others materialise the walk anyway.
CLOSED_FORM_ORDERS = ("linear", "col-fast", "complement", "row-fast")


def closed_form(order: AddressOrder) -> bool:
    n = order.words
    return order.kind in CLOSED_FORM_ORDERS or (order.kind == "gray" and n & (n - 1) == 0)


def positions_of(order: AddressOrder, addresses: IntArray) -> IntArray:
    """Positions in the ⇑ walk of ``addresses`` (closed forms; other orders through the whole walk)."""
    a = np.asarray(addresses, dtype=np.int64)
    n, k = order.words, order.kind
    if k in ("linear", "col-fast"):
        return a.copy()
    if k == "complement":
        half = (n + 1) // 2
        return np.where(a < half, 2 * a, 2 * (n - 1 - a) + 1)
    if k == "row-fast":
        assert order.layout is not None
        rows, cols = order.layout
        return (a % cols) * rows + a // cols
    if k == "gray" and n & (n - 1) == 0:
        i = a.copy()
        shift = 1
        while shift < max(1, address_bits(n)):
            i ^= i >> shift
            shift <<= 1
        return i
    up = order.up()
    pos = np.empty(n, dtype=np.int64)
    pos[up] = np.arange(n, dtype=np.int64)
    return pos[a]


def addresses_at(order: AddressOrder, positions: IntArray) -> IntArray:
    """Addresses at ``positions`` of the ⇑ walk (the inverse of :func:`positions_of`)."""
    i = np.asarray(positions, dtype=np.int64)
    n, k = order.words, order.kind
    if k in ("linear", "col-fast"):
        return i.copy()
    if k == "complement":
        return np.where(i & 1, n - 1 - (i >> 1), i >> 1)
    if k == "row-fast":
        assert order.layout is not None
        rows, cols = order.layout
        return (i % rows) * cols + i // rows
    if k == "gray" and n & (n - 1) == 0:
        return i ^ (i >> 1)
    return order.up()[i]


def _touched(faults: Sequence[FaultInstance]) -> tuple[list[int], list[int]]:
    """(every word the faults involve, the stuck-open cells' words)."""
    words: list[int] = []
    sof: list[int] = []
    for f in faults:
        if isinstance(f, DecoderFault):
            words += list(f.words)
        else:
            words += [c.word for c in f.cells]
            if isinstance(f, StuckOpenFault):
                sof.append(f.cell.word)
    return words, sof


def distinct(values: IntArray) -> IntArray:
    """The distinct values, sorted (one sort: ``np.unique`` may hash, much slower on 10^5 values)."""
    s = np.sort(np.asarray(values, dtype=np.int64))
    out: IntArray = s[np.concatenate([[True], s[1:] != s[:-1]])] if len(s) else s
    return out


def compact_plan(
    test: MarchTest, setup: Arrangement, words: IntArray, sof_words: IntArray
) -> tuple[Plan, AddressOrder, IntArray, IntArray]:
    """The compact memory of the words ``words`` and the stuck-open cells' words ``sof_words`` (see
    module doc): its plan, the order of the real memory, the ⇑ position in the real memory of each
    compact word (sorted, so a real word's compact number is its ``searchsorted`` there) and the
    real address of each compact word."""
    order = AddressOrder(setup.order, setup.words, setup.layout, setup.seed)
    bgs = resolve_backgrounds(setup.background_spec, setup.width, setup.layout)
    check_consistent(test, len(bgs))
    n = setup.words
    pos = positions_of(order, distinct(words))
    extra = [0, 1, n - 2, n - 1]
    if len(sof_words):
        p_sof = positions_of(order, distinct(sof_words))
        extra_pos = distinct(np.concatenate([p_sof - 1, p_sof + 1, np.array(extra, dtype=np.int64)]))
    else:
        extra_pos = np.array(extra, dtype=np.int64)
    extra_pos = extra_pos[(extra_pos >= 0) & (extra_pos < n)]
    all_pos = distinct(np.concatenate([pos, extra_pos]))
    real = addresses_at(order, all_pos)
    m = len(real)
    wclass, wpar = word_classes(bgs, real, setup.layout)
    base = np.array([[(bg.base >> b) & 1 for b in range(setup.width)] for bg in bgs], dtype=np.uint8)
    small = Arrangement(m, setup.width, backgrounds=setup.background_spec, any_order=setup.any_order)
    ids = np.arange(m, dtype=np.int64)
    rs = Resolved(small, bgs, ids, ids.copy(), base, wclass, wpar)
    return Plan(test, small, rs, schedule(test, len(bgs), setup.any_order)), order, all_pos, real


def compact(
    test: MarchTest, setup: Arrangement, faults: Sequence[FaultInstance]
) -> tuple[Plan, list[FaultInstance], IntArray]:
    """The compact memory of ``faults`` (see module doc): its plan, the faults on it, and the real
    address of each compact word."""
    words, sof = _touched(faults)
    plan, _, _, real = compact_plan(test, setup, np.array(words, dtype=np.int64), np.array(sof, dtype=np.int64))
    local = {int(a): i for i, a in enumerate(real.tolist())}
    return plan, [renumber(f, local) for f in faults], real


def renumber(f: FaultInstance, m: dict[int, int]) -> FaultInstance:
    """``f`` with its words renumbered by ``m``."""
    if isinstance(f, DecoderFault):
        return replace(f, address=m[f.address], other=None if f.other is None else m[f.other])
    if isinstance(f, CellFault):
        return CellFault(f.model, Cell(m[f.cell.word], f.cell.bit))
    if isinstance(f, StuckOpenFault):
        return StuckOpenFault(Cell(m[f.cell.word], f.cell.bit))
    return CouplingFault(f.model, Cell(m[f.aggressor.word], f.aggressor.bit), Cell(m[f.victim.word], f.victim.bit))


def _ref(r: OpRef | None, real: IntArray) -> OpRef | None:
    if r is None or r.word < 0:
        return r
    return OpRef(r.background, r.element, r.op, int(real[r.word]))


def simulate_sparse(
    test: MarchTest, faults: Sequence[FaultInstance], setup: Arrangement, chunk: int = 1 << 18
) -> list[FaultResult]:
    """The fast engine's verdicts for ``faults`` on ``setup`` from their compact memory, ``chunk``
    instances at a time (memory bounded by the chunk, not the memory size)."""
    out: list[FaultResult] = []
    for lo in range(0, len(faults), chunk):
        part = list(faults[lo : lo + chunk])
        if not part:
            continue
        plan, local, real = compact(test, setup, part)
        for orig, r in zip(part, simulate(test, local, plan.setup, plan), strict=True):
            w = r.witness
            labels = tuple(zip(orig.power_up_labels(), (v for _, v in w.power_up), strict=True)) if w else ()
            wit = None if w is None else Witness(labels, _ref(w.excited, real), _ref(w.masked, real))
            out.append(FaultResult(orig, r.verdict, wit))
    return out
