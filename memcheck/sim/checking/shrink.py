"""Shrink a failing trace found by the smoke or sweep phase (Hypothesis shrinks its own).

Delta debugging (A. Zeller and R. Hildebrandt, "Simplifying and Isolating Failure-Inducing Input",
IEEE TSE 28(2), 2002) over cycles, then passes that replace operations with quiet ones and make
addresses and data simpler. ``fails`` runs a candidate in the simulator, so every step is a real RTL run.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import replace
from typing import TypeVar

from memcheck.ops import Cycle, OpKind, PortOp

T = TypeVar("T")


def ddmin(items: Sequence[T], fails: Callable[[list[T]], bool], *, budget: int = 2000) -> list[T]:
    """A 1-minimal failing subsequence of ``items`` (``fails(items)`` must hold)."""
    current = list(items)
    n = 2
    calls = 0
    while len(current) >= 2 and calls < budget:
        chunk = max(1, len(current) // n)
        subsets = [current[i : i + chunk] for i in range(0, len(current), chunk)]
        reduced = False
        for i in range(len(subsets)):
            complement = [c for j, s in enumerate(subsets) if j != i for c in s]
            calls += 1
            if complement and fails(complement):
                current = complement
                n = max(n - 1, 2)
                reduced = True
                break
        if not reduced:
            if n >= len(current):
                break
            n = min(len(current), n * 2)
    return current


def quieten(cycles: Sequence[Cycle], quiet: Cycle, fails: Callable[[list[Cycle]], bool]) -> list[Cycle]:
    """Replace single operations with the quiet one where the failure survives."""
    current = list(cycles)
    for k in range(len(current)):
        for p in range(len(quiet)):
            if current[k][p] == quiet[p]:
                continue
            cand = _replace_op(current, k, p, quiet[p])
            if fails(cand):
                current = cand
    return current


def trim_quiet_edges(cycles: Sequence[Cycle], quiet: Cycle, fails: Callable[[list[Cycle]], bool]) -> list[Cycle]:
    """Drop quiet cycles at the start, and at the end, where the failure survives."""
    current = list(cycles)
    while len(current) > 1 and current[0] == quiet and fails(current[1:]):
        current = current[1:]
    while len(current) > 1 and current[-1] == quiet and fails(current[:-1]):
        current = current[:-1]
    return current


def _replace_op(cycles: list[Cycle], k: int, p: int, op: PortOp) -> list[Cycle]:
    cand = list(cycles)
    cyc = list(cand[k])
    cyc[p] = op
    cand[k] = tuple(cyc)
    return cand


def simplify_values(cycles: Sequence[Cycle], fails: Callable[[list[Cycle]], bool]) -> list[Cycle]:
    """Make the trace easier to read where the failure survives: addresses renamed to 0, write data
    zero, all lanes enabled."""
    current = list(cycles)
    used = {op.address for c in current for op in c if op.kind != OpKind.IDLE}
    for a in sorted(used - {0}):
        if any(op.address == 0 and op.kind != OpKind.IDLE for c in current for op in c):
            break
        # Rename the address everywhere, disabled ports' pins included (they may matter to the bug).
        cand = [tuple(replace(op, address=0) if op.address == a else op for op in c) for c in current]
        if fails(cand):
            current = cand
    for k in range(len(current)):
        for p, op in enumerate(current[k]):
            if op.kind != OpKind.WRITE:
                continue
            for simpler in (replace(op, data=0), replace(op, lanes=None)):
                if simpler != current[k][p]:
                    cand = _replace_op(current, k, p, simpler)
                    if fails(cand):
                        current = cand
    return current
