"""Data backgrounds: the standard intra-word set, physical checkerboard and stripes, wide words."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from memcheck.errors import UsageError
from memcheck.march import background_words, int_to_limbs, limbs_to_int, resolve_backgrounds, standard_set


def test_standard_set_for_bytes_matches_the_published_backgrounds() -> None:
    # A.J. van de Goor and I.B.S. Tlili, "A Systematic Method for Modifying March Tests for
    # Bit-Oriented Memories into Tests for Word-Oriented Memories", IEEE Trans. Computers, 2003:
    # ceil(log2 B) + 1 backgrounds; for B = 8: 00000000, 01010101, 00110011, 00001111 (values written
    # from memory; table/page not checked).
    got = [format(b.base, "08b") for b in standard_set(8)]
    assert got == ["00000000", "01010101", "00110011", "00001111"]


@pytest.mark.parametrize(("width", "count"), [(1, 1), (2, 2), (8, 4), (32, 6), (39, 7), (64, 7), (1024, 11)])
def test_standard_set_size_is_ceil_log2_plus_one(width: int, count: int) -> None:
    bgs = standard_set(width)
    assert len(bgs) == count
    assert len({b.base for b in bgs}) == count


@pytest.mark.parametrize("width", [2, 5, 8, 16, 39, 72])
def test_standard_set_separates_every_pair_of_bits(width: int) -> None:
    # Why the set exists: for every pair of bits (i, j) some background gives them different values,
    # and with its complement both (0,1) and (1,0) occur, so intra-word coupling is exercised.
    bgs = standard_set(width)
    for i in range(width):
        for j in range(i + 1, width):
            assert any((b.base >> i & 1) != (b.base >> j & 1) for b in bgs), (i, j)


def _physical(words: np.ndarray, width: int, rows: int, cols: int) -> np.ndarray:
    """Rebuild the physical cell matrix: bit b of the word at (r, c) sits at column b * cols + c."""
    cells = np.zeros((rows, width * cols), dtype=np.int64)
    for a in range(rows * cols):
        r, c = divmod(a, cols)
        v = limbs_to_int(words[a])
        for b in range(width):
            cells[r, b * cols + c] = v >> b & 1
    return cells


@pytest.mark.parametrize(("rows", "cols", "width"), [(4, 4, 8), (8, 2, 5), (3, 3, 4), (4, 1, 7)])
def test_checkerboard_and_stripes_are_physical(rows: int, cols: int, width: int) -> None:
    addrs = np.arange(rows * cols, dtype=np.int64)
    lay = (rows, cols)
    r_idx, c_idx = np.indices((rows, width * cols))
    for name, want in (("checkerboard", (r_idx + c_idx) & 1), ("row-stripe", r_idx & 1), ("col-stripe", c_idx & 1)):
        (bg,) = resolve_backgrounds(name, width, lay)
        cells = _physical(background_words(bg, addrs, width, lay), width, rows, cols)
        assert np.array_equal(cells, want), name


@settings(max_examples=100, deadline=None)
@given(st.integers(1, 1024), st.data())
def test_limbs_round_trip_and_are_masked(width: int, data: st.DataObject) -> None:
    v = data.draw(st.integers(0, (1 << (width + 70)) - 1))
    limbs = int_to_limbs(v, width)
    assert limbs.dtype == np.uint64 and limbs.size == (width + 63) // 64
    assert limbs_to_int(limbs) == v & ((1 << width) - 1)


def test_background_list_parsing() -> None:
    bgs = resolve_backgrounds("solid, checkerboard,0x5a,std2,standard", 8)
    assert [b.name for b in bgs] == ["solid", "checkerboard", "0x5a", "std2", "std1", "std3"]
    for bad in ("plaid", "0x1ff", "std9", "", "0xzz"):
        with pytest.raises(UsageError):
            resolve_backgrounds(bad, 8)
    for width in (0, 1025):
        with pytest.raises(UsageError):
            resolve_backgrounds("solid", width)
