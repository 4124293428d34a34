"""Counting cover points over driven traces, column-wise with numpy.

:func:`measure` counts, for one trace, every behaviour :mod:`memcheck.cover.points` can list (it
counts them all; the listing decides which are shown). :class:`Counts` adds the counts of the traces
of a run in the order they were driven (:meth:`Counts.then`), and remembers resets between them
(:meth:`Counts.after_reset`). Nothing here knows about the simulator.

Per-port points count on the port's own clock edges (ticks where its operation is ``no_edge`` are
skipped); pair points count per tick, so they are only listed for ports that share their edges.
Distances and back-to-back pairs are counted inside one trace (a trace boundary breaks them).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from types import MappingProxyType

import numpy as np

from memcheck._limbs import ints_to_limbs, limbs_of
from memcheck.contract import Contract
from memcheck.cover.points import MEMORY
from memcheck.ops import Cycle, OpKind, Power

_R, _W, _NE = int(OpKind.READ), int(OpKind.WRITE), int(OpKind.NO_EDGE)
_KINDS = (("read", _R), ("write", _W))


@dataclass(frozen=True, eq=False)
class TraceArrays:
    """A driven trace of ``T`` ticks over ``P`` ports: ``kind`` (T, P) int8 (:class:`OpKind` codes),
    ``address`` (T, P) int64, ``lanes`` (T, P, lane limbs) uint64 (every lane where an operation gives
    none) and ``power`` (T,) int8 (:class:`Power` codes) or None (always on)."""

    kind: np.ndarray
    address: np.ndarray
    lanes: np.ndarray
    power: np.ndarray | None = None

    def __len__(self) -> int:
        return int(self.kind.shape[0])


def arrays_of_cycles(contract: Contract, cycles: Sequence[Cycle], power: Sequence[Power] = ()) -> TraceArrays:
    """:class:`TraceArrays` of a list of cycles (and their power states, if any)."""
    m = contract.memory
    t, p = len(cycles), len(contract.ports)
    ops = [op for c in cycles for op in c]
    kind = np.fromiter((op.kind for op in ops), dtype=np.int8, count=t * p).reshape(t, p)
    address = np.fromiter((op.address for op in ops), dtype=np.int64, count=t * p).reshape(t, p)
    ll = limbs_of(max(m.lanes, 1))
    full = m.all_lanes
    if ll == 1:
        values = (full if op.lanes is None else op.lanes for op in ops)
        lanes = np.fromiter(values, dtype=np.uint64, count=t * p).reshape(t, p, 1)
    else:
        lanes = ints_to_limbs([full if op.lanes is None else op.lanes for op in ops], ll).reshape(t, p, ll)
    pw = np.array([int(s) for s in power], dtype=np.int8) if power else None
    return TraceArrays(kind, address, lanes, pw)


def _zeros(contract: Contract) -> tuple[np.ndarray, np.ndarray]:
    p = len(contract.ports)
    return (
        np.zeros((p, contract.memory.address_bits, 2), dtype=np.int64),
        np.zeros((p, max(contract.memory.lanes, 1)), dtype=np.int64),
    )


@dataclass(frozen=True, eq=False)
class Counts:
    """Hit counts of every behaviour: ``hits`` per point key; ``address_bits`` (P, bits, 2) accesses with
    each address bit at 0 and at 1; ``lanes`` (P, lanes) writes enabling each lane. ``accessed``: some
    access was counted; ``reset_pending``: a reset came after accesses, and no access since."""

    hits: Mapping[str, int]
    address_bits: np.ndarray
    lanes: np.ndarray
    accessed: bool = False
    reset_pending: bool = False

    @classmethod
    def empty(cls, contract: Contract) -> Counts:
        bits, lanes = _zeros(contract)
        return cls(MappingProxyType({}), bits, lanes)

    def after_reset(self) -> Counts:
        """These counts, then a reset."""
        return Counts(self.hits, self.address_bits, self.lanes, self.accessed, self.reset_pending or self.accessed)

    def then(self, other: Counts) -> Counts:
        """These counts, then ``other``'s (a later trace)."""
        hits = dict(self.hits)
        for k, v in other.hits.items():
            hits[k] = hits.get(k, 0) + v
        pending = self.reset_pending
        if pending and other.accessed:
            key = f"{MEMORY}:reset.mid_run"
            hits[key] = hits.get(key, 0) + 1
            pending = False
        return Counts(
            MappingProxyType(hits),
            self.address_bits + other.address_bits,
            self.lanes + other.lanes,
            self.accessed or other.accessed,
            pending or other.reset_pending,
        )


