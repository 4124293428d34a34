"""Verdicts of a whole sample at once: the fast engine on the compact memory, without an object per
instance.

A sample (:class:`~memcheck.faults.drawn.Drawn`) is simulated a chunk at a time on the compact
memory of the words it touches (:func:`memcheck.faults.sparse.compact_plan`); real words become
compact numbers by one ``searchsorted``. Per fault kind, the rows the fast engine needs (relation x
signature pair x model) are found with ``np.unique`` and run once by
:func:`~memcheck.faults.fast_cells.run_cell_classes` / :func:`~memcheck.faults.fast.run_af_classes`
/ :func:`~memcheck.faults.fast.sof_detection`; each instance's verdict is then an array lookup. The
verdicts are the ones :func:`memcheck.faults.sparse.simulate_sparse` gives instance by instance
(tests/test_faults_drawn.py). Witnesses are left to the caller, for the few instances it reports.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import numpy.typing as npt

from memcheck.faults.compose import cell_detection
from memcheck.faults.drawn import Drawn, decode
from memcheck.faults.fast import (
    AF_RELATIONS,
    AF_VARIANTS,
    CELL_RELATIONS,
    af_relation,
    cell_relation,
    run_af_classes,
    sof_detection,
)
from memcheck.faults.fast_stream import Plan
from memcheck.faults.geometry import Arrangement
from memcheck.faults.instances import FaultResult
from memcheck.faults.primitives import models_of
from memcheck.faults.sampling import class_size, instance_at, sample_numbers
from memcheck.faults.sparse import compact_plan, positions_of, simulate_sparse
from memcheck.faults.universe import CLASSES, SCOPES
from memcheck.march.notation import MarchTest

IntArray = npt.NDArray[np.int64]
CodeArray = npt.NDArray[np.int8]

#: The scope label of groups without one (single cells, SOF, decoder faults).
NO_SCOPE = "-"

#: Power-up states a decoder fault without a second word uses (that word's cell stays 0).
_ONE_WORD_STATES = np.array([0, 1, 4, 5])


def af_label(kind: str, wired: str | None) -> str:
    """A decoder-fault variant's name in tables."""
    return kind + (f" ({wired})" if wired else "")


@dataclass(frozen=True)
class _Local:
    """A chunk on its compact memory: its plan and the compact numbers of its words."""

    plan: Plan
    word: IntArray
    other_word: IntArray


def _localise(test: MarchTest, setup: Arrangement, d: Drawn) -> _Local:
    has_other = d.other_word >= 0
    words = np.concatenate([d.word, d.other_word[has_other]])
    plan, order, all_pos, _ = compact_plan(test, setup, words, d.word if d.cls == "SOF" else d.word[:0])

    def local(w: IntArray) -> IntArray:
        out: IntArray = np.searchsorted(all_pos, positions_of(order, w)).astype(np.int64)
        return out

    other = np.full(len(d), -1, np.int64)
    other[has_other] = local(d.other_word[has_other])
    return _Local(plan, local(d.word), other)


def _codes(det: npt.NDArray[np.bool_]) -> CodeArray:
    """Verdict codes from detection over the last axis (power-up states): 0 detected in every state,
    1 in some, 2 in none."""
    out: CodeArray = np.where(det.all(axis=-1), 0, np.where(det.any(axis=-1), 1, 2)).astype(np.int8)
    return out


def _pairs(first: IntArray, second: IntArray, nbg: int) -> tuple[tuple[IntArray, IntArray], IntArray]:
    """The distinct (first, second) signature-code pairs (codes have ``nbg`` bits) and each pair's
    index among them: one sort of packed integers (of rows, past 31 backgrounds)."""
    if 2 * nbg > 62:
        rows, inv = np.unique(np.stack([first, second], axis=1), axis=0, return_inverse=True)
        return (rows[:, 0], rows[:, 1]), inv.reshape(-1)
    keys, inv = np.unique((first << nbg) | second, return_inverse=True)
    return (keys >> nbg, keys & ((1 << nbg) - 1)), inv.reshape(-1)


def _cell_codes(loc: _Local, d: Drawn) -> CodeArray:
    """Verdict codes (0 detected, 1 partial, 2 escaped) of single- and two-cell fault-primitive faults."""
    rs, models = loc.plan.rs, models_of(d.cls)
    two = models[0].two_cell
    wv, wa = loc.word, loc.other_word
    rel = cell_relation(rs.pos, wa, wv) if two else np.zeros(len(d), np.int64)
    cv = rs.cell_code(wv, d.bit)
    ca = rs.cell_code(wa, d.other_bit) if two else np.zeros(len(d), np.int64)
    out = np.zeros(len(d), np.int8)
    for ri, relation in enumerate(CELL_RELATIONS):
        idx = np.flatnonzero(rel == ri)
        if idx.size == 0:
            continue
        keys, inv = _pairs(ca[idx], cv[idx], rs.nbg)
        used, mi = np.unique(d.model[idx], return_inverse=True)
        det = cell_detection(loc.plan, relation, keys[0], keys[1], [models[u] for u in used.tolist()])
        out[idx] = _codes(det)[inv, mi.reshape(-1)]
    return out


