"""Words as 64-bit limbs: the one set of conversions between Python ints and numpy arrays.

A word of ``width`` bits is held as ``uint64[L]``, ``L = ceil(width / 64)`` (at least one), limb 0
holding bits 0..63 (little-endian); ``n`` words are ``uint64[n, L]``. Python ints have no width limit
but cost an object per word; limbs let numpy handle words of any width (the contract allows up to
1024 bits) in whole columns at once. Used by the model, the March streams and the simulator side.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
import numpy.typing as npt

WordArray = npt.NDArray[np.uint64]

_U64 = np.uint64
_ALL = (1 << 64) - 1


def limbs_of(width: int) -> int:
    """64-bit limbs needed for ``width`` bits (at least one)."""
    return max(1, (width + 63) // 64)


def int_limbs(value: int, limbs: int) -> WordArray:
    """One non-negative Python int as a ``(limbs,)`` uint64 array (bits above ``64 * limbs`` dropped)."""
    return np.array([(value >> (64 * i)) & _ALL for i in range(limbs)], dtype=_U64)


def int_to_limbs(value: int, width: int) -> WordArray:
    """``value`` masked to ``width`` bits, as the ``(limbs_of(width),)`` limbs of one word."""
    return int_limbs(value & ((1 << width) - 1), limbs_of(width))


def limbs_to_int(row: npt.NDArray[np.uint64]) -> int:
    """One word's limbs (``(L,)``) as a Python int: the inverse of :func:`int_to_limbs`."""
    return int.from_bytes(np.ascontiguousarray(row, dtype="<u8").tobytes(), "little")


def ints_to_limbs(values: Sequence[int], limbs: int) -> WordArray:
    """Python ints (non-negative, below ``2**(64 * limbs)``) as an ``(n, limbs)`` uint64 array."""
    n = len(values)
    if limbs == 1:
        return np.fromiter(values, dtype=_U64, count=n).reshape(n, 1)
    raw = b"".join(v.to_bytes(8 * limbs, "little") for v in values)
    return np.frombuffer(raw, dtype="<u8").astype(_U64).reshape(n, limbs)


def limbs_to_ints(arr: npt.NDArray[np.uint64]) -> list[int]:
    """Rows of an ``(n, limbs)`` uint64 array as Python ints: the inverse of :func:`ints_to_limbs`."""
    if arr.shape[-1] == 1:
        return [int(v) for v in arr[:, 0]]
    raw = np.ascontiguousarray(arr, dtype="<u8")
    return [int.from_bytes(row.tobytes(), "little") for row in raw]


def bits_to_limbs(bits: npt.NDArray[np.bool_] | npt.NDArray[np.uint8], limbs: int) -> WordArray:
    """``(n, w)`` bits (least significant first, ``w <= 64 * limbs``) packed as ``(n, limbs)`` uint64."""
    n, w = bits.shape
    padded = np.zeros((n, limbs * 64), dtype=np.uint8)
    padded[:, :w] = bits
    packed = np.packbits(padded, axis=1, bitorder="little")
    return np.ascontiguousarray(packed).view("<u8").reshape(n, limbs).astype(_U64)


def limbs_to_bits(value: npt.NDArray[np.uint64], width: int) -> npt.NDArray[np.uint8]:
    """``(n, limbs)`` uint64 as ``(n, width)`` uint8 bits, least significant first (missing limbs: 0)."""
    n = value.shape[0]
    out = np.zeros((n, width), dtype=np.uint8)
    for limb in range(min(value.shape[1], limbs_of(width))):
        lo = 64 * limb
        hi = min(width, lo + 64)
        shifts = np.arange(hi - lo, dtype=np.uint64)
        out[:, lo:hi] = (value[:, limb, None] >> shifts) & _U64(1)
    return out
