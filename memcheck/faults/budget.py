"""Memory estimates before a coverage job, so a huge job is refused with a figure instead of being
killed by the operating system.

The figures are upper estimates of peak memory measured on this implementation (bytes per word
of the per-word arrays the fast engine resolves, bytes per cell of the neighbour pair tables, bytes
per sampled instance) plus a fixed interpreter share; they are estimates, printed as such.
"""

from __future__ import annotations

from dataclasses import dataclass

from memcheck.errors import BudgetError
from memcheck.faults.geometry import Arrangement
from memcheck.faults.sparse import closed_form
from memcheck.faults.universe import Universe
from memcheck.march.orders import AddressOrder

#: Default ``--max-memory`` (bytes): 4 GiB.
DEFAULT_MAX_MEMORY = 4 << 30
_BASE = 200 << 20  # interpreter, numpy, tables
_PER_WORD_RESOLVE = 128  # up, pos, addresses, parity code, classes (int64), sort scratch (measured)
_PER_WORD_CLASS = 24  # per word and word class: the running counts of the pair counting
_NEIGHBOUR_BLOCKS = 400 << 20  # the neighbours universe's blocks (faults/neighbours.py, lattice.py)
_PER_WORD_WALK = 56  # a walk without closed form: up, pos, building scratch, compact memories (measured 42-55)
_PER_SAMPLE = 4096  # one sampled instance and its simulation


@dataclass(frozen=True)
class Estimate:
    """Estimated peak memory of one coverage job, in bytes, and what it is made of."""

    bytes: int
    detail: str


def estimate_coverage(setup: Arrangement, universe: Universe, classes: tuple[str, ...], nbg: int) -> Estimate:
    """Peak memory of ``coverage`` on ``setup`` over ``universe`` for ``classes`` with ``nbg``
    backgrounds (``nbg`` also bounds the number of word classes, at most ``2**nbg``)."""
    words = setup.words
    resolve = words * (_PER_WORD_RESOLVE + nbg)
    total = _BASE + resolve
    parts = [f"{words:,} words x {_PER_WORD_RESOLVE + nbg} B for the address order and backgrounds"]
    if universe.kind == "sample":
        assert universe.size is not None
        n = universe.size * len(classes)
        # Samples run on the compact memory of the words they touch (faults/sparse.py): no per-word
        # arrays when the order has a closed form; the other orders materialise the walk (16 B a word).
        if closed_form(AddressOrder(setup.order, words, setup.layout, setup.seed)):
            total, parts = _BASE, []
        else:
            total, parts = _BASE + 16 * words, [f"{words:,} words x 16 B for the {setup.order} walk"]
        # one class at a time, simulated in chunks (measured: 1 Gword x 64, 25 classes x 100,000: 375 MB)
        total += min(n, universe.size) * _PER_SAMPLE
        parts.append(f"{n:,} sampled instances, {universe.size:,} at a time")
    elif universe.kind == "all":
        wclasses = min(1 << nbg, words)
        total += words * wclasses * _PER_WORD_CLASS
        parts.append(f"pair counting over up to {wclasses} word class(es)")
    else:
        total, parts = _neighbours(setup)
    return Estimate(total, "; ".join(parts))


def _neighbours(setup: Arrangement) -> tuple[int, list[str]]:
    """The neighbours universe is counted from the layout (faults/neighbours.py): blocks of bounded
    size, plus the walk built once for orders without a closed form."""
    total = _BASE + _NEIGHBOUR_BLOCKS
    parts = ["neighbour pairs counted from the layout in blocks of 2^21"]
    if not closed_form(AddressOrder(setup.order, setup.words, setup.layout, setup.seed)):
        total += setup.words * _PER_WORD_WALK
        parts.append(f"{setup.words:,} words x {_PER_WORD_WALK} B for the {setup.order} walk")
    return total, parts


def check_budget(estimate: Estimate, limit: int, what: str, option: str) -> None:
    """Raise :class:`BudgetError` when ``estimate`` exceeds ``limit`` bytes, naming the option that
    allows it."""
    if estimate.bytes > limit:
        raise BudgetError(
            f"{what} needs an estimated {gib(estimate.bytes)} of memory ({estimate.detail}), more than the "
            f"limit of {gib(limit)}; raise it with {option} {-(-estimate.bytes // (1 << 30))}G if the machine "
            "has that much, or measure a smaller memory or a sample (--universe sample:K)"
        )


def gib(n: int) -> str:
    return f"{n / (1 << 30):.1f} GiB"
