"""Expand a March test over a memory into its exact operation stream, lazily and vectorised.

``expand(test, words, width, ...)`` returns a :class:`MarchStream`: a plan that yields, in order,

* :class:`OpsChunk` — numpy arrays for up to ``chunk_ops`` consecutive operations, and
* :class:`Pause` — a delay element (no operations) of a retention test.

The stream runs the whole test once per data background (background 0 first). Within one background
the elements run in order; an element visits every address of its order (⇑ forwards, ⇓ in exact
reverse, ⇕ as ``any_order`` says, ``up`` by default) and applies all its operations to an address
before moving on. A chunk never spans two elements or backgrounds, so ``element`` and
``background`` are plain integers on the chunk.

Memory stays bounded by one chunk (plus the address order for the ``gray`` and ``lfsr`` kinds,
8 bytes per word): no Python object is built per operation unless you ask for :meth:`MarchStream.steps`.
Chunk arrays are read-only and may be shared between chunks; copy them before changing them.

Word values use the limb representation of :mod:`memcheck.march.backgrounds`: ``uint64[n, L]``,
``L = ceil(width / 64)``, limb 0 = bits 0..63.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from dataclasses import dataclass, field
from typing import Any, Literal, TypeVar

import numpy as np
import numpy.typing as npt

from memcheck._limbs import limbs_of
from memcheck.errors import BudgetError, UsageError
from memcheck.march.backgrounds import (
    DataBackground,
    WordArray,
    _check_width,
    all_ones,
    int_to_limbs,
    limbs_to_int,
    parity,
    resolve_backgrounds,
)
from memcheck.march.library import resolve_test
from memcheck.march.notation import Delay, MarchElement, MarchTest
from memcheck.march.orders import AddressOrder
from memcheck.ops import OpKind, PortOp, read, write

#: Operation codes of :attr:`OpsChunk.op`: the values of :class:`memcheck.ops.OpKind`.
OP_READ = OpKind.READ
OP_WRITE = OpKind.WRITE
DEFAULT_CHUNK_OPS = 1 << 16

IntArray = npt.NDArray[np.int64]
ByteArray = npt.NDArray[np.uint8]
ShortArray = npt.NDArray[np.uint16]
_A = TypeVar("_A", bound=npt.NDArray[Any])


def _ro(a: _A) -> _A:
    """Mark an array read-only (chunk arrays may be shared between chunks)."""
    a.setflags(write=False)
    return a


@dataclass(frozen=True, eq=False)
class OpsChunk:
    """Consecutive operations of one element under one background.

    ``op`` is OP_READ or OP_WRITE (:class:`memcheck.ops.OpKind` codes); ``data`` is the written word (zero on reads) and
    ``expected`` the word a read must return (zero on writes); ``step`` is the operation's position
    inside its element; ``start`` is the stream index of the first operation.
    """

    start: int
    element: int
    background: int
    op: ByteArray
    address: IntArray
    data: WordArray
    expected: WordArray
    step: ShortArray

    def __len__(self) -> int:
        return int(self.op.shape[0])


@dataclass(frozen=True)
class Pause:
    """A delay element: wait (retention test) before the operation with stream index ``at``."""

    element: int
    background: int
    delay: Delay
    at: int


@dataclass(frozen=True)
class MarchStep:
    """One operation as Python objects, for driving RTL: ``op`` is a :class:`memcheck.ops.PortOp`
    (read or write); ``expected`` is what a read must return (None for writes)."""

    index: int
    element: int
    step: int
    background: int
    op: PortOp
    expected: int | None


@dataclass(frozen=True, eq=False)
class StreamArrays:
    """A whole (small) stream concatenated: one entry per operation."""

    op: ByteArray
    address: IntArray
    data: WordArray
    expected: WordArray
    element: npt.NDArray[np.int32]
    background: npt.NDArray[np.int32]
    step: ShortArray

    def __len__(self) -> int:
        return int(self.op.shape[0])


@dataclass(frozen=True)
class MarchStream:
    """A March test planned over one memory; iterate it for chunks and pauses (see module doc)."""

    test: MarchTest
    words: int
    width: int
    layout: tuple[int, int] | None
    order: AddressOrder
    backgrounds: tuple[DataBackground, ...]
    any_order: Literal["up", "down"] = "up"
    chunk_ops: int = DEFAULT_CHUNK_OPS
    _offsets: tuple[int, ...] = field(default=(), init=False, repr=False, compare=False)

    def __post_init__(self) -> None:
        offs = [0]
        for e in self.test.elements:
            offs.append(offs[-1] + (len(e.ops) * self.words if isinstance(e, MarchElement) else 0))
        object.__setattr__(self, "_offsets", tuple(offs))

    @property
    def ops_per_background(self) -> int:
        return self.test.length * self.words

    @property
    def total_ops(self) -> int:
        """Exactly ``length x words x backgrounds``."""
        return self.ops_per_background * len(self.backgrounds)

    @property
    def seed(self) -> int | None:
        return self.order.seed

    def direction(self, element: int) -> Literal["up", "down"]:
        """The walk an element uses (⇕ resolved by ``any_order``)."""
        e = self.test.elements[element]
        if not isinstance(e, MarchElement):
            raise ValueError(f"element {element} is a delay")
        return self.any_order if e.order == "any" else e.order

    def element_start(self, background: int, element: int) -> int:
        """Stream index of the first operation of ``element`` under ``background``."""
        return background * self.ops_per_background + self._offsets[element]

    def __iter__(self) -> Iterator[OpsChunk | Pause]:
        for b in range(len(self.backgrounds)):
            for e, el in enumerate(self.test.elements):
                if isinstance(el, Delay):
                    yield Pause(e, b, el, self.element_start(b, e))
                else:
                    yield from self._element_chunks(b, e, el)

    def chunks(self) -> Iterator[OpsChunk]:
        """Only the operation chunks (pauses dropped)."""
        for item in self:
            if isinstance(item, OpsChunk):
                yield item

    def _element_chunks(self, b: int, e: int, el: MarchElement) -> Iterator[OpsChunk]:
        k = len(el.ops)
        n = self.words
        width = self.width
        bg = self.backgrounds[b]
        per = max(1, self.chunk_ops // k)
        kinds = np.array([OP_WRITE if o.kind == "w" else OP_READ for o in el.ops], dtype=np.uint8)
        values = np.array([o.value for o in el.ops], dtype=np.uint8)
        is_write = (kinds == OP_WRITE).astype(np.uint64)
        ones = all_ones(width)
        base = int_to_limbs(bg.base, width)
        # words_k[p, j]: the word operation j handles when the address's flip parity is p
        flip = values.astype(np.uint64)[None, :] ^ np.array([[0], [1]], dtype=np.uint64)  # (2, k)
        words_k = base[None, None, :] ^ (flip[:, :, None] * ones[None, None, :])  # (2, k, L)
        data_k = words_k * is_write[None, :, None]
        exp_k = words_k * (1 - is_write)[None, :, None]
        direction = self.direction(e)
        start = self.element_start(b, e)
        cache: dict[int, tuple[ByteArray, ShortArray, WordArray | None, WordArray | None]] = {}

        for p0 in range(0, n, per):
            p1 = min(n, p0 + per)
            m = p1 - p0
            if m not in cache:
                op = _ro(np.tile(kinds, m))
                step = _ro(np.tile(np.arange(k, dtype=np.uint16), m))
                data_c = exp_c = None
                if bg.flip == "none":  # the same words for every address: build once, share
                    data_c = _ro(np.tile(data_k[0], (m, 1)))
                    exp_c = _ro(np.tile(exp_k[0], (m, 1)))
                cache[m] = (op, step, data_c, exp_c)
            op, step, data, expected = cache[m]
            addr = self.order.walk(direction, p0, p1)
            address = _ro(np.repeat(addr, k))
            if data is None or expected is None:
                par = parity(bg.flip, addr, self.layout)
                assert par is not None
                data = _ro(data_k[par].reshape(m * k, -1))
                expected = _ro(exp_k[par].reshape(m * k, -1))
            yield OpsChunk(start + p0 * k, e, b, op, address, data, expected, step)

    def steps(self) -> Iterator[MarchStep | Pause]:
        """Every operation as a :class:`MarchStep` (one Python object each: for RTL runs and small
        memories), with pauses in place."""
        for item in self:
            if isinstance(item, Pause):
                yield item
                continue
            for i in range(len(item)):
                addr = int(item.address[i])
                if item.op[i] == OP_WRITE:
                    yield MarchStep(
                        item.start + i,
                        item.element,
                        int(item.step[i]),
                        item.background,
                        write(addr, limbs_to_int(item.data[i])),
                        None,
                    )
                else:
                    yield MarchStep(
                        item.start + i,
                        item.element,
                        int(item.step[i]),
                        item.background,
                        read(addr),
                        limbs_to_int(item.expected[i]),
                    )

    def collect(self, limit: int = 1 << 24) -> StreamArrays:
        """The whole stream as arrays (for small memories and tests); refuses above ``limit`` ops."""
        if self.total_ops > limit:
            raise BudgetError(
                f"the stream has {self.total_ops} operations; collect() stops at {limit} (iterate the stream instead)"
            )
        parts = list(self.chunks())
        nl = limbs_of(self.width)
        if not parts:
            z = np.zeros(0, dtype=np.int64)
            return StreamArrays(
                z.astype(np.uint8),
                z,
                np.zeros((0, nl), np.uint64),
                np.zeros((0, nl), np.uint64),
                z.astype(np.int32),
                z.astype(np.int32),
                z.astype(np.uint16),
            )
        return StreamArrays(
            np.concatenate([c.op for c in parts]),
            np.concatenate([c.address for c in parts]),
            np.concatenate([c.data for c in parts]),
            np.concatenate([c.expected for c in parts]),
            np.concatenate([np.full(len(c), c.element, np.int32) for c in parts]),
            np.concatenate([np.full(len(c), c.background, np.int32) for c in parts]),
            np.concatenate([c.step for c in parts]),
        )

    def describe_step(self, step: MarchStep, got: int | None = None) -> str:
        """One line naming an operation (and a wrong read value), for failure reports."""
        el = self.test.elements[step.element]
        assert isinstance(el, MarchElement)
        op = el.ops[step.step]
        bg = self.backgrounds[step.background]
        hexw = (self.width + 3) // 4
        text = (
            f"element {step.element} {el.to_unicode()} operation {step.step + 1} ({op}) at address "
            f"{step.op.address:#x}, background {bg.name}"
        )
        if step.expected is not None:
            text += f": expected {step.expected:#0{hexw + 2}x}"
            if got is not None:
                text += f", got {got:#0{hexw + 2}x}"
        return text


def expand(
    test: MarchTest | str,
    words: int,
    width: int,
    *,
    layout: tuple[int, int] | None = None,
    order: str = "linear",
    backgrounds: str | Sequence[str] = "solid",
    any_order: str = "up",
    seed: int | None = None,
    chunk_ops: int = DEFAULT_CHUNK_OPS,
) -> MarchStream:
    """Plan ``test`` (a MarchTest, library name or notation) over a ``words`` x ``width`` memory.

    Raises NotationError or UnknownAlgorithm for a test that cannot be read, and UsageError for
    impossible requests (bad order, layout that does not match the word count, unknown background,
    width outside 1..1024).
    """
    t = resolve_test(test) if isinstance(test, str) else test
    _check_width(width)
    if any_order not in ("up", "down"):
        raise UsageError(f"⇕ elements run up or down, not {any_order!r}")
    if isinstance(chunk_ops, bool) or not isinstance(chunk_ops, int) or chunk_ops < 1:
        raise UsageError(f"chunk_ops must be a positive integer, not {chunk_ops!r}")
    lay = None if layout is None else (int(layout[0]), int(layout[1]))
    addr_order = AddressOrder(order, words, lay, seed)
    bgs = resolve_backgrounds(backgrounds, width, lay)
    return MarchStream(
        t, int(words), int(width), lay, addr_order, bgs, "up" if any_order == "up" else "down", chunk_ops
    )
