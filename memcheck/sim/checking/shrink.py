"""Shrinking a failing trace: delta debugging over cycles, then simpler operations, addresses and data.

Pure functions over lists of cycles. The caller supplies ``fails_many``: it runs a list of candidate
traces (each from the canonical state, see :mod:`memcheck.sim.checking.minimise`) and says which of
them still fail. Candidates of one round are handed over together, so the simulator runs many of
them in one round trip; ``group_items`` bounds the cycles of one hand-over, and a later group is
only run when no candidate of the earlier ones failed.

Removed cycles are removed, not replaced by quiet ones: a candidate is always a real, shorter trace
that the model checks from scratch, so what it shows is exactly what a replay of it shows.

References
----------
A. Zeller and R. Hildebrandt, "Simplifying and Isolating Failure-Inducing Input", IEEE Transactions
on Software Engineering 28(2), 2002, pp. 183-200: the *ddmin* algorithm (subsets, then complements,
at doubling granularity) and 1-minimality (no single element can be removed).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import replace
from typing import TypeVar

from memcheck.ops import Cycle, OpKind, PortOp

T = TypeVar("T")
#: Runs candidate traces and says which fail (same order); raises ShrinkBudgetSpent when out of budget.
FailsMany = Callable[[list[list[T]]], list[bool]]


class ShrinkBudgetSpent(Exception):
    """Raised by a ``fails_many`` whose budget (simulated cycles, seconds) is spent."""


def first_hits(cands: Sequence[list[T]], fails_many: FailsMany[T], group_items: int) -> list[int]:
    """Indices of the failing candidates of the first group (of at most ``group_items`` items, at
    least one candidate) that has any; [] when none fails."""
    i = 0
    while i < len(cands):
        j, size = i, 0
        while j < len(cands) and (j == i or size + len(cands[j]) <= group_items):
            size += len(cands[j])
            j += 1
        results = fails_many([list(c) for c in cands[i:j]])
        hits = [i + k for k, r in enumerate(results) if r]
        if hits:
            return hits
        i = j
    return []


def _split(items: list[T], n: int) -> list[list[T]]:
    chunk, extra = divmod(len(items), n)
    out, lo = [], 0
    for i in range(n):
        hi = lo + chunk + (1 if i < extra else 0)
        out.append(items[lo:hi])
        lo = hi
    return [c for c in out if c]


def ddmin_batched(items: Sequence[T], fails_many: FailsMany[T], *, group_items: int = 1 << 16) -> tuple[list[T], bool]:
    """A 1-minimal failing subsequence of ``items`` (which must fail), and whether 1-minimality was
    reached (False: the budget ran out first and the result is only smaller).

    Zeller and Hildebrandt's ddmin: at granularity n, try each of the n chunks alone, then each
    complement (the items without one chunk); a failing subset restarts at n = 2, a failing
    complement lowers n by one, else n doubles until it reaches the length. Batched: every candidate
    of a round goes to ``fails_many`` in groups; when several complements of a group fail, removing
    all their chunks at once is tried first (one more candidate), which often saves many rounds."""
    current = list(items)
    n = 2
    try:
        while len(current) >= 2:
            chunks = _split(current, n)
            n = len(chunks)
            if n > 2:
                hit = first_hits(chunks, fails_many, group_items)
                if hit:
                    current, n = chunks[hit[0]], 2
                    continue
            comps = [[x for j, ch in enumerate(chunks) if j != i for x in ch] for i in range(n)]
            hits = first_hits(comps, fails_many, group_items)
            if hits:
                current, n = _remove(chunks, comps, hits, fails_many), max(n - len(hits), 2)
                continue
            if n >= len(current):
                return current, True
            n = min(len(current), 2 * n)
    except ShrinkBudgetSpent:
        return current, False
    return current, True


def _remove(chunks: list[list[T]], comps: list[list[T]], hits: list[int], fails_many: FailsMany[T]) -> list[T]:
    """Without every chunk in ``hits`` when that still fails, else without the first one."""
    if len(hits) > 1:
        gone = set(hits)
        joint = [x for j, ch in enumerate(chunks) if j not in gone for x in ch]
        if joint and fails_many([joint])[0]:
            return joint
    return comps[hits[0]]


def ddmin(items: Sequence[T], fails: Callable[[list[T]], bool], *, budget: int = 2000) -> list[T]:
    """A 1-minimal failing subsequence of ``items`` (``fails(items)`` must hold), testing one
    candidate at a time: :func:`ddmin_batched` with a one-candidate group."""
    calls = [0]

    def many(cands: list[list[T]]) -> list[bool]:
        out = []
        for cand in cands:
            if calls[0] >= budget:
                raise ShrinkBudgetSpent
            calls[0] += 1
            out.append(fails(cand))
        return out

    return ddmin_batched(items, many, group_items=1)[0]


def greedy(
    cycles: Sequence[Cycle],
    candidates: Callable[[list[Cycle]], list[list[Cycle]]],
    fails_many: FailsMany[Cycle],
    *,
    group_items: int = 1 << 16,
) -> list[Cycle]:
    """Apply the first failing candidate of ``candidates(current)`` until none fails (or the budget
    is spent): one round trip per accepted change."""
    current = list(cycles)
    try:
        while True:
            cands = candidates(current)
            hits = first_hits(cands, fails_many, group_items)
            if not hits:
                return current
            current = cands[hits[0]]
    except ShrinkBudgetSpent:
        return current


def _replace_op(cycles: list[Cycle], k: int, p: int, op: PortOp) -> list[Cycle]:
    cand = list(cycles)
    cyc = list(cand[k])
    cyc[p] = op
    cand[k] = tuple(cyc)
    return cand


def quiet_candidates(quiet: Cycle) -> Callable[[list[Cycle]], list[list[Cycle]]]:
    """Candidates that take one operation out of a cycle where another port still acts (that port's
    quiet operation instead); a cycle with one operation is removed whole by delta debugging."""

    def cands(current: list[Cycle]) -> list[list[Cycle]]:
        out: list[list[Cycle]] = []
        for k, cyc in enumerate(current):
            acting = [p for p in range(len(quiet)) if cyc[p] != quiet[p]]
            if len(acting) >= 2:
                out.extend(_replace_op(current, k, p, quiet[p]) for p in acting)
        return out

    return cands


def _used(current: list[Cycle]) -> set[int]:
    return {op.address for c in current for op in c if op.kind != OpKind.IDLE}


def simpler_candidates(quiet: Cycle) -> Callable[[list[Cycle]], list[list[Cycle]]]:
    """Easier-to-read versions of a trace of the same length: an operation replaced by its port's quiet
    one (a cycle that only has to pass the time), an address renamed to a smaller unused one everywhere
    (disabled ports' pins included: they may matter to the bug), write data zero, all lanes enabled."""

    def cands(current: list[Cycle]) -> list[list[Cycle]]:
        out: list[list[Cycle]] = []
        for k, cyc in enumerate(current):
            out.extend(_replace_op(current, k, p, quiet[p]) for p in range(len(quiet)) if cyc[p] != quiet[p])
        used = _used(current)
        free = [a for a in range(len(used) + 1) if a not in used]
        for a in sorted(used, reverse=True):
            to = next((f for f in free if f < a), None)
            if to is not None:
                out.append([tuple(replace(op, address=to) if op.address == a else op for op in c) for c in current])
        for k, cyc in enumerate(current):
            for p, op in enumerate(cyc):
                if op.kind != OpKind.WRITE:
                    continue
                out.extend(
                    _replace_op(current, k, p, simpler)
                    for simpler in (replace(op, data=0), replace(op, lanes=None))
                    if simpler != op
                )
        return out

    return cands
