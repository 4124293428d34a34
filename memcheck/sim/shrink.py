"""Shrink a failing trace found by the smoke or sweep phase (Hypothesis shrinks its own).

Delta debugging (A. Zeller and R. Hildebrandt, "Simplifying and Isolating Failure-Inducing Input",
IEEE TSE 28(2), 2002) over cycles, then a pass that replaces each remaining operation with a quiet
one. ``fails`` runs a candidate in the simulator, so every step is a real RTL run.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence

from memcheck.ops import Cycle


def ddmin(items: Sequence[Cycle], fails: Callable[[list[Cycle]], bool], *, budget: int = 2000) -> list[Cycle]:
    """A 1-minimal failing subsequence of ``items`` (``fails(items)`` must hold)."""
    current = list(items)
    n = 2
    calls = 0
    while len(current) >= 2 and calls < budget:
        chunk = max(1, len(current) // n)
        subsets = [current[i:i + chunk] for i in range(0, len(current), chunk)]
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
            cand = list(current)
            cyc = list(cand[k])
            cyc[p] = quiet[p]
            cand[k] = tuple(cyc)
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
