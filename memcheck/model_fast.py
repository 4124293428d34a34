"""Vectorised reference model: the expected read data of a whole trace in a few numpy passes.

:class:`memcheck.model.Model` steps one cycle at a time in Python (tens of microseconds a cycle);
checking traces of thousands of cycles per example needs the same answers at numpy speed. This
module computes them for a whole trace at once and agrees with ``Model`` bit for bit, known masks
included (``tests/test_model_fast.py`` checks that over random contracts and traces).

A trace is held as :class:`Columns`: per cycle and port, the operation kind, address, data limbs
and lane enables. The writes of each (address, cycle) are merged into one *update* (bits made
unknown, bits made known, their data: lanes, bit masks and write collisions included); a segmented
prefix scan composes each address's updates in cycle order, so each read finds the contents it sees
with one binary search, whatever the number of lanes. Read latency and ``idle_read_data`` are a
shift and a forward fill of each port's results.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Literal

import numpy as np

from memcheck._limbs import bits_to_limbs
from memcheck._limbs import int_limbs as int_limbs
from memcheck._limbs import ints_to_limbs as ints_to_limbs
from memcheck._limbs import limbs_of as limbs_of
from memcheck._limbs import limbs_to_ints as limbs_to_ints
from memcheck.contract import Contract
from memcheck.errors import InvalidOperation
from memcheck.model import Model
from memcheck.ops import Cycle, Expected, OpKind, PortOp

__all__ = [
    "IDLE",
    "READ",
    "WRITE",
    "Columns",
    "Contents",
    "FastModelUnsupported",
    "expected",
    "expected_rows",
    "mismatch",
    "require_supported",
    "unsupported",
    "validate",
]


class FastModelUnsupported(InvalidOperation):
    """The contract uses semantics this vectorised model does not implement; use ``Model``."""


def unsupported(contract: Contract) -> str | None:
    """Why this module cannot model ``contract`` (None when it can).

    Two things are left to the cycle-by-cycle :class:`memcheck.model.Model`: ports on clocks with
    different edges (each port steps on its own edges and the collision window looks across clocks,
    which a column-per-cycle layout does not express), and power pins (power episodes cut read
    pipelines and contents mid-trace). Callers check this first and fall back to ``Model``.
    """
    if not contract.lockstep:
        return "its ports step on clocks with different edges"
    if contract.power is not None:
        return "it has [power] pins"
    return None


def require_supported(contract: Contract) -> None:
    """Raise :class:`FastModelUnsupported` (with the reason) unless :func:`unsupported` is None."""
    reason = unsupported(contract)
    if reason is not None:
        raise FastModelUnsupported(f"the vectorised model cannot check this contract: {reason}")


#: Operation kinds in :attr:`Columns.kind` (the values of :class:`memcheck.ops.OpKind`).
IDLE, READ, WRITE = OpKind.IDLE, OpKind.READ, OpKind.WRITE
_KIND_OF = tuple(OpKind)  # code -> OpKind, quicker than calling OpKind(code) per operation

#: Stored contents at the start of a trace: all unknown (``Model.forget``) or all zero (``initial =
#: "zero"`` after reset, or at power-up of a contract without reset).
Contents = Literal["unknown", "zero"]

_U64 = np.uint64


@dataclass(frozen=True, eq=False)
class Columns:
    """A trace of ``T`` cycles over ``P`` ports, column-wise.

    ``kind`` (T, P) int8: IDLE, READ or WRITE. ``address`` (T, P) int64. ``data`` (T, P, limbs)
    uint64, little-endian limbs of the width. ``lanes`` (T, P, lane limbs) uint64: the lane-enable
    value on the pins (all lanes where the operation gives none); ``lanes_given`` (T, P) bool is False
    where the operation gives none (``PortOp.lanes is None``).
    """

    kind: np.ndarray
    address: np.ndarray
    data: np.ndarray
    lanes: np.ndarray
    lanes_given: np.ndarray

    def __len__(self) -> int:
        return int(self.kind.shape[0])

    @property
    def ports(self) -> int:
        return int(self.kind.shape[1])

    @classmethod
    def empty(cls, contract: Contract, cycles: int = 0) -> Columns:
        """``cycles`` all-idle cycles with clean pins (use :meth:`quiet` for a contract-legal one)."""
        m = contract.memory
        p = len(contract.ports)
        ll = limbs_of(max(m.lanes, 1))
        lanes = np.zeros((cycles, p, ll), dtype=_U64)
        lanes[:] = int_limbs(m.all_lanes, ll)
        return cls(
            np.zeros((cycles, p), dtype=np.int8),
            np.zeros((cycles, p), dtype=np.int64),
            np.zeros((cycles, p, limbs_of(m.width)), dtype=_U64),
            lanes,
            np.zeros((cycles, p), dtype=bool),
        )

    @classmethod
    def quiet(cls, contract: Contract, cycles: int) -> Columns:
        """Cycles that issue nothing where possible: idle, or a read of address 0 without an enable."""
        out = cls.empty(contract, cycles)
        for i, port in enumerate(contract.ports):
            if not port.can_idle:
                out.kind[:, i] = READ
        return out

    @classmethod
    def from_cycles(cls, contract: Contract, cycles: Sequence[Cycle]) -> Columns:
        """Column form of ``cycles``; values that cannot be held (negative, too wide) raise the
        :class:`InvalidOperation` that ``Model.validate`` gives for them. Columns hold any contract's
        traces (``NO_EDGE`` included); :func:`expected` is the part limited to :func:`unsupported`."""
        m = contract.memory
        t = len(cycles)
        p = len(contract.ports)
        if any(len(c) != p for c in cycles):
            raise InvalidOperation(f"a cycle needs one operation per port ({p})")
        if t == 0:
            return cls.empty(contract, 0)
        ops = [op for c in cycles for op in c]
        if any(
            op.address < 0
            or op.address >> 62
            or op.data < 0
            or op.data >> m.width
            or (op.lanes is not None and not 0 <= op.lanes <= m.all_lanes)
            for op in ops
        ):
            model = Model(contract)
            for c in cycles:
                model.validate(c)
        kind = np.fromiter((op.kind for op in ops), dtype=np.int8, count=t * p).reshape(t, p)
        address = np.fromiter((op.address for op in ops), dtype=np.int64, count=t * p).reshape(t, p)
        data = ints_to_limbs([op.data for op in ops], limbs_of(m.width)).reshape(t, p, -1)
        lanes = ints_to_limbs(
            [m.all_lanes if op.lanes is None else op.lanes for op in ops], limbs_of(max(m.lanes, 1))
        ).reshape(t, p, -1)
        given = np.fromiter((op.lanes is not None for op in ops), dtype=bool, count=t * p).reshape(t, p)
        return cls(kind, address, data, lanes, given)

    def to_cycles(self) -> list[Cycle]:
        t, p = self.kind.shape
        if t == 0:
            return []
        kinds = self.kind.ravel().tolist()
        addrs = self.address.ravel().tolist()
        data = limbs_to_ints(self.data.reshape(t * p, -1))
        lanes = limbs_to_ints(self.lanes.reshape(t * p, -1))
        given = self.lanes_given.ravel().tolist()
        ops = [
            PortOp(_KIND_OF[k], a, d, ln if g else None)
            for k, a, d, ln, g in zip(kinds, addrs, data, lanes, given, strict=True)
        ]
        return [tuple(ops[i * p : (i + 1) * p]) for i in range(t)]

    def __getitem__(self, index: slice) -> Columns:
        return Columns(
            self.kind[index], self.address[index], self.data[index], self.lanes[index], self.lanes_given[index]
        )

    @staticmethod
    def concat(parts: Sequence[Columns]) -> Columns:
        if not parts:
            raise ValueError("nothing to concatenate")
        return Columns(
            *(
                np.concatenate([getattr(c, f) for c in parts])
                for f in ("kind", "address", "data", "lanes", "lanes_given")
            )
        )

    def operation_count(self) -> int:
        """Non-idle port operations (as :meth:`memcheck.ops.Trace.operation_count`)."""
        return int(np.count_nonzero(self.kind))

    def written_addresses(self) -> np.ndarray:
        """Sorted distinct addresses of every write (in range or not, any lanes)."""
        return np.unique(self.address[self.kind == WRITE])


def validate(contract: Contract, cols: Columns) -> None:
    """Raise :class:`InvalidOperation` for the first cycle a port cannot perform (as ``Model.validate``)."""
    m = contract.memory
    bad = np.zeros(len(cols), dtype=bool)
    limit = m.address_limit
    for i, port in enumerate(contract.ports):
        k = cols.kind[:, i]
        bad |= (k < 0) | (k > WRITE)
        if not port.can_read:
            bad |= k == READ
        if not port.can_write:
            bad |= k == WRITE
        if not port.can_idle:
            bad |= k == IDLE
        if port.any_lane_write:
            bad |= (k == WRITE) & cols.lanes_given[:, i] & ~cols.lanes[:, i].any(axis=1)
        bad |= (cols.address[:, i] < 0) | (cols.address[:, i] >= limit)
    top = m.width - 64 * (limbs_of(m.width) - 1)
    if top < 64:
        bad |= (cols.data[:, :, -1] >> _U64(top)).any(axis=1)
    ln = max(m.lanes, 1)
    ltop = ln - 64 * (limbs_of(ln) - 1)
    if ltop < 64:
        bad |= (cols.lanes[:, :, -1] >> _U64(ltop)).any(axis=1)
    if bad.any():
        at = int(np.argmax(bad))
        try:
            Model(contract).validate(cols[at : at + 1].to_cycles()[0])
        except InvalidOperation as exc:
            raise InvalidOperation(f"cycle {at}: {exc}") from None
        raise InvalidOperation(f"cycle {at}: an operation does not fit the contract")  # pragma: no cover


def _write_bits(contract: Contract, lanes: np.ndarray) -> np.ndarray:
    """(n, lane limbs) lane-enable values to (n, limbs) masks of the data bits they write."""
    m = contract.memory
    limbs = limbs_of(m.width)
    n = lanes.shape[0]
    if m.lanes == 0:
        on = (lanes[:, 0] & _U64(1)).astype(bool)
        return np.where(on[:, None], int_limbs(m.word_mask, limbs), _U64(0))
    raw = np.ascontiguousarray(lanes, dtype="<u8").view(np.uint8).reshape(n, 8 * lanes.shape[1])
    per_lane = np.unpackbits(raw, axis=1, bitorder="little")[:, : m.lanes]
    bits = np.repeat(per_lane, np.array(m.lane_widths), axis=1) if m.bits_per_lane > 1 else per_lane
    return bits_to_limbs(bits[:, : m.width], limbs)


# Read results before the pipeline: what each port's operation produces at its edge.
_RESULT, _NONE, _HOLD = 0, 1, 2


def _merged_writes(contract: Contract, cols: Columns, span: np.int64) -> tuple[np.ndarray, ...]:
    """The writes of each (address, cycle), merged into one *update* and sorted by key = address * span
    + cycle. An update ``(touch, sets, data)`` makes the bits in ``touch`` unknown, then the bits in
    ``sets`` known with ``data`` (``data`` within ``sets`` within ``touch``); write collisions follow
    ``write_collision``."""
    m = contract.memory
    kind = cols.kind
    addr, in_range = _words(contract, cols.address)
    wt, wp = np.nonzero((kind == WRITE) & in_range)
    wkey = addr[wt, wp] * span + wt
    order = np.lexsort((wp, wkey))
    wt, wp, wkey = wt[order], wp[order], wkey[order]
    bits = _write_bits(contract, cols.lanes[wt, wp])
    # A write with no lane enabled changes nothing and collides with nothing.
    live = bits.any(axis=1)
    wt, wp, wkey, bits = wt[live], wp[live], wkey[live], bits[live]
    data = cols.data[wt, wp] & bits
    if not len(wkey):
        return wkey, bits, bits, data
    starts = np.flatnonzero(np.r_[True, wkey[1:] != wkey[:-1]])
    counts = np.diff(np.r_[starts, len(wkey)])
    key = wkey[starts]
    touch = np.bitwise_or.reduceat(bits, starts, axis=0)
    if counts.max() == 1:
        return key, touch, touch.copy(), data
    if m.write_collision == "unknown":
        single = (counts == 1)[:, None]
        sets = np.where(single, touch, _U64(0))
        return key, touch, sets, np.where(single, data[starts], _U64(0))
    # "first": on every bit, the earliest-listed port among the colliding writes wins (events are in
    # port order within a key): apply the group's writes from its last member back to its first.
    merged = np.zeros_like(touch)
    for j in range(int(counts.max()) - 1, -1, -1):
        g = np.flatnonzero(counts > j)
        i = starts[g] + j
        merged[g] = (merged[g] & ~bits[i]) | data[i]
    return key, touch, touch.copy(), merged


def _words(contract: Contract, address: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The word each address selects (``out_of_range = "wrap"`` aliases) and where one is selected."""
    m = contract.memory
    if m.out_of_range == "wrap":
        return address & np.int64(m.words - 1), np.ones(address.shape, dtype=bool)
    return address, address < m.words


