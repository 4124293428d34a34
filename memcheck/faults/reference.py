"""The reference engine: inject one fault into a model of the whole memory and run the whole test.

It is deliberately plain so it can be trusted by reading: words are Python ints, the operation
stream comes from :func:`memcheck.march.expand.expand` (the same stream a BIST or RTL run gets),
every power-up state of the fault's cells is run separately, and a read counts as detecting when it
differs from what a fault-free memory run from the same power-up state returns at a word that has
been written (a never-written word's content is unknown to the tester, so it is not compared).

Cells outside the fault power up to 0; only the faulty cells' states are enumerated.
The fast engine (:mod:`memcheck.faults.fast`) must give exactly these results. The faulty memories
and the event stream live in :mod:`memcheck.faults.replay` (shared with diagnosis).
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass

from memcheck.faults.geometry import Arrangement, check_consistent
from memcheck.faults.instances import DecoderFault, Detection, FaultInstance, FaultResult, OpRef, Witness
from memcheck.faults.replay import Event, back_to_back, event_stream, power_up, power_up_states
from memcheck.march.notation import MarchTest

NEVER = -2  # event index meaning "did not happen"; -1 is the power-up moment


# ---------------------------------------------------------------------------------------------------
# One run from one power-up state.
# ---------------------------------------------------------------------------------------------------


@dataclass
class _Run:
    detected_bits: int  # data bits on which some compared read differed
    excited: dict[int, int]  # bit -> first event index after which the fault's cells differ (-1 power-up)
    masked: dict[int, int]  # bit -> first event index after that at which they agree again


def _run(fault: FaultInstance, values: Sequence[int], events: Sequence[Event], setup: Arrangement) -> _Run:
    bad, good, watch = power_up(fault, values, setup)
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
        bad.chained = i > 0 and back_to_back(events[i - 1], ev)
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


def _ref(events: Sequence[Event], index: int) -> OpRef | None:
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


def _verdict(all_detect: bool, some_detect: bool) -> Detection:
    return "detected" if all_detect else ("partial" if some_detect else "escaped")


def simulate_one(
    test: MarchTest, fault: FaultInstance, setup: Arrangement, events: Sequence[Event] | None = None
) -> FaultResult:
    """Run every power-up state of ``fault``'s cells through the whole test."""
    if events is None:
        check_consistent(test, len(setup.resolve().backgrounds))
        events = event_stream(test, setup)
    labels = fault.power_up_labels()
    states = power_up_states(len(labels))
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
    events = event_stream(test, setup)
    return [simulate_one(test, f, setup, events) for f in faults]
