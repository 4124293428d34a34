"""How a March test meets one memory: geometry, address order and data backgrounds, resolved once
into the small arrays the engines need.

Both engines take an :class:`Arrangement`. The reference engine hands it to
:func:`memcheck.march.expand.expand` and runs the whole stream; the fast engine only needs, per word,
its position in the ⇑ order and which background bit each of its cells gets (its *signature*).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Literal

import numpy as np
import numpy.typing as npt

from memcheck.errors import FaultModelError, UsageError
from memcheck.march.backgrounds import DataBackground, default_background_spec, parity, resolve_backgrounds
from memcheck.march.notation import Delay, MarchElement, MarchTest
from memcheck.march.orders import AddressOrder

IntArray = npt.NDArray[np.int64]
ByteArray = npt.NDArray[np.uint8]


@dataclass(frozen=True)
class Arrangement:
    """A memory of ``words`` x ``width`` bits, an optional physical ``layout`` (rows x mux columns of
    words, as in :mod:`memcheck.march.orders`), the address ``order`` kind and the data
    ``backgrounds`` (default: ``solid`` for 1-bit words, the ``standard`` set for wider words), the
    ``seed`` of the LFSR order and the walk ``any_order`` of elements whose order is ⇕ (up or down)."""

    words: int
    width: int = 1
    layout: tuple[int, int] | None = None
    order: str = "linear"
    backgrounds: str | tuple[str, ...] | None = None
    seed: int | None = None
    any_order: Literal["up", "down"] = "up"

    def __post_init__(self) -> None:
        if isinstance(self.words, bool) or not isinstance(self.words, int) or self.words < 1:
            raise UsageError(f"words must be a positive integer, not {self.words!r}")
        if isinstance(self.width, bool) or not isinstance(self.width, int) or not 1 <= self.width <= 1024:
            raise UsageError(f"width must be an integer from 1 to 1024, not {self.width!r}")
        if self.any_order not in ("up", "down"):
            raise UsageError(f"⇕ elements run up or down, not {self.any_order!r}")

    @property
    def background_spec(self) -> str | tuple[str, ...]:
        if self.backgrounds is not None:
            return self.backgrounds
        return default_background_spec(self.width)

    @property
    def cells(self) -> int:
        return self.words * self.width

    def resolve(self) -> Resolved:
        order = AddressOrder(self.order, self.words, self.layout, self.seed)
        bgs = resolve_backgrounds(self.background_spec, self.width, self.layout)
        up = order.up()
        pos = np.empty(self.words, dtype=np.int64)
        pos[up] = np.arange(self.words, dtype=np.int64)
        base = np.array([[(bg.base >> b) & 1 for b in range(self.width)] for bg in bgs], dtype=np.uint8)
        wclass, wpar = word_classes(bgs, np.arange(self.words, dtype=np.int64), self.layout)
        return Resolved(self, bgs, up, pos, base, wclass, wpar)


def word_classes(
    bgs: tuple[DataBackground, ...], addresses: IntArray, layout: tuple[int, int] | None
) -> tuple[IntArray, ByteArray]:
    """``(wclass, wpar)`` of ``addresses``: each word's class (words whose flip under every background
    is the same) and each class's flip per background, ``wpar[c, k]``."""
    k = len(bgs)
    par = np.zeros((k, len(addresses)), dtype=np.uint8)
    for i, bg in enumerate(bgs):
        p = parity(bg.flip, addresses, layout)
        if p is not None:
            par[i] = p.astype(np.uint8)
    pcode = (par.astype(np.int64) << np.arange(k, dtype=np.int64)[:, None]).sum(axis=0)
    wc_codes, wclass = np.unique(pcode, return_inverse=True)
    wpar = ((wc_codes[:, None] >> np.arange(k, dtype=np.int64)[None, :]) & 1).astype(np.uint8)  # (nwc, k)
    return wclass.astype(np.int64), wpar


@dataclass(frozen=True, eq=False)
class Resolved:
    """Arrays derived from a setup.

    ``up`` is the ⇑ walk (``pos`` its inverse), ``base[k, b]`` the bit of background ``k`` for data
    bit ``b`` before the address-dependent flip, ``wclass[w]`` the word's class (words flipped alike
    by every background) and ``wpar[c, k]`` the flip of class ``c`` under background ``k``.
    A cell's signature code packs, over the backgrounds, the bit that ``w0`` writes to it.
    """

    setup: Arrangement
    backgrounds: tuple[DataBackground, ...]
    up: IntArray
    pos: IntArray
    base: ByteArray
    wclass: IntArray
    wpar: ByteArray
    _codes: list[IntArray] = field(default_factory=list, repr=False)

    @property
    def nbg(self) -> int:
        return len(self.backgrounds)

    def class_codes(self) -> IntArray:
        """``codes[c, b]``: the signature code of bit ``b`` in a word of class ``c``."""
        if not self._codes:
            bits = self.base[None, :, :] ^ self.wpar[:, :, None]  # (nwc, k, width)
            weights = (1 << np.arange(self.nbg, dtype=np.int64))[None, :, None]
            self._codes.append((bits.astype(np.int64) * weights).sum(axis=1))
        return self._codes[0]

    def cell_code(self, words: IntArray, bits: IntArray) -> IntArray:
        return self.class_codes()[self.wclass[words], bits]


# --------------------------------------------------------------------------------------------------
# The per-word schedule: every word sees the same operations in the same order, so a test is a list
# of *slots* (background, element, op index, kind, value); a pause is a slot of kind "T".
# --------------------------------------------------------------------------------------------------

SlotKind = Literal["r", "w", "T"]


@dataclass(frozen=True, slots=True)
class Slot:
    background: int
    element: int
    op: int
    kind: SlotKind
    value: int
    direction: Literal["up", "down"]


def schedule(test: MarchTest, nbg: int, any_order: Literal["up", "down"] = "up") -> tuple[Slot, ...]:
    """The operations every word sees, in time order, over ``nbg`` backgrounds (⇕ runs ``any_order``)."""
    out: list[Slot] = []
    for k in range(nbg):
        for e, el in enumerate(test.elements):
            if isinstance(el, Delay):
                out.append(Slot(k, e, -1, "T", 0, "up"))
                continue
            direction: Literal["up", "down"] = any_order if el.order == "any" else el.order
            for j, op in enumerate(el.ops):
                out.append(Slot(k, e, j, op.kind, op.value, direction))
    return tuple(out)


def check_consistent(test: MarchTest, backgrounds: int = 1) -> None:
    """Reject a test that a fault-free memory fails: a read expecting a value other than the one
    written last in the same pass. Reads before the test's first write see the unknown power-up
    content and are not compared; over several backgrounds such a read would compare the previous
    background's data against the new one, so it is rejected there."""
    last: int | None = None
    for e, el in enumerate(test.elements):
        if not isinstance(el, MarchElement):
            continue
        for j, op in enumerate(el.ops):
            if op.kind == "w":
                last = op.value
            elif last is None and backgrounds > 1:
                raise FaultModelError(
                    f"element {e} {el.to_unicode()} reads at operation {j + 1} before the test writes "
                    f"anything; run over {backgrounds} data backgrounds, that read would expect the new "
                    "background while a good memory still holds the previous one: start the test with a "
                    "write element (e.g. ⇕(w0)) or use a single background"
                )
            elif last is not None and op.value != last:
                raise FaultModelError(
                    f"element {e} {el.to_unicode()} reads {op} at operation {j + 1}, but every word holds "
                    f"{last} there in a good memory (written last by w{last}); a fault-free memory fails this "
                    "test, so its coverage means nothing: fix the notation"
                )