def _af_codes(loc: _Local, d: Drawn) -> CodeArray:
    """Verdict codes of decoder faults. A fault's bits see the signature pairs of its two words'
    classes, so the verdict (bits combined as :func:`memcheck.faults.fast.combine_bits` does: detected
    when one bit is detected in every power-up state) is one per (word-class pair, variant)."""
    rs = loc.plan.rs
    x = loc.word
    has_y = loc.other_word >= 0
    y = np.where(has_y, loc.other_word, x)
    rel = np.where(has_y, af_relation(rs.pos, x, y), 0)
    codes = rs.class_codes()  # (word classes, width)
    nwc, width = codes.shape
    out = np.zeros(len(d), np.int8)
    for ri, relation in enumerate(AF_RELATIONS):
        idx = np.flatnonzero(rel == ri)
        if idx.size == 0:
            continue
        cp, inv = np.unique(rs.wclass[x[idx]] * nwc + rs.wclass[y[idx]], return_inverse=True)
        keys, kinv = _pairs(codes[cp // nwc].reshape(-1), codes[cp % nwc].reshape(-1), rs.nbg)
        used, mi = np.unique(d.model[idx], return_inverse=True)
        run = run_af_classes(loc.plan, relation, keys[0], keys[1], [AF_VARIANTS[u] for u in used.tolist()])
        det = run.detected[kinv.reshape(len(cp), width)]  # (class pairs, width, variants, 8 states)
        bits = _codes(det[..., _ONE_WORD_STATES] if ri == 0 else det)
        word = np.where((bits == 0).any(axis=1), 0, np.where((bits == 1).any(axis=1), 1, 2))
        out[idx] = word[inv.reshape(-1), mi.reshape(-1)]
    return out


def _sof_codes(loc: _Local, d: Drawn) -> CodeArray:
    return _codes(np.stack(sof_detection(loc.plan, loc.word, d.bit), axis=-1))


def verdict_codes(test: MarchTest, setup: Arrangement, drawn: Drawn, chunk: int = 1 << 18) -> CodeArray:
    """Per instance of ``drawn``: 0 detected, 1 partial, 2 escaped (the fast engine's verdicts), ``chunk``
    instances at a time on their compact memory (memory bounded by the chunk, not the memory)."""
    out = np.zeros(len(drawn), np.int8)
    kind = {"SOF": _sof_codes, "AF": _af_codes}.get(drawn.cls, _cell_codes)
    for lo in range(0, len(drawn), chunk):
        part = drawn.part(lo, lo + chunk)
        out[lo : lo + len(part)] = kind(_localise(test, setup, part), part)
    return out


def group_labels(drawn: Drawn) -> tuple[list[tuple[str, str, str]], IntArray]:
    """The report groups (class, model name, scope) of a sample and each instance's group index."""
    cls = drawn.cls
    if cls == "SOF":
        return [("SOF", "SOF", NO_SCOPE)], np.zeros(len(drawn), np.int64)
    if cls == "AF":
        return [("AF", af_label(k, w), NO_SCOPE) for k, w in AF_VARIANTS], drawn.model.copy()
    models = models_of(cls)
    if not models[0].two_cell:
        return [(cls, m.name, NO_SCOPE) for m in models], drawn.model.copy()
    a, v = drawn.other_word, drawn.word
    scope = np.where(a == v, 0, np.where(a < v, 1, 2))  # CouplingFault.scope, in SCOPES order
    labels = [(cls, m.name, s) for m in models for s in SCOPES]
    return labels, drawn.model * len(SCOPES) + scope


@dataclass(frozen=True)
class GroupTally:
    """One group's counts by verdict and the sample index of its example (first escaped instance,
    else first partial one; -1 when every instance is detected)."""

    group: tuple[str, str, str]
    counts: tuple[int, int, int]
    example: int


def tally_groups(drawn: Drawn, codes: CodeArray) -> list[GroupTally]:
    """Counts per group and verdict, and the example each group reports, in group order."""
    labels, gi = group_labels(drawn)
    counts = np.bincount(gi * 3 + codes, minlength=3 * len(labels)).reshape(-1, 3)
    out = []
    for g in np.flatnonzero(counts.sum(axis=1)).tolist():
        example = -1
        for v in (2, 1):
            hit = np.flatnonzero((gi == g) & (codes == v))
            if hit.size:
                example = int(hit[0])
                break
        c = counts[g]
        out.append(GroupTally(labels[g], (int(c[0]), int(c[1]), int(c[2])), example))
    return out


def sample_groups(
    test: MarchTest, setup: Arrangement, cls: str, size: int, seed: int, kind: str = "all"
) -> list[tuple[GroupTally, FaultResult | None]]:
    """The sample ``sampling.sample_class`` draws (same numbers, same instances), tallied by group, with
    each group's example simulated for its witness (None when the whole group is detected)."""
    numbers = sample_numbers(class_size(cls, setup, kind), size, seed, CLASSES.index(cls))
    drawn = decode(cls, setup, numbers, kind)
    groups = tally_groups(drawn, verdict_codes(test, setup, drawn))
    picked = [g for g in groups if g.example >= 0]
    examples = simulate_sparse(test, [instance_at(cls, setup, numbers[g.example], kind) for g in picked], setup)
    found = {g.group: r for g, r in zip(picked, examples, strict=True)}
    return [(g, found.get(g.group)) for g in groups]