def words_of(contract: Contract, address: np.ndarray) -> np.ndarray:
    """The word each address selects (``-1``: none, an address beyond the last word)."""
    m = contract.memory
    if m.out_of_range == "wrap":
        out: np.ndarray = address & (m.words - 1)
        return out
    return np.where((address >= 0) & (address < m.words), address, -1)


def _popcount(lanes: np.ndarray) -> np.ndarray:
    """Enabled lanes of each lane value (last axis: limbs)."""
    out: np.ndarray = np.bitwise_count(lanes).sum(axis=-1).astype(np.int64)
    return out


def _lane_bits(lanes: np.ndarray, n: int) -> np.ndarray:
    """(N, n) bool: lane k of each of N lane values."""
    if len(lanes) == 0:
        return np.zeros((0, n), dtype=bool)
    as_bytes = np.ascontiguousarray(lanes, dtype="<u8").view(np.uint8).reshape(len(lanes), -1)
    return np.unpackbits(as_bytes, axis=1, bitorder="little")[:, :n].astype(bool)


def _port_hits(contract: Contract, arr: TraceArrays, p: int, hits: dict[str, int]) -> tuple[np.ndarray, np.ndarray]:
    """Count one port's points on its own edges; returns its address-bit and lane counts."""
    m = contract.memory
    name = contract.ports[p].name
    edges = arr.kind[:, p] != _NE
    k = arr.kind[edges, p].astype(np.int64)
    a = arr.address[edges, p]
    for label, code in (("read", _R), ("write", _W), ("idle", int(OpKind.IDLE))):
        hits[f"{name}:op.{label}"] = int(np.count_nonzero(k == code))
    writes = k == _W
    nl = max(m.lanes, 1)
    pop = _popcount(arr.lanes[edges, p][writes])
    for label, sel in (
        ("all", pop == nl),
        ("none", pop == 0),
        ("single", pop == 1),
        ("partial", (pop >= 2) & (pop < nl)),
    ):
        hits[f"{name}:lanes.{label}"] = int(np.count_nonzero(sel))
    lane_counts = _lane_bits(arr.lanes[edges, p][writes], nl).sum(axis=0, dtype=np.int64)
    access = (k == _R) | writes
    aa = a[access]
    ones = ((aa[:, None] >> np.arange(m.address_bits, dtype=np.int64)) & 1).sum(axis=0, dtype=np.int64)
    bits = np.stack([len(aa) - ones, ones], axis=1)
    hits[f"{name}:address.first"] = int(np.count_nonzero(aa == 0))
    hits[f"{name}:address.last"] = int(np.count_nonzero(aa == m.words - 1))
    for label, code in _KINDS:
        hits[f"{name}:address.beyond.{label}"] = int(np.count_nonzero((k == code) & (a >= m.words)))
    hits[f"{name}:read_during_write"] = hits[f"{name}:op.write"]
    w = words_of(contract, a)
    for d in range(1, m.read_latency + 2):
        same = (k[:-d] == _W) & (k[d:] == _R) & (w[:-d] == w[d:]) & (w[d:] >= 0)
        hits[f"{name}:after_write.{d}"] = int(np.count_nonzero(same))
    for l1, c1 in _KINDS:
        for l2, c2 in _KINDS:
            hits[f"{name}:back_to_back.{l1}_{l2}"] = int(np.count_nonzero((k[:-1] == c1) & (k[1:] == c2)))
    if arr.power is not None and contract.power is not None:
        _wake_hits(arr.power[edges], k, contract.power.wake_cycles, name, hits)
    return bits, lane_counts


