"""The fast engine's shared pieces: the interleaved operation stream of each cell relation, the
resolved plan of a test, and the per-row results of a run (see :mod:`memcheck.faults.fast`)."""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
import numpy.typing as npt

from memcheck.faults.geometry import Arrangement, Resolved, Slot, check_consistent, schedule
from memcheck.faults.instances import DecoderKind, Detection, OpRef, Wired
from memcheck.march.notation import MarchTest

IntArray = npt.NDArray[np.int64]
BoolArray = npt.NDArray[np.bool_]

NEVER = -2  # step index meaning "did not happen"; -1 is the power-up moment

CELL_RELATIONS = ("single", "same", "AV", "VA")
AF_RELATIONS = ("X", "XY", "YX")

# (kind, wired) of every decoder-fault variant, in a fixed order
AF_VARIANTS: tuple[tuple[DecoderKind, Wired | None], ...] = (
    ("no-cell", None),
    ("no-cell-shared", "and"),
    ("no-cell-shared", "or"),
    ("wrong-cell", None),
    ("extra-cell", "and"),
    ("extra-cell", "or"),
)


# ---------------------------------------------------------------------------------------------------
# Streams
# ---------------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Stream:
    """The operations on a fault's cells in time order. ``sides[t]`` names the cells operated on:
    ``V``/``A`` (victim/aggressor word), ``VA`` (one word holding both), ``X``/``Y`` (the two words
    of a decoder fault) or ``T`` (a pause). ``written_before[t]`` says whether that word has been
    written before step ``t`` (only then is a read compared); ``chained[t]`` whether step ``t``
    follows step ``t - 1`` back to back on the same word within one element pass (two operations
    in a row, for dynamic faults)."""

    sides: tuple[str, ...]
    kinds: tuple[str, ...]
    values: tuple[int, ...]
    slots: tuple[Slot, ...]
    written_before: tuple[bool, ...]
    chained: tuple[bool, ...]

    def __len__(self) -> int:
        return len(self.sides)

    def ref(self, t: int, words: dict[str, int]) -> OpRef | None:
        """The place of step ``t`` for a fault whose side words are ``words`` (e.g. {"V": 9, "A": 4})."""
        if t == NEVER:
            return None
        if t < 0:
            return OpRef.power_up()
        s = self.slots[t]
        if self.sides[t] == "T":
            return OpRef(s.background, s.element, -1, -1)
        return OpRef(s.background, s.element, s.op, words[self.sides[t][0]])


def build_stream(slots: Sequence[Slot], relation: str) -> Stream:
    """The interleaved stream of one relation (see the module docstring)."""
    steps: list[tuple[str, Slot]] = []
    if relation in ("single", "same", "X"):
        side = {"single": "V", "same": "VA", "X": "X"}[relation]
        for s in slots:
            if s.kind == "T":
                if relation == "single":
                    steps.append(("T", s))
            else:
                steps.append((side, s))
    else:
        first_up, second_up = relation[0], relation[1]
        i = 0
        while i < len(slots):
            s = slots[i]
            if s.kind == "T":
                i += 1
                continue
            j = i
            while j < len(slots) and (slots[j].background, slots[j].element) == (s.background, s.element):
                j += 1
            element = slots[i:j]
            first, second = (first_up, second_up) if s.direction == "up" else (second_up, first_up)
            steps.extend((first, x) for x in element)
            steps.extend((second, x) for x in element)
            i = j
    written: set[str] = set()
    before: list[bool] = []
    for side, s in steps:
        before.append(any(c in written for c in side) and side != "T")
        if s.kind == "w":
            written.update(side)
    chained = [
        t > 0
        and steps[t][0] == steps[t - 1][0] != "T"
        and (steps[t][1].background, steps[t][1].element) == (steps[t - 1][1].background, steps[t - 1][1].element)
        for t in range(len(steps))
    ]
    return Stream(
        tuple(sd for sd, _ in steps),
        tuple(s.kind for _, s in steps),
        tuple(s.value for _, s in steps),
        tuple(s for _, s in steps),
        tuple(before),
        tuple(chained),
    )


@dataclass(eq=False)
class Plan:
    """A test resolved over one setup, with its streams built on demand."""

    test: MarchTest
    setup: Arrangement
    rs: Resolved
    slots: tuple[Slot, ...]
    _streams: dict[str, Stream] = field(default_factory=dict)

    @classmethod
    def build(cls, test: MarchTest, setup: Arrangement) -> Plan:
        rs = setup.resolve()
        check_consistent(test, rs.nbg)
        return cls(test, setup, rs, schedule(test, rs.nbg, setup.any_order))

    def stream(self, relation: str) -> Stream:
        if relation not in self._streams:
            self._streams[relation] = build_stream(self.slots, relation)
        return self._streams[relation]


@dataclass(frozen=True)
class ClassRun:
    """Per (class, model, power-up state): detection and the first excitation/masking step."""

    stream: Stream
    detected: BoolArray  # (C, M, S)
    excited: IntArray
    masked: IntArray

    def verdicts(self) -> npt.NDArray[np.int8]:
        """(C, M): 0 detected, 1 partial, 2 escaped."""
        all_d = self.detected.all(axis=2)
        any_d = self.detected.any(axis=2)
        return np.where(all_d, 0, np.where(any_d, 1, 2)).astype(np.int8)

    def escape_state(self) -> IntArray:
        """(C, M): the first power-up state that escapes (0 when none does)."""
        out: IntArray = np.argmin(self.detected, axis=2).astype(np.int64)
        return out


def _track(t: int, diff: BoolArray, exc: IntArray, mask: IntArray) -> None:
    exc[diff & (exc == NEVER)] = t
    mask[~diff & (exc != NEVER) & (mask == NEVER)] = t


_DETECTION_NAMES: tuple[Detection, ...] = ("detected", "partial", "escaped")
