"""The reference engine: inject one fault into a model of the whole memory and run the whole test.

It is deliberately plain so it can be trusted by reading: words are Python ints, the operation
stream comes from :func:`memcheck.march.expand.expand` (the same stream a BIST or RTL run gets),
every power-up state of the fault's cells is run separately, and a read counts as detecting when it
differs from what a fault-free memory run from the same power-up state returns at a word that has
been written (a never-written word's content is unknown to the tester, so it is not compared).

Cells outside the fault power up to 0; only the faulty cells' states are enumerated.
The fast engine (:mod:`memcheck.faults.fast`) must give exactly these results.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass

from memcheck.faults.geometry import Arrangement, check_consistent
from memcheck.faults.instances import (
    Cell,
    CellFault,
    CouplingFault,
    DecoderFault,
    Detection,
    FaultInstance,
    FaultResult,
    OpRef,
    StuckOpenFault,
    Witness,
)
from memcheck.faults.primitives import NO_PREV, aggressor_op, pause, prev_code, settle, victim_op
from memcheck.march.expand import Pause, expand
from memcheck.march.notation import MarchTest
from memcheck.ops import OpKind

NEVER = -2  # event index meaning "did not happen"; -1 is the power-up moment


@dataclass(frozen=True, slots=True)
class _Event:
    kind: str  # "r", "w" or "T"
    word: int
    data: int
    ref: OpRef


def _events(test: MarchTest, setup: Arrangement) -> list[_Event]:
    stream = expand(
        test,
        setup.words,
        setup.width,
        layout=setup.layout,
        order=setup.order,
        backgrounds=setup.background_spec,
        seed=setup.seed,
        any_order=setup.any_order,
    )
    out: list[_Event] = []
    for item in stream.steps():
        if isinstance(item, Pause):
            out.append(_Event("T", -1, 0, OpRef(item.background, item.element, -1, -1)))
        else:
            ref = OpRef(item.background, item.element, item.step, item.op.address)
            out.append(_Event("r" if item.op.kind == OpKind.READ else "w", item.op.address, item.op.data, ref))
    return out


# ---------------------------------------------------------------------------------------------------
# Faulty memories: the same three operations as a good memory, with the fault injected.
# ---------------------------------------------------------------------------------------------------


class _Memory:
    def __init__(self, words: int) -> None:
        self.cells = [0] * words
        self.chained = False  # the coming operation follows the previous one back to back on its word

    def write(self, w: int, data: int) -> None:
        self.cells[w] = data

    def read(self, w: int) -> int:
        return self.cells[w]

    def pause(self) -> None:
        pass


class _CellFaultMemory(_Memory):
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


class _StuckOpenMemory(_Memory):
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


class _DecoderMemory(_Memory):
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


# ---------------------------------------------------------------------------------------------------
# One run from one power-up state.
# ---------------------------------------------------------------------------------------------------


@dataclass
class _Run:
    detected_bits: int  # data bits on which some compared read differed
    excited: dict[int, int]  # bit -> first event index after which the fault's cells differ (-1 power-up)
    masked: dict[int, int]  # bit -> first event index after that at which they agree again


def _power_up(fault: FaultInstance, values: Sequence[int], setup: Arrangement) -> tuple[_Memory, list[int], list[int]]:
    """The faulty memory, the good memory's cells and the words to watch, in power-up state ``values``."""
    good = [0] * setup.words
    ones = (1 << setup.width) - 1
    bad: _Memory
    if isinstance(fault, CellFault | CouplingFault):
        bad = _CellFaultMemory(setup.words, fault)
        for c, val in zip(fault.cells, values, strict=True):
            good[c.word] |= val << c.bit
        bad.cells = list(good)
        bad.settle()
        return bad, good, sorted({c.word for c in fault.cells})
    if isinstance(fault, StuckOpenFault):
        bad = _StuckOpenMemory(setup.words, fault, values[0] << fault.cell.bit)
        return bad, good, [fault.cell.word]
    *word_values, floating = values
    bad = _DecoderMemory(setup.words, setup.width, fault, floating * ones)
    for w, val in zip(fault.words, word_values, strict=True):
        good[w] = val * ones
    bad.cells = list(good)
    return bad, good, list(fault.words)


