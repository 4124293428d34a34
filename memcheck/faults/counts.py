"""Exact multiplicity arithmetic for fault universes: distinct keys with counts, merged and scaled
without int64 overflow (a 2**30-word x 64-bit memory has about 2**72 ordered cell pairs; sums that
could pass 2**62 switch to Python integers, exact at any size)."""

from __future__ import annotations

import numpy as np
import numpy.typing as npt

IntArray = npt.NDArray[np.int64]


def count_keys(keys: IntArray) -> tuple[IntArray, IntArray]:
    """Distinct keys and how often each occurs."""
    if keys.size and int(keys.max()) < (1 << 22) and int(keys.min()) >= 0:
        c = np.bincount(keys)
        nz = np.flatnonzero(c)
        return nz.astype(np.int64), c[nz].astype(np.int64)
    u, c = np.unique(keys, return_counts=True)
    return u.astype(np.int64), c.astype(np.int64)


#: Largest count kept in int64 arithmetic (headroom for one more addition).
_SAFE = 1 << 62


def merge_counts(keys: list[IntArray], counts: list[IntArray]) -> tuple[IntArray, IntArray]:
    """Distinct keys and the exact sum of their counts (int64, or Python integers when a sum could
    overflow int64: a 2**30-word memory has about 2**72 cell pairs)."""
    if not keys:
        z = np.zeros(0, np.int64)
        return z, z
    k = np.concatenate(keys)
    c = np.concatenate(counts)
    u, inv = np.unique(k, return_inverse=True)
    inv = inv.reshape(-1)
    if c.dtype != object and (c.size == 0 or int(c.max()) <= _SAFE // max(1, c.size)):
        out = np.zeros(u.size, np.int64)
    else:  # sums that could pass 2**63: Python integers, exact at any size
        out = np.zeros(u.size, dtype=object)
        c = c.astype(object)
    np.add.at(out, inv, c)
    return u, out


def scaled(counts: IntArray, factor: int) -> IntArray:
    """``counts * factor`` exactly: int64 while it cannot overflow, Python integers beyond."""
    if counts.size == 0 or int(counts.max()) <= _SAFE // max(1, int(factor)):
        return counts * int(factor)
    out: IntArray = counts.astype(object) * int(factor)
    return out
