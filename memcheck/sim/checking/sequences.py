"""Fixed operation sequences: reset, canonical fill and flush, the smoke phase and the sweep phase.

Everything here is a pure function of the contract, so a replay can regenerate any of it.

The *canonical state* makes property examples independent of the order they run in: every
address is written once with a fixed, address-dependent pattern (:func:`fill_word`), and after each
example the addresses it wrote are written back with that pattern, followed by a fixed flush (one
write and one read of address 0, then quiet cycles). A wrapper whose state depends only on what was
written where, and on the last few operations, is then in the same state at the start of every
example, so a failure found after many examples is reproduced by the example alone.
"""

from __future__ import annotations

from collections.abc import Iterable, Iterator, Sequence
from dataclasses import dataclass

import numpy as np

from memcheck.contract import Contract
from memcheck.model_fast import READ, WRITE, Columns, limbs_of
from memcheck.ops import Cycle, OpKind, PortOp, Power
from memcheck.sim.checking.schedule import MarchSchedule, march_schedule, sweep_ports
from memcheck.sim.checking.ticks import lay, lay_columns
from memcheck.sim.options import SimOptions
from memcheck.strategies import drain_cycle

#: Memories up to this many addresses get the canonical fill; above it examples start from
#: whatever earlier examples left (documented in docs/check.md).
FILL_LIMIT = 1 << 16
#: Stream operations per chunk of a sweep (one segment each, at most a batch of the harness).
_SWEEP_CHUNK = 8192
_M64 = (1 << 64) - 1


@dataclass(frozen=True)
class Segment:
    """Cycles run as one unit from tick 0 of the tick timeline; ``reset`` marks the cycles with the
    reset pin asserted; ``power`` is empty (power pins deasserted) or one state per cycle."""

    cycles: tuple[Cycle, ...]
    reset: bool = False
    power: tuple[Power, ...] = ()

    def __len__(self) -> int:
        return len(self.cycles)


def quiet(contract: Contract) -> Cycle:
    """A cycle that issues nothing (ports without an enable read address 0)."""
    return drain_cycle(contract)


def reset_segment(contract: Contract) -> Segment | None:
    if contract.reset is None:
        return None
    return Segment(tuple(lay(contract, [quiet(contract)] * contract.reset.cycles)), reset=True)


def writer_index(contract: Contract) -> int | None:
    for i, p in enumerate(contract.ports):
        if p.can_write:
            return i
    return None


def reader_indices(contract: Contract) -> list[int]:
    return [i for i, p in enumerate(contract.ports) if p.can_read]


def _splitmix(x: int) -> int:
    x = (x + 0x9E3779B97F4A7C15) & _M64
    z = x
    z = ((z ^ (z >> 30)) * 0xBF58476D1CE4E5B9) & _M64
    z = ((z ^ (z >> 27)) * 0x94D049BB133111EB) & _M64
    return z ^ (z >> 31)


