"""A March stream as clock cycles on a contract's ports: the one schedule, pauses included.

One operation per cycle, back to back, through one writing and one reading port (the same
readwrite port by default); every other port is quiet (:func:`memcheck.strategies.drain_cycle`). A
delay element (``Del``) becomes ``pause_cycles`` quiet cycles; ``read_latency`` quiet cycles at the
end let the last read's data come out. The check's sweep phase, ``memcheck march run`` (inside the
simulator) and the naming of a failing cycle all use this schedule.

Representation: the schedule keeps only the stream (:class:`memcheck.march.expand.MarchStream`,
itself lazy) and where its pauses fall, so memory grows with the number of delay elements, not
with operations; :meth:`MarchSchedule.pieces` turns it into numpy :class:`~memcheck.model_fast.Columns`
one stream chunk at a time, and any single cycle can be named without building the others. The
price: naming a cycle walks the pauses (a handful) and rebuilds one chunk.
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np
import numpy.typing as npt

from memcheck._limbs import limbs_to_int
from memcheck.contract import Contract
from memcheck.errors import BudgetError, InvalidOperation
from memcheck.march.expand import OP_WRITE, MarchStep, MarchStream, OpsChunk, Pause
from memcheck.march.notation import MarchElement
from memcheck.model_fast import READ, WRITE, Columns, limbs_of
from memcheck.ops import Cycle, PortOp, read, write
from memcheck.strategies import drain_cycle

IntArray = npt.NDArray[np.int64]

# -- which ports a March test runs through ------------------------------------------------------


def writer_for(contract: Contract, reader: int) -> int | None:
    """The port that writes for ``reader``: itself when it can write, else the first writing port."""
    ports = contract.ports
    if ports[reader].can_write:
        return reader
    return next((i for i, p in enumerate(ports) if p.can_write), None)


def sweep_ports(contract: Contract) -> list[tuple[int, int]]:
    """(writer, reader) for every port that reads (the check's sweep runs through each)."""
    pairs = []
    for r, p in enumerate(contract.ports):
        w = writer_for(contract, r) if p.can_read else None
        if w is not None:
            pairs.append((w, r))
    return pairs


def choose_ports(contract: Contract, spec: str | None = None) -> tuple[int, int]:
    """(writer index, reader index) for ``spec``: ``None`` picks the first port that reads and
    writes, else the first reading port with the first writing one (the rule of :func:`writer_for`);
    ``"NAME"`` must read and write; ``"W,R"`` writes through W and reads through R. Raises
    InvalidOperation naming the problem."""
    ports = contract.ports
    names = ", ".join(f"{p.name} ({p.role})" for p in ports)
    if spec is None or not spec.strip():
        pairs = sweep_ports(contract)
        if not pairs:
            lack = "writes" if not any(p.can_write for p in ports) else "reads"
            raise InvalidOperation(
                f"a March test needs a port that writes and one that reads, but no port "
                f"of this contract {lack}; its ports are: {names}."
            )
        return next(((w, r) for w, r in pairs if w == r), pairs[0])
    parts = [s.strip() for s in spec.split(",")]
    if len(parts) > 2 or not all(parts):
        raise InvalidOperation(f"--port takes NAME or WRITER,READER, not {spec!r} (ports: {names}).")
    found = [_port_index(contract, name, names) for name in parts]
    w, r = found[0], found[-1]
    if len(found) == 1 and not (ports[w].can_read and ports[w].can_write):
        other = "write" if ports[w].can_read else "read"
        raise InvalidOperation(
            f"port {ports[w].name!r} is a {ports[w].role} port and cannot {other}, but a March test both writes "
            f"and reads; name a writing and a reading port as --port WRITER,READER (ports: {names})."
        )
    for i, can, what in ((w, ports[w].can_write, "write"), (r, ports[r].can_read, "read")):
        if not can:
            raise InvalidOperation(
                f"port {ports[i].name!r} is a {ports[i].role} port and cannot {what} (ports: {names})."
            )
    return w, r


def _port_index(contract: Contract, name: str, names: str) -> int:
    for i, p in enumerate(contract.ports):
        if p.name == name:
            return i
    raise InvalidOperation(f"the contract has no port {name!r}; its ports are: {names}.")


# -- the schedule -------------------------------------------------------------------------------


@dataclass(frozen=True)
class PauseSpan:
    """The quiet cycles ``start`` .. ``stop - 1`` that stand for one delay element."""

    start: int
    stop: int
    pause: Pause


class Piece(NamedTuple):
    """Consecutive cycles of a schedule, and the reads among them the March expectation judges:
    their due cycles (issue + read latency, counted from the schedule's start), expected words
    (limbs) and stream operation indices. A read is judged only once the run wrote its word."""

    cols: Columns
    due: IntArray
    expected: npt.NDArray[np.uint64]
    op_index: IntArray


def march_columns(contract: Contract, chunk: OpsChunk, writer: int, reader: int) -> Columns:
    """One stream chunk as cycles, one operation each: the write on ``writer``, the read on
    ``reader``, every other port quiet; numpy only."""
    cols = Columns.quiet(contract, len(chunk))
    w = np.asarray(chunk.op) == OP_WRITE
    r = ~w
    cols.kind[w, writer] = WRITE
    cols.address[w, writer] = chunk.address[w]
    cols.data[w, writer] = chunk.data[w]
    cols.kind[r, reader] = READ
    cols.address[r, reader] = chunk.address[r]
    return cols


@dataclass(frozen=True, eq=False)
class MarchSchedule:
    """A March stream laid out as clock cycles for one contract (see the module docstring)."""

    contract: Contract
    stream: MarchStream
    writer: int
    reader: int
    pause_cycles: int
    pauses: tuple[PauseSpan, ...]

    @property
    def operations(self) -> int:
        return self.stream.total_ops

    @property
    def total_cycles(self) -> int:
        return self.operations + self.pause_cycles * len(self.pauses) + self.contract.memory.read_latency

    def pieces(self, written: npt.NDArray[np.bool_] | None = None) -> Iterator[Piece]:
        """The schedule piece by piece (one per stream chunk or pause, then the drain cycles).

        ``written`` (per word; updated as writes go by) carries which words the run wrote before."""
        c = self.contract
        lat = c.memory.read_latency
        seen = np.zeros(c.memory.words, dtype=bool) if written is None else written
        none_i = np.zeros(0, dtype=np.int64)
        none_v = np.zeros((0, limbs_of(c.memory.width)), dtype=np.uint64)
        cycle = 0
        for item in self.stream:
            if isinstance(item, Pause):
                if self.pause_cycles:
                    yield Piece(Columns.quiet(c, self.pause_cycles), none_i, none_v, none_i)
                    cycle += self.pause_cycles
                continue
            rr = _judged_reads(item, seen)
            yield Piece(
                march_columns(c, item, self.writer, self.reader),
                cycle + rr + lat,
                np.asarray(item.expected)[rr],
                item.start + rr,
            )
            cycle += len(item)
        if lat:
            yield Piece(Columns.quiet(c, lat), none_i, none_v, none_i)

    def columns(self, count: int | None = None) -> Columns:
        """The first ``count`` cycles (all by default) as columns."""
        parts: list[Columns] = []
        have = 0
        for piece in self.pieces():
            if count is not None and have >= count:
                break
            parts.append(piece.cols)
            have += len(piece.cols)
        cols = Columns.concat(parts) if parts else Columns.quiet(self.contract, 0)
        return cols if count is None else cols[:count]

    def cycles(self, count: int | None = None) -> list[Cycle]:
        """The first ``count`` cycles (all by default) as Python objects (for short runs and tests)."""
        return self.columns(count).to_cycles()

    def judged_reads(self) -> tuple[IntArray, npt.NDArray[np.uint64], IntArray]:
        """(due cycle, expected limbs, operation index) of every read the March expectation judges."""
        pieces = list(self.pieces())
        return (
            np.concatenate([p.due for p in pieces]),
            np.concatenate([p.expected for p in pieces]),
            np.concatenate([p.op_index for p in pieces]),
        )

    def op_at(self, cycle: int) -> int:
        """The operation cycle ``cycle`` issues (-1: a quiet cycle or out of range)."""
        if not 0 <= cycle < self.total_cycles or self.pause_at(cycle) is not None:
            return -1
        op = cycle - self.pause_cycles * sum(1 for p in self.pauses if p.stop <= cycle)
        return op if op < self.operations else -1

    def cycle_at(self, cycle: int) -> Cycle:
        """What every port does in cycle ``cycle``."""
        quiet = list(drain_cycle(self.contract))
        op = self.op_at(cycle)
        if op >= 0:
            s = self.step(op)
            quiet[self.writer if s.expected is None else self.reader] = s.op
        return tuple(quiet)

    def pause_at(self, cycle: int) -> PauseSpan | None:
        return next((p for p in self.pauses if p.start <= cycle < p.stop), None)

    def last_op_before(self, cycle: int) -> int | None:
        """The last operation issued at or before ``cycle`` (None before the first)."""
        quiet = sum(min(max(0, cycle + 1 - p.start), p.stop - p.start) for p in self.pauses)
        k = min(cycle + 1 - quiet, self.operations) - 1
        return k if k >= 0 else None

    def step(self, index: int) -> MarchStep:
        """Stream operation ``index`` as a MarchStep (for reports)."""
        st = self.stream
        if not 0 <= index < st.total_ops:
            raise IndexError(index)
        b = index // st.ops_per_background
        els = st.test.elements
        e = max(i for i, el in enumerate(els) if isinstance(el, MarchElement) and st.element_start(b, i) <= index)
        el = els[e]
        assert isinstance(el, MarchElement)
        for ch in st._element_chunks(b, e, el):
            if ch.start <= index < ch.start + len(ch):
                i = index - ch.start
                addr = int(ch.address[i])
                if ch.op[i] == OP_WRITE:
                    op, expected = write(addr, limbs_to_int(ch.data[i])), None
                else:
                    op, expected = read(addr), limbs_to_int(ch.expected[i])
                return MarchStep(index, ch.element, int(ch.step[i]), ch.background, op, expected)
        raise IndexError(index)  # pragma: no cover - every index falls in a chunk


def _judged_reads(item: OpsChunk, written: npt.NDArray[np.bool_]) -> IntArray:
    """Positions in ``item`` of the reads whose word the run wrote before (``written`` is updated)."""
    n = len(item)
    op = np.asarray(item.op)
    addr = np.asarray(item.address)
    pos = np.arange(n, dtype=np.int64)
    w = op == OP_WRITE
    # Written in an earlier chunk, or earlier in this one (the first write of each address in the
    # chunk, by sorting: no per-word array per chunk).
    wa, wi = np.unique(addr[w], return_index=True)
    first_w = pos[w][wi]
    r = np.flatnonzero(~w)
    at = np.minimum(np.searchsorted(wa, addr[r]), max(len(wa) - 1, 0))
    earlier = (wa[at] == addr[r]) & (first_w[at] < r) if len(wa) else np.zeros(len(r), dtype=bool)
    judged = written[addr[r]] | earlier
    written[addr[w]] = True
    out: IntArray = r[judged]
    return out


def march_schedule(
    contract: Contract, stream: MarchStream, writer: int, reader: int, pause_cycles: int
) -> MarchSchedule:
    """Lay ``stream`` out on ``contract``'s ports: writes through ``writer``, reads through ``reader``."""
    m = contract.memory
    if stream.words != m.words or stream.width != m.width:
        raise BudgetError(
            f"the stream is for {stream.words} x {stream.width} but the contract's memory is {m.words} x {m.width}"
        )
    pauses = []
    quiet = 0
    for b in range(len(stream.backgrounds)):
        for e, el in enumerate(stream.test.elements):
            if not isinstance(el, MarchElement):
                at = stream.element_start(b, e) + quiet
                pauses.append(PauseSpan(at, at + pause_cycles, Pause(e, b, el, stream.element_start(b, e))))
                quiet += pause_cycles
    return MarchSchedule(contract, stream, writer, reader, pause_cycles, tuple(pauses))


def quiet_op(contract: Contract, port: int) -> PortOp:
    """What ``port`` does in a quiet cycle."""
    return drain_cycle(contract)[port]