def _scan(
    key: np.ndarray, span: np.int64, touch: np.ndarray, sets: np.ndarray, data: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Compose each address's updates in cycle order (a segmented prefix scan, log steps): element i
    becomes the single update equal to all of its address's updates up to and including i."""
    touch, sets, data = touch.copy(), sets.copy(), data.copy()
    address = key // span
    n = len(key)
    runs = np.diff(np.r_[np.flatnonzero(np.r_[True, address[1:] != address[:-1]]), n]) if n else np.zeros(0)
    longest = int(runs.max()) if n else 0
    k = 1
    while k < longest:
        same = (address[k:] == address[:-k])[:, None]
        t_hi = touch[k:]
        # earlier (i - k) then later (i): later bits override
        new_t = touch[:-k] | t_hi
        new_s = (sets[:-k] & ~t_hi) | sets[k:]
        new_d = (data[:-k] & ~t_hi) | data[k:]
        touch[k:] = np.where(same, new_t, t_hi)
        sets[k:] = np.where(same, new_s, sets[k:])
        data[k:] = np.where(same, new_d, data[k:])
        k *= 2
    return touch, sets, data


def expected(
    contract: Contract, cols: Columns, contents: Contents = "unknown", *, check: bool = True
) -> tuple[np.ndarray, np.ndarray]:
    """Expected read data of every cycle and port: ``(value, known)``, each (T, P, limbs) uint64.

    Matches ``Model`` started from ``forget()`` (``contents="unknown"``), or from a state whose
    contents are all known zero and whose read pipelines are unknown (``"zero"``: ``reset()`` with
    ``initial = "zero"``). Ports without read data get nothing known.
    """
    require_supported(contract)
    if check:
        validate(contract, cols)
    m = contract.memory
    t_len, p_len = cols.kind.shape
    limbs = limbs_of(m.width)
    value = np.zeros((t_len, p_len, limbs), dtype=_U64)
    known = np.zeros((t_len, p_len, limbs), dtype=_U64)
    if t_len == 0:
        return value, known
    kind = cols.kind
    addr, in_range = _words(contract, cols.address)
    span = np.int64(t_len + 1)
    ukey, touch, sets, data = _merged_writes(contract, cols, span)
    # What a single update at each key does, and the composition of all updates up to it.
    at_touch = touch
    c_touch, c_sets, c_data = _scan(ukey, span, touch, sets, data)

    # Read results: entry kind per cycle and port, and the queries into the contents.
    entry = np.full((t_len, p_len), _NONE, dtype=np.int8)
    q_t: list[np.ndarray] = []
    q_p: list[np.ndarray] = []
    q_after: list[np.ndarray] = []
    q_minus: list[np.ndarray] = []
    rdw = m.read_during_write
    for i, port in enumerate(contract.ports):
        if not port.can_read:
            continue
        k = kind[:, i]
        reads, writes = k == READ, k == WRITE
        entry[reads, i] = _RESULT
        entry[writes, i] = _HOLD if rdw == "keep" else _RESULT
        # Reads: before the edge's writes, after them ("new"), or before with the bits another
        # port drives this edge unknown (collision "unknown"); the same when nobody else writes.
        rin = np.flatnonzero(reads & in_range[:, i])
        q_t.append(rin)
        q_p.append(np.full(len(rin), i))
        q_after.append(np.full(len(rin), m.collision == "new"))
        q_minus.append(np.full(len(rin), m.collision == "unknown"))
        if rdw in ("old", "new"):  # a readwrite port that writes shows the word before or after
            win = np.flatnonzero(writes & in_range[:, i])
            q_t.append(win)
            q_p.append(np.full(len(win), i))
            q_after.append(np.full(len(win), rdw == "new"))
            q_minus.append(np.zeros(len(win), dtype=bool))

    rv = np.zeros((t_len, p_len, limbs), dtype=_U64)
    rk = np.zeros((t_len, p_len, limbs), dtype=_U64)
    qt = np.concatenate(q_t) if q_t else np.zeros(0, dtype=np.int64)
    if len(qt):
        qp = np.concatenate(q_p)
        qa = np.concatenate(q_after)
        qm = np.concatenate(q_minus)
        qaddr = addr[qt, qp]
        qkey = qaddr * span + qt
        lo = np.searchsorted(ukey, qkey, side="left")
        hi = np.searchsorted(ukey, qkey, side="right")
        idx = np.where(qa, hi, lo) - 1
        safe = np.maximum(idx, 0)
        found = (
            ((idx >= 0) & (ukey[safe] // span == qaddr))[:, None] if len(ukey) else np.zeros((len(qt), 1), dtype=bool)
        )
        base = int_limbs(m.word_mask if contents == "zero" else 0, limbs)  # contents before any write
        if len(ukey):
            kn = np.where(found, (base & ~c_touch[safe]) | c_sets[safe], base)
            val = np.where(found, c_data[safe], _U64(0))
            driven = (qm & (hi > lo))[:, None]
            kn &= np.where(driven, ~at_touch[np.maximum(hi - 1, 0)], _U64((1 << 64) - 1))
        else:
            kn = np.broadcast_to(base, (len(qt), limbs))
            val = np.zeros((len(qt), limbs), dtype=_U64)
        rv[qt, qp] = val & kn
        rk[qt, qp] = kn

    # Pipeline and idle_read_data: what each port shows before each edge.
    lat = m.read_latency
    steps = np.arange(t_len)
    for i, port in enumerate(contract.ports):
        if not port.can_read:
            continue
        due = np.full(t_len, _RESULT, dtype=np.int8)  # the pipeline starts with unknown results
        dv = np.zeros((t_len, limbs), dtype=_U64)
        dk = np.zeros((t_len, limbs), dtype=_U64)
        if lat < t_len:
            due[lat:] = entry[: t_len - lat, i]
            dv[lat:] = rv[: t_len - lat, i]
            dk[lat:] = rk[: t_len - lat, i]
        if m.idle_read_data == "unknown":
            due[due == _NONE] = _RESULT  # shows nothing known, and is what "last" becomes
        src = np.maximum.accumulate(np.where(due == _RESULT, steps, -1))
        shown = src >= 0
        safe_src = np.maximum(src, 0)
        value[:, i] = np.where(shown[:, None], dv[safe_src], _U64(0))
        known[:, i] = np.where(shown[:, None], dk[safe_src], _U64(0))
    return value, known


def expected_rows(value: np.ndarray, known: np.ndarray) -> list[tuple[Expected, ...]]:
    """The arrays of :func:`expected` as ``Model.run`` returns them."""
    t, p, _ = value.shape
    vals = limbs_to_ints(value.reshape(t * p, -1)) if t else []
    kns = limbs_to_ints(known.reshape(t * p, -1)) if t else []
    flat = [Expected(v, k) for v, k in zip(vals, kns, strict=True)]
    return [tuple(flat[i * p : (i + 1) * p]) for i in range(t)]


def mismatch(exp_value: np.ndarray, exp_known: np.ndarray, actual: np.ndarray, defined: np.ndarray) -> np.ndarray:
    """Differing bits, (T, P, limbs): known bits whose actual value differs or is X/Z."""
    out: np.ndarray = exp_known & ((exp_value ^ actual) | ~defined)
    return out
