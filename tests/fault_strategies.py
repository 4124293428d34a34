"""Hypothesis strategies for fault-simulation tests: consistent random March tests, memory setups
and fault lists."""

from __future__ import annotations

from typing import Literal

from hypothesis import strategies as st

from memcheck.faults.fast import AF_VARIANTS
from memcheck.faults.geometry import Arrangement
from memcheck.faults.instances import (
    Cell,
    CellFault,
    CouplingFault,
    DecoderFault,
    FaultInstance,
    StuckOpenFault,
)
from memcheck.faults.primitives import (
    DYNAMIC_SINGLE_CELL_MODELS,
    DYNAMIC_TWO_CELL_MODELS,
    SINGLE_CELL_MODELS,
    TWO_CELL_MODELS,
)
from memcheck.march.notation import Bit, Delay, MarchElement, MarchOp, MarchTest, Order

CELL_MODELS = SINGLE_CELL_MODELS + DYNAMIC_SINGLE_CELL_MODELS
PAIR_MODELS = TWO_CELL_MODELS + DYNAMIC_TWO_CELL_MODELS

BITS: tuple[Bit, ...] = (0, 1)
ORDERS: tuple[Order, ...] = ("up", "down", "any")
WALKS: tuple[Literal["up", "down"], ...] = ("up", "down")


def flip(bit: Bit) -> Bit:
    """The complement of a March data bit (0 <-> 1)."""
    return 0 if bit else 1


@st.composite
def march_tests(
    draw: st.DrawFn, max_elements: int = 5, max_ops: int = 5, delays: bool = True, leading_reads: bool = True
) -> MarchTest:
    """A random March test that a fault-free memory passes: every read after the first write expects
    the value written last; reads before it (only with ``leading_reads``, which needs a single data
    background) may expect anything, as they are not compared."""
    n = draw(st.integers(1, max_elements))
    elements: list[MarchElement | Delay] = []
    state: Bit | None = None if leading_reads else draw(st.sampled_from(BITS))
    if state is not None:
        elements.append(MarchElement(draw(st.sampled_from(ORDERS)), (MarchOp("w", state),)))
    for _ in range(n):
        if delays and draw(st.integers(0, 5)) == 0:
            elements.append(Delay())
        ops = []
        for _ in range(draw(st.integers(1, max_ops))):
            if draw(st.booleans()):
                value = draw(st.sampled_from(BITS))
                ops.append(MarchOp("w", value))
                state = value
            else:
                ops.append(MarchOp("r", state if state is not None else draw(st.sampled_from(BITS))))
        elements.append(MarchElement(draw(st.sampled_from(ORDERS)), tuple(ops)))
    return MarchTest(tuple(elements))


def valid_tests(
    setup: Arrangement, max_elements: int = 5, max_ops: int = 5, delays: bool = True
) -> st.SearchStrategy[MarchTest]:
    """Random tests valid on ``setup`` (leading reads only with a single background)."""
    return march_tests(max_elements, max_ops, delays, leading_reads=setup.resolve().nbg == 1)


@st.composite
def setups(draw: st.DrawFn, max_words: int = 6, max_width: int = 3) -> Arrangement:
    words = draw(st.integers(1, max_words))
    width = draw(st.integers(1, max_width))
    divisors = [c for c in range(1, words + 1) if words % c == 0]
    cols = draw(st.sampled_from(divisors))
    layout = (words // cols, cols)
    order = draw(st.sampled_from(("linear", "gray", "complement", "lfsr", "row-fast", "col-fast")))
    bgs = draw(st.sampled_from((None, "solid", "checkerboard", "row-stripe", "col-stripe", "standard,checkerboard")))
    any_order = draw(st.sampled_from(WALKS))
    seed = draw(st.integers(0, 7))
    return Arrangement(words, width, layout=layout, order=order, backgrounds=bgs, seed=seed, any_order=any_order)


@st.composite
def faults(draw: st.DrawFn, setup: Arrangement) -> FaultInstance:
    cells = [Cell(w, b) for w in range(setup.words) for b in range(setup.width)]
    cell = st.sampled_from(cells)
    choices = ["cell", "sof"] + (["pair"] if len(cells) > 1 else []) + (["af"] if setup.words > 1 else [])
    kind = draw(st.sampled_from(choices))
    if kind == "cell":
        return CellFault(draw(st.sampled_from(CELL_MODELS)), draw(cell))
    if kind == "sof":
        return StuckOpenFault(draw(cell))
    if kind == "pair":
        a = draw(cell)
        v = draw(cell.filter(lambda c: c != a))
        return CouplingFault(draw(st.sampled_from(PAIR_MODELS)), a, v)
    k, wired = draw(st.sampled_from(AF_VARIANTS))
    x = draw(st.integers(0, setup.words - 1))
    y = None if k == "no-cell" else draw(st.integers(0, setup.words - 1).filter(lambda w: w != x))
    return DecoderFault(k, x, y, wired)
