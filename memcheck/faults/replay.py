"""Replaying a March test on a memory with one fault injected: the pieces the reference engine
(:mod:`memcheck.faults.reference`) and diagnosis (:mod:`memcheck.diagnose`) share.

* :func:`stream_of`, :func:`event_stream`: a test's operation stream on a memory, and as plain events
  (reads, writes, pauses);
* :func:`power_up`: a faulty memory and a good memory's cells in one power-up state of the fault;
* :func:`back_to_back`: whether an operation follows the previous one on its word back to back;
* :func:`power_up_states`: every power-up state of a fault's variables, in the engines' order;
* :class:`Memory` and its faulty kinds: the three operations with the fault injected.

It is deliberately plain (Python ints per word) so it can be trusted by reading.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

from memcheck.faults.geometry import Arrangement
from memcheck.faults.instances import (
    Cell,
    CellFault,
    CouplingFault,
    DecoderFault,
    FaultInstance,
    OpRef,
    StuckOpenFault,
)
from memcheck.faults.primitives import NO_PREV, aggressor_op, pause, prev_code, settle, victim_op
from memcheck.march.expand import MarchStream, Pause, expand
from memcheck.march.notation import MarchTest
from memcheck.ops import OpKind


@dataclass(frozen=True, slots=True)
class Event:
    """One operation of the stream: ``kind`` "r", "w" or "T" (a pause), its word, data and place."""

    kind: str  # "r", "w" or "T"
    word: int
    data: int
    ref: OpRef


def stream_of(test: MarchTest, setup: Arrangement) -> MarchStream:
    """The operation stream of ``test`` on the memory ``setup`` describes (order, backgrounds, layout)."""
    return expand(
        test,
        setup.words,
        setup.width,
        layout=setup.layout,
        order=setup.order,
        backgrounds=setup.background_spec,
        seed=setup.seed,
        any_order=setup.any_order,
    )


def event_stream(test: MarchTest, setup: Arrangement) -> list[Event]:
    """The whole operation stream of ``test`` on ``setup`` as events, in order."""
    stream = stream_of(test, setup)
    out: list[Event] = []
    for item in stream.steps():
        if isinstance(item, Pause):
            out.append(Event("T", -1, 0, OpRef(item.background, item.element, -1, -1)))
        else:
            ref = OpRef(item.background, item.element, item.step, item.op.address)
            out.append(Event("r" if item.op.kind == OpKind.READ else "w", item.op.address, item.op.data, ref))
    return out


# ---------------------------------------------------------------------------------------------------
# Faulty memories: the same three operations as a good memory, with the fault injected.
# ---------------------------------------------------------------------------------------------------


class Memory:
    def __init__(self, words: int) -> None:
        self.cells = [0] * words
        self.chained = False  # the coming operation follows the previous one back to back on its word

    def write(self, w: int, data: int) -> None:
        self.cells[w] = data

    def read(self, w: int) -> int:
        return self.cells[w]

    def pause(self) -> None:
        pass


class CellFaultMemory(Memory):
    """A single- or two-cell FP fault: the victim's operation first, then the aggressor's
    disturbance, then state coupling (the rules live in :mod:`memcheck.faults.primitives`)."""

    def __init__(self, words: int, fault: CellFault | CouplingFault) -> None:
        super().__init__(words)
        self.model = fault.model
        self.victim = fault.cell if isinstance(fault, CellFault) else fault.victim
        self.aggressor = fault.aggressor if isinstance(fault, CouplingFault) else None
        self.prev_v = NO_PREV  # the last operation on the victim's / aggressor's word (prev_code)
        self.prev_a = NO_PREV

    def _prevs(self) -> tuple[int, int]:
        return (self.prev_v, self.prev_a) if self.chained else (NO_PREV, NO_PREV)

    def get(self, c: Cell | None) -> int:
        return 0 if c is None else (self.cells[c.word] >> c.bit) & 1

    def set_victim(self, value: int) -> None:
        v = self.victim
        self.cells[v.word] = (self.cells[v.word] & ~(1 << v.bit)) | (value << v.bit)

    def settle(self) -> None:
        self.set_victim(settle(self.model, self.get(self.aggressor), self.get(self.victim)))

    def write(self, w: int, data: int) -> None:
        a, v = self.get(self.aggressor), self.get(self.victim)
        pv, pa = self._prevs()
        self.cells[w] = data
        if w == self.victim.word:
            d = (data >> self.victim.bit) & 1
            self.set_victim(victim_op(self.model, a, v, "w", d, pv)[0])
            self.prev_v = prev_code(v, "w", d)
        if self.aggressor is not None and w == self.aggressor.word:
            written = (data >> self.aggressor.bit) & 1
            self.set_victim(aggressor_op(self.model, a, self.get(self.victim), "w", written, pa))
            self.prev_a = prev_code(a, "w", written)
        self.settle()

    def read(self, w: int) -> int:
        a, v = self.get(self.aggressor), self.get(self.victim)
        pv, pa = self._prevs()
        out = self.cells[w]
        if w == self.victim.word:
            new_v, returned = victim_op(self.model, a, v, "r", v, pv)
            self.set_victim(new_v)
            out = (out & ~(1 << self.victim.bit)) | (returned << self.victim.bit)
            self.prev_v = prev_code(v, "r", v)
        if self.aggressor is not None and w == self.aggressor.word:
            self.set_victim(aggressor_op(self.model, a, self.get(self.victim), "r", a, pa))
            self.prev_a = prev_code(a, "r", a)
        self.settle()
        return out

    def pause(self) -> None:
        self.set_victim(pause(self.model, self.get(self.victim)))
        self.settle()


class StuckOpenMemory(Memory):
    """Reads of the open cell return the data-out latch; every read loads the latch."""

    def __init__(self, words: int, fault: StuckOpenFault, latch: int) -> None:
        super().__init__(words)
        self.cell = fault.cell
        self.latch = latch

    def read(self, w: int) -> int:
        out = self.cells[w]
        if w == self.cell.word:
            bit = 1 << self.cell.bit
            out = (out & ~bit) | (self.latch & bit)
        self.latch = out
        return out


class DecoderMemory(Memory):
    """Operations go to the words the faulty decoder selects."""

    def __init__(self, words: int, width: int, fault: DecoderFault, floating: int) -> None:
        super().__init__(words)
        self.targets = fault.targets()
        self.floating = floating
        self.wired = fault.wired
        self.ones = (1 << width) - 1

    def write(self, w: int, data: int) -> None:
        for t in self.targets.get(w, (w,)):
            self.cells[t] = data

    def read(self, w: int) -> int:
        reached = self.targets.get(w, (w,))
        if not reached:
            return self.floating
        out = self.ones if self.wired == "and" else 0
        for t in reached:
            out = out & self.cells[t] if self.wired == "and" else out | self.cells[t]
        return out


def power_up(fault: FaultInstance, values: Sequence[int], setup: Arrangement) -> tuple[Memory, list[int], list[int]]:
    """The faulty memory, the good memory's cells and the words to watch, in power-up state ``values``."""
    good = [0] * setup.words
    ones = (1 << setup.width) - 1
    bad: Memory
    if isinstance(fault, CellFault | CouplingFault):
        bad = CellFaultMemory(setup.words, fault)
        for c, val in zip(fault.cells, values, strict=True):
            good[c.word] |= val << c.bit
        bad.cells = list(good)
        bad.settle()
        return bad, good, sorted({c.word for c in fault.cells})
    if isinstance(fault, StuckOpenFault):
        bad = StuckOpenMemory(setup.words, fault, values[0] << fault.cell.bit)
        return bad, good, [fault.cell.word]
    *word_values, floating = values
    bad = DecoderMemory(setup.words, setup.width, fault, floating * ones)
    for w, val in zip(fault.words, word_values, strict=True):
        good[w] = val * ones
    bad.cells = list(good)
    return bad, good, list(fault.words)


def back_to_back(before: Event, ev: Event) -> bool:
    """Two operations in a row: the same word within the same pass of one element (a pause between
    them, or an element boundary, breaks the pair)."""
    if ev.kind == "T" or before.kind == "T" or before.word != ev.word:
        return False
    return (before.ref.background, before.ref.element) == (ev.ref.background, ev.ref.element)


def power_up_states(n: int) -> list[tuple[int, ...]]:
    """All power-up states of ``n`` variables, first variable most significant."""
    return [tuple((s >> (n - 1 - i)) & 1 for i in range(n)) for s in range(1 << n)]