def fill_word(width: int, address: int) -> int:
    """The canonical fill pattern: pseudo-random per address, never all zeros or all ones."""
    mask = (1 << width) - 1
    x = address * 0x2545F4914F6CDD1D & _M64
    v = 0
    for limb in range((width + 63) // 64):
        x = _splitmix(x)
        v |= x << (64 * limb)
    v &= mask
    if v in (0, mask):
        v ^= 1
    return v


def mix64(x: np.ndarray) -> np.ndarray:
    """:func:`_splitmix` element-wise on a uint64 array (numpy arithmetic wraps like the masks there)."""
    x = x + np.uint64(0x9E3779B97F4A7C15)
    z = (x ^ (x >> np.uint64(30))) * np.uint64(0xBF58476D1CE4E5B9)
    z = (z ^ (z >> np.uint64(27))) * np.uint64(0x94D049BB133111EB)
    out: np.ndarray = z ^ (z >> np.uint64(31))
    return out


def fill_words(width: int, addresses: np.ndarray) -> np.ndarray:
    """:func:`fill_word` of many addresses at once: (n, limbs) uint64, least significant limb first."""
    limbs = limbs_of(width)
    n = len(addresses)
    x = addresses.astype(np.uint64) * np.uint64(0x2545F4914F6CDD1D)
    out = np.zeros((n, limbs), dtype=np.uint64)
    for limb in range(limbs):
        x = mix64(x)
        out[:, limb] = x
    top = width - 64 * (limbs - 1)
    if top < 64:
        out[:, -1] &= np.uint64((1 << top) - 1)
    full = np.uint64((1 << 64) - 1)
    ones = np.all(out[:, :-1] == full, axis=1) & (out[:, -1] == np.uint64((1 << top) - 1))
    zeros = ~out.any(axis=1)
    out[ones | zeros, 0] ^= np.uint64(1)
    return out


def restore_columns(contract: Contract, addresses: np.ndarray) -> Columns:
    """:func:`restore_cycles` as columns (``addresses`` sorted and distinct)."""
    w = writer_index(contract)
    if w is None:
        return Columns.quiet(contract, 0)
    addresses = np.array(restore_targets(contract, addresses.tolist()), dtype=np.int64)
    cols = Columns.quiet(contract, len(addresses))
    cols.kind[:, w] = WRITE
    cols.address[:, w] = addresses
    cols.data[:, w] = fill_words(contract.memory.width, addresses)
    return lay_columns(contract, cols)


def flush_columns(contract: Contract) -> Columns:
    """:func:`flush_cycles` as columns."""
    w = writer_index(contract)
    readers = reader_indices(contract)
    parts = []
    if w is not None and fill_limit(contract):
        parts.append(restore_columns(contract, np.zeros(1, dtype=np.int64)))
    if readers:
        r = Columns.quiet(contract, 1)
        r.kind[0, readers] = READ
        parts.append(r)
    parts.append(Columns.quiet(contract, contract.memory.read_latency + 1))
    return lay_columns(contract, Columns.concat(parts))


def restore_targets(contract: Contract, addresses: Iterable[int]) -> list[int]:
    """The addresses to write back after writes to ``addresses``, ascending: beyond ``words`` a write
    changes nothing ("ignore") or the word it aliases ("wrap"), which is the one written back."""
    m = contract.memory
    if m.out_of_range == "unchecked":
        return sorted(set(addresses))
    return sorted({w for w in (m.word_of(a) for a in addresses) if w is not None})


def fill_limit(contract: Contract) -> int:
    """Addresses the canonical fill covers (every address the address bits reach), or 0 if none."""
    n = 1 << contract.memory.address_bits
    return n if n <= FILL_LIMIT and writer_index(contract) is not None else 0


def _with(contract: Contract, ops: dict[int, PortOp]) -> Cycle:
    base = list(quiet(contract))
    for i, op in ops.items():
        base[i] = op
    return tuple(base)


def restore_cycles(contract: Contract, addresses: Iterable[int]) -> list[Cycle]:
    """Write the canonical pattern back to ``addresses`` (in ascending order)."""
    w = writer_index(contract)
    if w is None:
        return []
    width = contract.memory.width
    targets = restore_targets(contract, addresses)
    return lay(contract, [_with(contract, {w: PortOp(OpKind.WRITE, a, fill_word(width, a))}) for a in targets])


def fill_segments(contract: Contract, chunk: int) -> Iterator[Segment]:
    """The canonical fill of every address, in chunks of at most ``chunk`` cycles."""
    n = fill_limit(contract)
    for lo in range(0, n, chunk):
        yield Segment(tuple(restore_cycles(contract, range(lo, min(n, lo + chunk)))))


def flush_cycles(contract: Contract) -> list[Cycle]:
    """A fixed tail that leaves pipelines and last-operation registers in one state."""
    out: list[Cycle] = []
    w = writer_index(contract)
    if w is not None and fill_limit(contract):
        out.append(_with(contract, {w: PortOp(OpKind.WRITE, 0, fill_word(contract.memory.width, 0))}))
    readers = reader_indices(contract)
    if readers:
        out.append(_with(contract, {r: PortOp(OpKind.READ, 0) for r in readers}))
    out.extend(quiet(contract) for _ in range(contract.memory.read_latency + 1))
    return lay(contract, out)


def written_addresses(cycles: Iterable[Cycle]) -> set[int]:
    """Every address a cycle wrote (or tried to: lanes all zero and beyond ``words`` included)."""
    return {op.address for c in cycles for op in c if op.kind == OpKind.WRITE}


# -- smoke ---------------------------------------------------------------------------------


def _smoke_addresses(words: int) -> list[int]:
    return sorted({0, 1, words // 2, words - 1} & set(range(words)))


def _lane_list(contract: Contract) -> list[int]:
    """Lanes (or, with a bit mask, data bits) the smoke phase writes one at a time: at most 8."""
    n = contract.memory.lanes
    if n == 0:
        return []
    if n <= 8:
        return list(range(n))
    return sorted({round(i * (n - 1) / 7) for i in range(8)})


def smoke_cycles(contract: Contract) -> list[Cycle]:
    """Short and readable: reads after reset (when contents are promised), then per writing port and
    a few addresses, a full write, a read back, and one write and read per lane."""
    m = contract.memory
    readers = reader_indices(contract)
    writers = [i for i, p in enumerate(contract.ports) if p.can_write]
    addrs = _smoke_addresses(m.words)
    out: list[Cycle] = []

    def read_all(a: int) -> None:
        if readers:
            out.append(_with(contract, {r: PortOp(OpKind.READ, a) for r in readers}))

    if m.initial == "zero":
        for a in addrs:
            read_all(a)
    for w in writers:
        for a in addrs:
            d1 = fill_word(m.width, a + 0x5A5A)
            out.append(_with(contract, {w: PortOp(OpKind.WRITE, a, d1)}))
            read_all(a)
            for lane in _lane_list(contract):
                d2 = ~d1 & m.word_mask
                out.append(_with(contract, {w: PortOp(OpKind.WRITE, a, d2, 1 << lane)}))
                read_all(a)
                d1 = (d1 & ~m.lane_bits(1 << lane)) | (d2 & m.lane_bits(1 << lane))
    out.extend(quiet(contract) for _ in range(m.read_latency))
    return lay(contract, out)


# -- sweep ---------------------------------------------------------------------------------


@dataclass(frozen=True)
class SweepPlan:
    """A March test run through one writing and one reading port (its schedule, pauses included)."""

    algorithm: str
    backgrounds: str
    schedule: MarchSchedule

    @property
    def writer(self) -> int:
        return self.schedule.writer

    @property
    def reader(self) -> int:
        return self.schedule.reader

    def describe(self, contract: Contract) -> str:
        w, r = contract.ports[self.writer].name, contract.ports[self.reader].name
        via = f"port {w}" if w == r else f"write port {w}, read port {r}"
        return f"{self.algorithm} ({self.backgrounds} backgrounds) via {via}"

    def segments(self, chunk: int) -> Iterator[Segment]:
        """The schedule as cycles, in segments of at most ``chunk`` cycles (several clocks: each laid on
        the tick timeline, so longer)."""
        c = self.schedule.contract
        for piece in self.schedule.pieces():
            for lo in range(0, len(piece.cols), chunk):
                yield Segment(tuple(lay(c, piece.cols[lo : lo + chunk].to_cycles())))

    def cycles(self, count: int, chunk: int) -> list[Cycle]:
        """The first ``count`` cycles of :meth:`segments` (the prefix a replay reruns)."""
        out: list[Cycle] = []
        for s in self.segments(chunk):
            out.extend(s.cycles[: count - len(out)])
            if len(out) >= count:
                break
        return out


def sweep_plans(contract: Contract, options: SimOptions) -> list[SweepPlan]:
    """One plan per port that can read (the port rule of :func:`~memcheck.sim.checking.schedule.sweep_ports`)."""
    from memcheck.march import expand

    m = contract.memory
    plans = []
    bgs = options.backgrounds_for(m.width)
    for w, r in sweep_ports(contract):
        stream = expand(options.march, m.words, m.width, backgrounds=bgs, chunk_ops=_SWEEP_CHUNK)
        plans.append(SweepPlan(options.march, bgs, march_schedule(contract, stream, w, r, options.pause_cycles)))
    return plans


def concat(segments: Sequence[Segment]) -> list[Cycle]:
    return [c for s in segments for c in s.cycles]