def _wake_hits(power: np.ndarray, k: np.ndarray, wake: int, name: str, hits: dict[str, int]) -> None:
    """Accesses on the first edge that accesses after a power-down episode (after ``wake`` wake-up edges)."""
    on = power == int(Power.ON)
    ends = np.flatnonzero(~on[:-1] & on[1:]) + 1
    first = ends + wake
    first = first[first < len(k)]
    # The wake-up edges must all sample the pins deasserted.
    ok = np.array([bool(on[e : f + 1].all()) for e, f in zip(ends, first, strict=False)], dtype=bool)
    first = first[ok] if len(ok) else first
    for label, code in _KINDS:
        hits[f"{name}:wake.{label}"] = int(np.count_nonzero(k[first] == code))


def _pair_hits(contract: Contract, arr: TraceArrays, hits: dict[str, int]) -> None:
    """Collisions and reads after another port's write, per tick (lockstep contracts only)."""
    ports = contract.ports
    m = contract.memory
    nl = max(m.lanes, 1)
    kind = arr.kind
    words = words_of(contract, arr.address)
    pop = _popcount(arr.lanes)
    writes = (kind == _W) & (pop > 0)
    full = writes & (pop == nl)
    for i, w in enumerate(ports):
        for j, r in enumerate(ports):
            if i == j:
                continue
            same = (words[:, i] == words[:, j]) & (words[:, i] >= 0)
            scope = f"{w.name}->{r.name}"
            rw = same & writes[:, i] & (kind[:, j] == _R)
            hits[f"{scope}:collision.read_write.full"] = int(np.count_nonzero(rw & full[:, i]))
            hits[f"{scope}:collision.read_write.partial"] = int(np.count_nonzero(rw & ~full[:, i]))
            for d in range(1, m.read_latency + 2):
                later = (
                    (kind[:-d, i] == _W) & (kind[d:, j] == _R) & (words[:-d, i] == words[d:, j]) & (words[d:, j] >= 0)
                )
                hits[f"{scope}:after_write.{d}"] = int(np.count_nonzero(later))
            if i < j:
                ww = same & writes[:, i] & writes[:, j]
                both = full[:, i] & full[:, j]
                hits[f"{w.name}+{r.name}:collision.write_write.full"] = int(np.count_nonzero(ww & both))
                hits[f"{w.name}+{r.name}:collision.write_write.partial"] = int(np.count_nonzero(ww & ~both))


def _episodes(power: np.ndarray, state: Power) -> int:
    inside = power == int(state)
    starts = inside & ~np.concatenate([[False], inside[:-1]])
    return int(np.count_nonzero(starts))


def measure(contract: Contract, arr: TraceArrays) -> Counts:
    """Hit counts of every behaviour in one driven trace."""
    bits, lanes = _zeros(contract)
    if len(arr) == 0:
        return Counts(MappingProxyType({}), bits, lanes)
    hits: dict[str, int] = {}
    for p in range(len(contract.ports)):
        bits[p], lanes[p] = _port_hits(contract, arr, p, hits)
    if contract.lockstep and len(contract.ports) > 1:
        _pair_hits(contract, arr, hits)
    if arr.power is not None:
        hits[f"{MEMORY}:power.sleep"] = _episodes(arr.power, Power.SLEEP)
        hits[f"{MEMORY}:power.shutdown"] = _episodes(arr.power, Power.SHUTDOWN)
    accessed = bool(((arr.kind == _R) | (arr.kind == _W)).any())
    return Counts(MappingProxyType(hits), bits, lanes, accessed)
