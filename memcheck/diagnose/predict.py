"""Predicted fail logs of many fault instances, from the operations on their own words only.

A single fault changes only the words it involves, so its fail log depends only on the operations
at those words, the pauses, whether each operation follows the previous one back to back on its
word, and, for a stuck-open cell, the value the data path carried before each read of its word
(the previous read's output, which a good word returns). :func:`collect` takes exactly that from
the expanded stream once (numpy, chunk by chunk) for a bounded set of words; :func:`predict` runs
the reference engine's faulty memories (:mod:`memcheck.faults.replay`) over those few events,
with the instance's words renumbered 0..k-1. Tests check it against :func:`~memcheck.diagnose.
faillog.fail_log`, which runs the whole stream.
"""

from __future__ import annotations

import heapq
from collections.abc import Iterable
from dataclasses import dataclass

import numpy as np

from memcheck.diagnose.faillog import FailRow
from memcheck.faults.geometry import Arrangement
from memcheck.faults.instances import DecoderFault, FaultInstance
from memcheck.faults.replay import StuckOpenMemory, power_up, power_up_states, stream_of
from memcheck.faults.sparse import renumber
from memcheck.march.backgrounds import limbs_to_int
from memcheck.march.expand import OP_READ, OP_WRITE, OpsChunk, Pause
from memcheck.march.notation import MarchTest


@dataclass(frozen=True, slots=True)
class Ev:
    """One event: ``kind`` r/w/T (pause)/L (data-out latch load before a read), ``seq`` its place."""

    seq: int
    kind: str
    word: int
    data: int  # written word, expected read value, or latch value
    chained: bool
    background: int
    element: int
    op: int


@dataclass(frozen=True)
class Events:
    """Events per word (and the pauses), for the words :func:`collect` was asked about."""

    by_word: dict[int, list[Ev]]
    pauses: list[Ev]

    def of(self, words: Iterable[int]) -> list[Ev]:
        lists = [self.by_word.get(w, []) for w in sorted(set(words))]
        return list(heapq.merge(self.pauses, *lists, key=lambda e: e.seq))


def _chunk_events(
    c: OpsChunk, interest: np.ndarray, latch: np.ndarray, carry: list[int], out: dict[int, list[Ev]]
) -> None:
    """Add the chunk's events at ``interest`` words; ``carry`` = [previous address (-1: none),
    element, background, last read's value (-1: no read yet), last read's address]."""
    addr = c.address
    n = len(c)
    prev = np.empty(n, dtype=np.int64)
    prev[0] = carry[0] if (carry[1], carry[2]) == (c.element, c.background) else -1
    prev[1:] = addr[:-1]
    chained = addr == prev
    is_read = c.op == OP_READ
    sel = np.flatnonzero(np.isin(addr, interest))
    prev_read = None
    if latch.size and sel.size:
        last = np.maximum.accumulate(np.where(is_read, np.arange(n), -1))
        prev_read = np.concatenate(([-1], last[:-1]))
        latch_sel = is_read & np.isin(addr, latch)
    for j in sel.tolist():
        w = int(addr[j])
        seq = 2 * (c.start + j) + 1
        lst = out.setdefault(w, [])
        if prev_read is not None and latch_sel[j]:
            p = int(prev_read[j])
            value, source = (limbs_to_int(c.expected[p]), int(addr[p])) if p >= 0 else (carry[3], carry[4])
            if value >= 0 and source != w:  # a read of the same word left the faulty value in the latch
                lst.append(Ev(seq - 1, "L", w, value, False, c.background, c.element, -1))
        if c.op[j] == OP_WRITE:
            lst.append(
                Ev(seq, "w", w, limbs_to_int(c.data[j]), bool(chained[j]), c.background, c.element, int(c.step[j]))
            )
        else:
            lst.append(
                Ev(seq, "r", w, limbs_to_int(c.expected[j]), bool(chained[j]), c.background, c.element, int(c.step[j]))
            )
    reads = np.flatnonzero(is_read)
    if reads.size:
        carry[3], carry[4] = limbs_to_int(c.expected[reads[-1]]), int(addr[reads[-1]])
    carry[0], carry[1], carry[2] = int(addr[-1]), c.element, c.background


def collect(test: MarchTest, setup: Arrangement, words: Iterable[int], latch_words: Iterable[int] = ()) -> Events:
    """The events at ``words`` (plus latch loads before the reads of ``latch_words``) and every pause."""
    stream = stream_of(test, setup)
    interest = np.array(sorted(set(words)), dtype=np.int64)
    latch = np.array(sorted(set(latch_words)), dtype=np.int64)
    by_word: dict[int, list[Ev]] = {}
    pauses: list[Ev] = []
    carry = [-1, -1, -1, -1, -1]
    for item in stream:
        if isinstance(item, Pause):
            pauses.append(Ev(2 * item.at, "T", -1, 0, False, item.background, item.element, -1))
            carry[0] = -1
        elif len(item):
            _chunk_events(item, interest, latch, carry, by_word)
    return Events(by_word, pauses)


def fault_words(fault: FaultInstance) -> tuple[int, ...]:
    if isinstance(fault, DecoderFault):
        return fault.words
    return tuple(sorted({c.word for c in fault.cells}))


def _run(
    fault: FaultInstance, state: tuple[int, ...], events: list[Ev], m: dict[int, int], width: int
) -> list[FailRow]:
    bad, good, _ = power_up(fault, state, Arrangement(len(m), width))
    written = [False] * len(m)
    out: list[FailRow] = []
    for ev in events:
        if ev.kind == "T":
            bad.pause()
            continue
        w = m[ev.word]
        bad.chained = ev.chained
        if ev.kind == "w":
            bad.write(w, ev.data)
            good[w] = ev.data
            written[w] = True
        elif ev.kind == "r":
            got = bad.read(w)
            if written[w] and got != good[w]:
                out.append(FailRow(ev.background, ev.element, ev.op, ev.word, good[w], got))
        elif isinstance(bad, StuckOpenMemory):
            bad.latch = ev.data
    return out


def predict(fault: FaultInstance, events: list[Ev], width: int) -> list[list[FailRow]]:
    """The fail log of ``fault`` from each power-up state (in :func:`~memcheck.faults.replay.power_up_states`
    order); ``events`` are those of its words (:meth:`Events.of`)."""
    m = {w: i for i, w in enumerate(fault_words(fault))}
    local = renumber(fault, m)
    return [_run(local, s, events, m, width) for s in power_up_states(len(fault.power_up_labels()))]