def _run(fault: FaultInstance, values: Sequence[int], events: Sequence[_Event], setup: Arrangement) -> _Run:
    bad, good, watch = _power_up(fault, values, setup)
    written = [False] * setup.words
    run = _Run(0, {}, {})

    def track(index: int) -> None:
        diff = 0
        for w in watch:
            diff |= bad.cells[w] ^ good[w]
        for b in range(setup.width):
            if diff >> b & 1 and b not in run.excited:
                run.excited[b] = index
            elif not diff >> b & 1 and b in run.excited and b not in run.masked:
                run.masked[b] = index

    track(-1)
    for i, ev in enumerate(events):
        bad.chained = i > 0 and _back_to_back(events[i - 1], ev)
        if ev.kind == "w":
            bad.write(ev.word, ev.data)
            good[ev.word] = ev.data
            written[ev.word] = True
        elif ev.kind == "r":
            got = bad.read(ev.word)
            if written[ev.word]:
                run.detected_bits |= got ^ good[ev.word]
        else:
            bad.pause()
        track(i)
    return run


def _back_to_back(before: _Event, ev: _Event) -> bool:
    """Two operations in a row: the same word within the same pass of one element (a pause between
    them, or an element boundary, breaks the pair)."""
    if ev.kind == "T" or before.kind == "T" or before.word != ev.word:
        return False
    return (before.ref.background, before.ref.element) == (ev.ref.background, ev.ref.element)


def _ref(events: Sequence[_Event], index: int) -> OpRef | None:
    if index == NEVER:
        return None
    return OpRef.power_up() if index < 0 else events[index].ref


def _first_episode(run: _Run, bits: Iterable[int]) -> tuple[int, int]:
    """(excited, masked) event indices of the earliest-excited bit among ``bits`` (lowest bit on ties)."""
    best: tuple[int, int, int] | None = None
    for b in bits:
        if b in run.excited:
            cand = (run.excited[b], b, run.masked.get(b, NEVER))
            if best is None or cand[:2] < best[:2]:
                best = cand
    return (NEVER, NEVER) if best is None else (best[0], best[2])


def _states(n: int) -> list[tuple[int, ...]]:
    """All power-up states of ``n`` variables, first variable most significant."""
    return [tuple((s >> (n - 1 - i)) & 1 for i in range(n)) for s in range(1 << n)]


def _verdict(all_detect: bool, some_detect: bool) -> Detection:
    return "detected" if all_detect else ("partial" if some_detect else "escaped")


def simulate_one(
    test: MarchTest, fault: FaultInstance, setup: Arrangement, events: Sequence[_Event] | None = None
) -> FaultResult:
    """Run every power-up state of ``fault``'s cells through the whole test."""
    if events is None:
        check_consistent(test, len(setup.resolve().backgrounds))
        events = _events(test, setup)
    labels = fault.power_up_labels()
    states = _states(len(labels))
    runs = [_run(fault, s, events, setup) for s in states]
    width = setup.width
    if not isinstance(fault, DecoderFault):
        det = [r.detected_bits != 0 for r in runs]
        verdict = _verdict(all(det), any(det))
        if verdict == "detected":
            return FaultResult(fault, verdict)
        s = det.index(False)
        exc, mask = _first_episode(runs[s], range(width))
        return FaultResult(
            fault, verdict, Witness(tuple(zip(labels, states[s], strict=True)), _ref(events, exc), _ref(events, mask))
        )
    # A decoder fault acts on every bit of its words alike and the bits never interact, so each bit is
    # an independent copy: the fault escapes from some power-up state of the whole words exactly when
    # every bit has an escaping state of its own, and those combine into the witness.
    det_bit = [[r.detected_bits >> b & 1 == 1 for r in runs] for b in range(width)]
    all_detect = any(all(d) for d in det_bit)
    verdict = _verdict(all_detect, any(any(d) for d in det_bit))
    if verdict == "detected":
        return FaultResult(fault, verdict)
    chosen = [d.index(False) for d in det_bit]
    values = [sum(states[chosen[b]][i] << b for b in range(width)) for i in range(len(labels))]
    best: tuple[int, int, int] | None = None
    for b in range(width):
        exc, mask = _first_episode(runs[chosen[b]], [b])
        if exc != NEVER and (best is None or exc < best[0]):
            best = (exc, b, mask)
    exc, mask = (NEVER, NEVER) if best is None else (best[0], best[2])
    return FaultResult(
        fault, verdict, Witness(tuple(zip(labels, values, strict=True)), _ref(events, exc), _ref(events, mask))
    )


def simulate_reference(test: MarchTest, faults: Iterable[FaultInstance], setup: Arrangement) -> list[FaultResult]:
    """Reference verdicts for ``faults`` under ``test`` on the memory ``setup`` describes."""
    check_consistent(test, len(setup.resolve().backgrounds))
    events = _events(test, setup)
    return [simulate_one(test, f, setup, events) for f in faults]
