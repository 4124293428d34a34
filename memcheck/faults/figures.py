"""Figures that never mislead: percentages and intervals as text a reader can copy into a test plan.

One rule, used by every table, every text derived from a JSON report and every plot label:

* a percentage reads ``100`` only when nothing escapes (``part == whole``) and ``0`` only when
  nothing is detected (``part == 0``);
* otherwise it gets as many decimals as it needs (up to :data:`MAX_DECIMALS`) so that the rounded
  text differs from 100 and 0 and keeps the figure's leading significant digit; when even that is
  not enough it reads ``>99.9999`` or ``<0.0001`` (never a rounded 100 or 0);
* an interval's bounds are rounded outwards (lower bound down, upper bound up) with enough decimals
  that the lower bound of a non-unanimous interval is not shown as its upper bound, e.g. the 95%
  interval of 20,000 detections out of 20,000 reads ``99.98-100``, not ``100.0-100.0``.
"""

from __future__ import annotations

import math
from fractions import Fraction

#: z of a two-sided 95% normal interval.
Z95 = 1.959963984540054
#: Decimals a figure gets when nothing needs more.
BASE_DECIMALS = 1
#: Most decimals ever shown; beyond them a figure reads ">99.9999" or "<0.0001".
MAX_DECIMALS = 4


def _fraction(part: int, whole: int) -> Fraction:
    return Fraction(part, whole) if whole else Fraction(0)


def _decimals_for(p: Fraction, base: int) -> int | None:
    """Fewest decimals (>= base) at which percentage ``p`` (0 < p < 100) rounds to neither 0 nor 100;
    None when MAX_DECIMALS is not enough."""
    for d in range(base, MAX_DECIMALS + 1):
        scale = 10**d
        r = round(p * scale)
        if 0 < r < 100 * scale:
            return d
    return None


def percent(part: int, whole: int, decimals: int = BASE_DECIMALS) -> str:
    """``part / whole`` as a percentage that is 100 only when ``part == whole`` and 0 only when
    ``part == 0`` (an empty whole reads ``-``).

    >>> percent(999760, 1000000), percent(1, 250000), percent(5, 5), percent(0, 5)
    ('99.98', '0.0004', '100', '0')
    """
    if whole <= 0:
        return "-"
    if part == whole:
        return "100"
    if part == 0:
        return "0"
    p = _fraction(part, whole) * 100
    d = _decimals_for(p, decimals)
    if d is None:
        return (
            f">{100 - 10.0**-MAX_DECIMALS:.{MAX_DECIMALS}f}" if p > 50 else f"<{10.0**-MAX_DECIMALS:.{MAX_DECIMALS}f}"
        )
    return f"{float(p):.{d}f}"


def percent_of_float(x: float, decimals: int = BASE_DECIMALS) -> str:
    """A proportion in [0, 1] known only as a float (interval bounds, plot heights), same rule;
    exactly 0 and 1 read ``0`` and ``100``."""
    if x >= 1.0:
        return "100"
    if x <= 0.0:
        return "0"
    frac = Fraction(x)
    return percent(frac.numerator, frac.denominator, decimals)


def _bound(x: float, d: int, up: bool) -> str:
    scale = 10**d
    v = math.ceil(x * 100 * scale - 1e-9) if up else math.floor(x * 100 * scale + 1e-9)
    v = max(0, min(100 * scale, v))
    if v == 100 * scale:
        return "100"
    if v == 0:
        return "0"
    return f"{v / scale:.{d}f}"


def interval(lo: float, hi: float, decimals: int = BASE_DECIMALS) -> str:
    """A proportion interval ``[lo, hi]`` (0..1) as ``LO-HI`` percent: each bound strictly inside
    (0, 1) gets the decimals :func:`percent` would give it (so it does not read 0 or 100), both
    bounds share the larger count, and they are rounded outwards (lower down, upper up).

    >>> interval(0.99980795, 1.0)
    '99.98-100'
    """
    d = decimals
    for x in (lo, hi):
        if 0.0 < x < 1.0:
            frac = Fraction(x) * 100
            d = max(d, _decimals_for(frac, decimals) or MAX_DECIMALS)

    def hides(d: int) -> bool:  # an inside bound that outward rounding would print as 0 or 100
        return (lo > 0.0 and _bound(lo, d, up=False) == "0") or (hi < 1.0 and _bound(hi, d, up=True) == "100")

    while d < MAX_DECIMALS and hides(d):
        d += 1
    return f"{_bound(lo, d, up=False)}-{_bound(hi, d, up=True)}"


def is_complete(part: int, whole: int) -> bool:
    """True when nothing escapes (the only case a figure may read 100)."""
    return whole > 0 and part == whole


def wilson_interval(successes: int, trials: int, z: float = Z95) -> tuple[float, float]:
    """Wilson score interval for a binomial proportion (E.B. Wilson, "Probable Inference, the Law of
    Succession, and Statistical Inference", JASA 22, 1927)."""
    if trials <= 0:
        return 0.0, 1.0
    p = successes / trials
    denom = 1 + z * z / trials
    centre = (p + z * z / (2 * trials)) / denom
    half = z * math.sqrt(p * (1 - p) / trials + z * z / (4 * trials * trials)) / denom
    lo = 0.0 if successes == 0 else max(0.0, centre - half)
    hi = 1.0 if successes == trials else min(1.0, centre + half)
    return lo, hi
