"""Data backgrounds for word-oriented memories.

In March notation ``0`` and ``1`` mean "the data background" and "its complement". For a memory
with ``width``-bit words a background is a word value that may depend on where the word sits in the
physical array. Every background here has the form::

    value(address) = base            if parity(address) == 0
                     base ^ all_ones if parity(address) == 1

where ``parity`` is 0 (``flip="none"``), the row's parity (``"row"``), the mux column's parity
(``"col"``) or the parity of row + column (``"cell"``). Rows and columns come from the layout
(``address = row * cols + col``, see :mod:`memcheck.march.orders`); without a layout each word is its
own row. Bit ``b`` of a word at mux column ``c`` is assumed to sit at physical column
``b * cols + c`` (bit-interleaved column multiplexing, common practice), which is what makes a
*physical* checkerboard or column stripe.

Backgrounds by name
-------------------
``solid``         all zeros (its complement, all ones, is what ``w1`` writes).
``checkerboard``  physical checkerboard: cell value = (row + physical column) mod 2.
``row-stripe``    cell value = row mod 2 (alternate rows of ones and zeros).
``col-stripe``    cell value = physical column mod 2.
``standard``      the ``ceil(log2 width) + 1`` backgrounds that expose intra-word coupling faults:
                  solid plus, for ``k = 1..ceil(log2 width)``, the word whose bit ``b`` is
                  ``1 - (b >> (k-1)) & 1`` — for 8 bits 00000000, 01010101, 00110011, 00001111
                  (MSB first). Source: A.J. van de Goor and I.B.S. Tlili, "A Systematic Method for
                  Modifying March Tests for Bit-Oriented Memories into Tests for Word-Oriented
                  Memories", IEEE Trans. Computers 52(10), 2003 (patterns as we recall them from
                  that line of work). All ones is not listed: it is the complement of solid and is
                  already written by every ``w1``.
``std1`` ...      one member of the standard set (``std0`` is solid).
``0x...``         a fixed word given in hex.

Words are arrays of little-endian 64-bit limbs: a value is ``uint64[L]`` with
``L = ceil(width / 64)``, limb 0 holding bits 0..63; an array of ``n`` words is ``uint64[n, L]``.
Bits at and above ``width`` are always zero.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass
from typing import Literal

import numpy as np
import numpy.typing as npt

from memcheck._limbs import int_to_limbs as int_to_limbs
from memcheck._limbs import limbs_to_int as limbs_to_int
from memcheck.errors import UsageError
from memcheck.march.orders import address_to_row_col

Flip = Literal["none", "row", "col", "cell"]
BACKGROUND_NAMES: tuple[str, ...] = ("solid", "checkerboard", "row-stripe", "col-stripe", "standard")
MAX_WIDTH = 1024

WordArray = npt.NDArray[np.uint64]  # limbs, see memcheck._limbs
IntArray = npt.NDArray[np.int64]


def all_ones(width: int) -> WordArray:
    return int_to_limbs((1 << width) - 1, width)


@dataclass(frozen=True)
class DataBackground:
    """One resolved background for a given width and layout: ``base`` flipped where ``flip``'s
    parity is odd."""

    name: str
    base: int
    flip: Flip = "none"

    def value_at(self, address: int, width: int, layout: tuple[int, int] | None = None) -> int:
        """The background word at one address (convenience; the vectorised form is :func:`background_words`)."""
        arr = background_words(self, np.array([address], dtype=np.int64), width, layout)
        return limbs_to_int(arr[0])


def _check_width(width: int) -> None:
    if isinstance(width, bool) or not isinstance(width, int | np.integer) or not 1 <= width <= MAX_WIDTH:
        raise UsageError(f"width must be an integer from 1 to {MAX_WIDTH} bits, not {width!r}")


def _bit_pattern(width: int, bit: Callable[[int], object]) -> int:
    """Word whose bit ``b`` is set where ``bit(b)`` is true."""
    return sum(1 << b for b in range(width) if bit(b))


def standard_set(width: int) -> tuple[DataBackground, ...]:
    """The ``ceil(log2 width) + 1`` intra-word backgrounds (see module docstring)."""
    _check_width(width)
    k_max = (width - 1).bit_length()
    out = [DataBackground("std0", 0)]
    for k in range(1, k_max + 1):
        value = sum(1 << b for b in range(width) if not (b >> (k - 1)) & 1)
        out.append(DataBackground(f"std{k}", value))
    return tuple(out)


def resolve_background(name: str, width: int, layout: tuple[int, int] | None = None) -> tuple[DataBackground, ...]:
    """One background name (or ``standard``) resolved for a width and layout."""
    _check_width(width)
    cols = 1 if layout is None else int(layout[1])
    key = name.strip().lower().replace("_", "-")
    if key == "solid":
        return (DataBackground("solid", 0),)
    if key in ("checkerboard", "checker"):
        return (DataBackground("checkerboard", _bit_pattern(width, lambda b: (b * cols) & 1), "cell"),)
    if key in ("row-stripe", "rowstripe"):
        return (DataBackground("row-stripe", 0, "row"),)
    if key in ("col-stripe", "colstripe", "column-stripe"):
        return (DataBackground("col-stripe", _bit_pattern(width, lambda b: (b * cols) & 1), "col"),)
    std = standard_set(width)
    if key == "standard":
        return std
    if key.startswith("std") and key[3:].isdigit():
        k = int(key[3:])
        if k >= len(std):
            raise UsageError(f"background {name!r}: a {width}-bit word has std0..std{len(std) - 1}")
        return (std[k],)
    if key.startswith("0x"):
        try:
            value = int(key, 16)
        except ValueError:
            raise UsageError(f"background {name!r} is not a hex number") from None
        if value >> width:
            raise UsageError(f"background {name!r} does not fit in {width} bits")
        return (DataBackground(f"{value:#x}", value),)
    raise UsageError(
        f"unknown data background {name!r}; choose from {', '.join(BACKGROUND_NAMES)}, std0..stdK or a hex word "
        "such as 0x5a"
    )


def default_background_spec(width: int) -> str:
    """The one default data backgrounds of every command: ``solid`` for 1-bit words, else ``standard``
    (log2(width) + 1 backgrounds; for 1-bit words ``standard`` is the solid background alone)."""
    return "solid" if width == 1 else "standard"


def resolve_backgrounds(
    spec: str | Sequence[str], width: int, layout: tuple[int, int] | None = None
) -> tuple[DataBackground, ...]:
    """A comma-separated list (or sequence) of background names, in order; a background equal to an
    earlier one (same words) is dropped."""
    names = [s for s in (spec.split(",") if isinstance(spec, str) else spec) if s.strip()]
    if not names:
        raise UsageError("at least one data background is needed (e.g. solid or standard)")
    out: list[DataBackground] = []
    seen: set[tuple[int, str]] = set()
    for n in names:
        for bg in resolve_background(n, width, layout):
            if (bg.base, bg.flip) not in seen:  # the same words under another name run once
                seen.add((bg.base, bg.flip))
                out.append(bg)
    return tuple(out)


def parity(flip: Flip, addresses: IntArray, layout: tuple[int, int] | None) -> IntArray | None:
    """0/1 per address for the background's flip rule, or None when it never flips."""
    if flip == "none":
        return None
    if layout is None:  # each word its own row, column 0
        return np.zeros_like(addresses) if flip == "col" else addresses & 1
    cols = int(layout[1])
    if cols & (cols - 1) == 0:  # power of two: row = a >> log2(cols), col = a & (cols - 1)
        shift = cols.bit_length() - 1
        if flip == "row":
            return (addresses >> shift) & 1
        if flip == "col":
            return addresses & (cols - 1) & 1
        return ((addresses >> shift) + (addresses & (cols - 1))) & 1
    row, col = address_to_row_col(addresses, layout)
    if flip == "row":
        return row & 1
    if flip == "col":
        return col & 1
    return (row + col) & 1


def background_words(
    bg: DataBackground, addresses: IntArray, width: int, layout: tuple[int, int] | None = None
) -> WordArray:
    """Background value of every address, vectorised: ``uint64[n, L]``."""
    base = int_to_limbs(bg.base, width)
    n = len(addresses)
    out = np.broadcast_to(base, (n, base.size)).copy()
    p = parity(bg.flip, addresses, layout)
    if p is not None:
        out ^= p.astype(np.uint64)[:, None] * all_ones(width)[None, :]
    return out
