"""Address orders: permutations, exact reversal, Gray/complement properties, maximal-length LFSRs."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from memcheck.errors import UsageError
from memcheck.march import ORDER_KINDS, AddressOrder, address_order, lfsr_sequence, parse_layout
from memcheck.march.orders import LFSR_TAPS


def _layout_for(words: int) -> tuple[int, int]:
    cols = next(c for c in (4, 3, 2, 1) if words % c == 0)
    return words // cols, cols


@settings(max_examples=60, deadline=None)
@given(st.integers(1, 3000), st.sampled_from(ORDER_KINDS), st.integers(0, 1000))
def test_every_order_is_a_permutation_and_down_reverses_up(words: int, kind: str, seed: int) -> None:
    o = AddressOrder(kind, words, _layout_for(words), seed)
    up = o.up()
    assert up.dtype == np.int64
    assert np.array_equal(np.sort(up), np.arange(words))
    assert np.array_equal(o.down(), up[::-1])
    # slices agree with the whole walk, in both directions
    a, b = sorted((seed % (words + 1), (seed * 7) % (words + 1)))
    assert np.array_equal(o.up(a, b), up[a:b])
    assert np.array_equal(o.down(a, b), up[::-1][a:b])


def test_gray_neighbours_differ_in_one_bit() -> None:
    # Reflected binary code: successive codes differ in exactly one bit (F. Gray, US patent 2,632,058, 1953).
    g = address_order("gray", 1024)
    diff = g[1:] ^ g[:-1]
    assert np.all((diff & (diff - 1)) == 0) and np.all(diff != 0)
    assert g[:8].tolist() == [0, 1, 3, 2, 6, 7, 5, 4]


def test_complement_order_pairs_each_address_with_its_complement() -> None:
    # Address complement order: each address followed by its bitwise complement (common practice).
    c = address_order("complement", 16)
    assert c[:6].tolist() == [0, 15, 1, 14, 2, 13]
    assert np.all(c[1::2] == (~c[0::2]) & 15)


def test_row_fast_and_col_fast_follow_the_documented_mapping() -> None:
    rows, cols = 4, 3  # address = row * cols + col
    assert address_order("col-fast", 12, layout=(rows, cols)).tolist() == list(range(12))
    rf = address_order("row-fast", 12, layout=(rows, cols))
    assert [(a // cols, a % cols) for a in rf[:5]] == [(0, 0), (1, 0), (2, 0), (3, 0), (0, 1)]


def _gf2_mulmod(a: int, b: int, p: int, deg: int) -> int:
    r = 0
    while b:
        if b & 1:
            r ^= a
        b >>= 1
        a <<= 1
        if a >> deg & 1:
            a ^= p
    return r


def _gf2_powmod(e: int, p: int, deg: int) -> int:
    result, base = 1, 2  # polynomial "x"
    while e:
        if e & 1:
            result = _gf2_mulmod(result, base, p, deg)
        base = _gf2_mulmod(base, base, p, deg)
        e >>= 1
    return result


def _prime_factors(n: int) -> set[int]:
    out, d = set(), 2
    while d * d <= n:
        while n % d == 0:
            out.add(d)
            n //= d
        d += 1
    if n > 1:
        out.add(n)
    return out


@pytest.mark.parametrize("bits", sorted(LFSR_TAPS))
def test_lfsr_polynomials_are_primitive(bits: int) -> None:
    # A degree-n polynomial over GF(2) gives a maximal-length (2^n - 1) LFSR iff it is primitive:
    # x^(2^n-1) = 1 and x^((2^n-1)/q) != 1 for every prime q dividing 2^n - 1 (R. Lidl and
    # H. Niederreiter, "Finite Fields", 1997, order of a polynomial; theorem written from memory, page not
    # checked). Checked by algebra, independently
    # of the shift-register code.
    p = (1 << bits) | 1
    for t in LFSR_TAPS[bits][1:]:
        p |= 1 << t
    period = (1 << bits) - 1
    assert _gf2_powmod(period, p, bits) == 1
    for q in _prime_factors(period):
        assert _gf2_powmod(period // q, p, bits) != 1


@pytest.mark.parametrize("bits", range(2, 19))
def test_lfsr_sequence_has_maximal_length(bits: int) -> None:
    seq = lfsr_sequence(bits, start=1)
    assert len(seq) == (1 << bits) - 1
    assert np.array_equal(np.sort(seq), np.arange(1, 1 << bits))


def test_lfsr_matches_a_plain_shift_register_loop() -> None:
    taps = LFSR_TAPS[10]
    mask = sum(1 << (t - 1) for t in taps)
    s, expect = 37, []
    for _ in range(1023):
        expect.append(s)
        s = (s >> 1) ^ (mask if s & 1 else 0)
    assert lfsr_sequence(10, start=37).tolist() == expect


def test_lfsr_order_seeded_and_down_is_exact_reverse() -> None:
    a = AddressOrder("lfsr", 1000, seed=7)
    b = AddressOrder("lfsr", 1000, seed=8)
    assert a.up()[0] == 0 and not np.array_equal(a.up(), b.up())
    assert np.array_equal(a.up(), AddressOrder("lfsr", 1000, seed=7).up())
    assert np.array_equal(a.down(), a.up()[::-1])


@pytest.mark.parametrize(
    ("kind", "words", "layout"),
    [
        ("row-fast", 16, None),
        ("col-fast", 16, None),
        ("linear", 16, (3, 5)),
        ("zigzag", 16, None),
        ("linear", 0, None),
        ("linear", (1 << 32) + 1, None),
    ],
)
def test_impossible_orders_raise_usage_error(kind: str, words: int, layout: tuple[int, int] | None) -> None:
    with pytest.raises(UsageError):
        AddressOrder(kind, words, layout)


def test_parse_layout() -> None:
    assert parse_layout("256x4") == (256, 4)
    for bad in ("256", "0x4", "ax4", "2x3x4"):
        with pytest.raises(UsageError):
            parse_layout(bad)
