"""Bulk examples: thousands of operations from one Hypothesis draw, decoded with numpy.

A short property example (a handful of operations) costs Hypothesis ~15 ms to generate, so
examples of that size cannot keep up with the simulator. A bulk example is drawn as a few small
parameters (a pool of hot addresses, a pool of data words) and a byte string; :func:`decode` turns
the bytes into a trace of thousands of cycles at numpy speed.

The bytes are read as *records* of ``1 + 2 * ports`` bytes. A record is one operation per port,
repeated for 1 to 16 cycles with a variation:

* header byte: bits 0-2 the repeat count (1, 2, 3, 4, 8, 12, 16, 24); bits 3-4 how the address moves
  between repeats (stays, +1, -1, one address bit flipped); bits 5-6 an alternation on every second
  repeat (none; writes read their word back at once; every port rests with its pins left as they
  were, write enable included; every port uses the writing port's address, i.e. collisions); bit 7
  inverts the write data on every second repeat;
* per port, an operation byte: bits 0-2 the operation (rest one time in eight, otherwise read or
  write; only what the port can do), bits 3-7 the address (mostly from the pool, otherwise anywhere);
* per port, a data byte: bits 0-3 the write data (zero, ones, walking one or zero, from the pool,
  pseudo-random), bits 4-7 the lane enables (all, none, one lane, a pseudo-random pattern).

All-zero bytes decode to the plainest trace: one cycle per record, every port idle with clean pins
(a read of address 0 where the port has no enable). So Hypothesis' shrinking (fewer chunks, bytes
set to zero) moves toward short, readable traces, and the engine's own delta debugging finishes.
A trace ends with ``read_latency`` quiet cycles so that every read is observed.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from hypothesis import strategies as st

from memcheck.contract import Contract
from memcheck.model_fast import IDLE, READ, WRITE, Columns, int_limbs, limbs_of
from memcheck.sim.checking.sequences import mix64
from memcheck.strategies import addresses, data_words

__all__ = ["BulkSpec", "bulk_specs", "decode", "record_size"]

REPEATS = np.array([1, 2, 3, 4, 8, 12, 16, 24], dtype=np.int64)
#: Bytes of example body per Hypothesis example (Hypothesis holds at most 8 KiB of choices per example).
MAX_BODY = 6000
_CHUNK = 240
_POOL_MAX = 16
_POOL_SLOTS = 24  # address selectors (0..31) below this pick from the pool, the rest anywhere


@dataclass(frozen=True)
class BulkSpec:
    """What Hypothesis draws for one bulk example."""

    pool: tuple[int, ...]
    data_pool: tuple[int, ...]
    body: bytes


def record_size(contract: Contract) -> int:
    return 1 + 2 * len(contract.ports)


def body_limit(contract: Contract) -> int:
    """Body bytes per example: fewer for very wide words, whose cycles cost more to encode and check."""
    return max(record_size(contract), MAX_BODY // max(1, limbs_of(contract.memory.width) // 4))


def bulk_specs(
    contract: Contract,
    *,
    max_body: int | None = None,
    pool: Sequence[int] | None = None,
    data_pool: Sequence[int] | None = None,
) -> st.SearchStrategy[BulkSpec]:
    """Bulk examples for ``contract``: body bytes in fixed-size chunks so shrinking drops whole chunks.
    ``pool`` and ``data_pool`` fix the hot addresses and data words (a search seeded from a failure)."""
    r = record_size(contract)
    chunk = r * max(1, _CHUNK // r)
    limit = body_limit(contract) if max_body is None else max_body
    n_max = max(1, limit // chunk)
    pool_st = (
        st.lists(addresses(contract), min_size=1, max_size=_POOL_MAX, unique=True)
        if not pool
        else st.just(list(pool[:_POOL_MAX]))
    )
    data_st = (
        st.lists(data_words(contract.memory.width), min_size=1, max_size=4)
        if not data_pool
        else st.just(list(data_pool[:4]))
    )
    chunk_st = st.binary(min_size=chunk, max_size=chunk)
    counts = st.sampled_from(list(range(1, n_max + 1)) + [n_max] * n_max)

    @st.composite
    def specs(draw: st.DrawFn) -> BulkSpec:
        pool = draw(pool_st)
        data_pool = draw(data_st)
        # Drawing the count first makes generated examples large (half of them as large as allowed);
        # lowering it while shrinking keeps the remaining chunks aligned (a list's forced elements are
        # still in the choice sequence).
        n = draw(counts)
        chunks = draw(st.lists(chunk_st, min_size=n, max_size=n_max))
        return BulkSpec(tuple(pool), tuple(data_pool), b"".join(chunks))

    return specs()


def _hash_limbs(seed: np.ndarray, limbs: int, salt: int) -> np.ndarray:
    """(n, limbs) pseudo-random uint64 from (n,) seeds."""
    base = seed.astype(np.uint64) * np.uint64(0x100000001B3) + np.uint64(salt)
    return np.stack([mix64(base + np.uint64(0x1000 * (i + 1))) for i in range(limbs)], axis=-1)


def _top_mask(bits: int) -> np.ndarray:
    """(limbs,) uint64 mask of ``bits`` bits."""
    return int_limbs((1 << bits) - 1, limbs_of(bits))


def _one_bit(bit: np.ndarray, limbs: int) -> np.ndarray:
    """(n, limbs) with bit ``bit[i]`` set in row i."""
    out = np.zeros((len(bit), limbs), dtype=np.uint64)
    out[np.arange(len(bit)), bit // 64] = np.uint64(1) << (bit % 64).astype(np.uint64)
    return out


def _op_tables(contract: Contract) -> np.ndarray:
    """(ports, 8): operation kind per operation selector, only what each port can do."""
    rows = []
    for p in contract.ports:
        rest = IDLE if p.can_idle else READ
        if p.can_read and p.can_write:
            rows.append([rest, READ, WRITE, READ, WRITE, READ, WRITE, READ])
        elif p.can_read:
            rows.append([rest] + [READ] * 7)
        else:
            rows.append([rest] + [WRITE] * 7)
    return np.array(rows, dtype=np.int8)


def _no_lane_writes_read(contract: Contract, kind: np.ndarray, lanes: np.ndarray, given: np.ndarray) -> None:
    """In place: on a port without write_enable, a write with no lane enabled is the read those pins mean."""
    for p, port in enumerate(contract.ports):
        if port.any_lane_write:
            kind[(kind[:, p] == WRITE) & given[:, p] & ~lanes[:, p].any(axis=1), p] = READ


def decode(contract: Contract, spec: BulkSpec, *, drain: bool = True, address_bits: int | None = None) -> Columns:
    """The trace a bulk example stands for (see the module docstring for the byte format); addresses
    span ``address_bits`` bits (default: the minimum for ``words``)."""
    m = contract.memory
    ports = contract.ports
    n_ports = len(ports)
    limbs = limbs_of(m.width)
    lane_limbs = limbs_of(max(m.lanes, 1))
    size = record_size(contract)
    raw = np.frombuffer(spec.body, dtype=np.uint8)
    n = len(raw) // size
    lat = m.read_latency
    if n == 0:
        return Columns.quiet(contract, lat if drain else 0)
    raw = raw[: n * size].reshape(n, size).astype(np.int64)
    head = raw[:, 0]
    op_byte = raw[:, 1::2]  # (n, ports)
    data_byte = raw[:, 2::2]

    reps = REPEATS[head & 7]
    total = int(reps.sum())
    rec = np.repeat(np.arange(n), reps)
    j = np.arange(total) - np.repeat(np.cumsum(reps) - reps, reps)
    odd = (j & 1).astype(bool)
    step = ((head >> 3) & 3)[rec]
    alt = ((head >> 5) & 3)[rec]
    vary = ((head >> 7) & 1)[rec].astype(bool)

    # Operation and address of each record and port.
    table = _op_tables(contract)
    kind_rec = np.stack([table[p][op_byte[:, p] & 7] for p in range(n_ports)], axis=1)
    abits = address_bits or m.address_bits
    limit = 1 << abits
    asel = op_byte >> 3
    pool = np.array(spec.pool or (0,), dtype=np.int64) % limit
    anywhere = (
        mix64((np.arange(n)[:, None] * 8 + np.arange(n_ports)[None, :]).astype(np.uint64) + np.uint64(77))
        % np.uint64(limit)
    ).astype(np.int64)
    addr_rec = np.where(asel < _POOL_SLOTS, pool[asel % len(pool)], anywhere)

    kind = kind_rec[rec]
    addr = addr_rec[rec]
    jj = j[:, None]
    flip = np.int64(1) << ((np.maximum(jj - 1, 0)) % abits)
    addr = (
        np.select(
            [step[:, None] == 1, step[:, None] == 2, (step[:, None] == 3) & (jj > 0)],
            [addr + jj, addr - jj, addr ^ flip],
            addr,
        )
        % limit
    )
    # Alternation 3: every port uses the address of the first port that writes (else port 0's).
    shared = alt == 3
    if shared.any() and n_ports > 1:
        writes = kind == WRITE
        lead = np.where(writes.any(axis=1), writes.argmax(axis=1), 0)
        lead_addr = addr[np.arange(total), lead]
        addr = np.where(shared[:, None], lead_addr[:, None], addr)

    # Data and lanes of writes (and of the pins of resting ports).
    dsel = (data_byte & 15)[rec]
    lsel = (data_byte >> 4)[rec]
    word = _top_mask(m.width)
    cyc_seed = (rec * 16 + j).astype(np.uint64)
    data = np.zeros((total, n_ports, limbs), dtype=np.uint64)
    dpool = np.stack([int_limbs(d & m.word_mask, limbs) for d in (spec.data_pool or (0,))])
    for p in range(n_ports):
        ds = dsel[:, p]
        walk = (rec * 7 + j) % m.width
        choices = [
            np.zeros((total, limbs), dtype=np.uint64),
            np.broadcast_to(word, (total, limbs)),
            _one_bit(walk, limbs),
            _one_bit(walk, limbs) ^ word,
            dpool[(ds - 4) % len(dpool)],
            _hash_limbs(cyc_seed * np.uint64(8) + np.uint64(p), limbs, 11) & word,
        ]
        idx = np.select([ds == 0, ds == 1, ds == 2, ds == 3, ds < 8], [0, 1, 2, 3, 4], 5)
        stacked = np.stack(choices)
        data[:, p] = stacked[idx, np.arange(total)]
    data = np.where((vary & odd)[:, None, None], data ^ word, data)

    lanes = np.zeros((total, n_ports, lane_limbs), dtype=np.uint64)
    all_lanes = int_limbs(m.all_lanes, lane_limbs)
    lanes[:] = all_lanes
    given = np.zeros((total, n_ports), dtype=bool)
    if m.lanes:
        for p in range(n_ports):
            ls = lsel[:, p]
            one = (ls >= 2) & (ls <= 5)
            pattern = (ls == 6) | (ls == 7)
            none = ls == 1
            lane = ((rec + p + ls - 2) % m.lanes).astype(np.int64)
            lanes[one, p] = _one_bit(lane[one], lane_limbs)
            lanes[pattern, p] = _hash_limbs(cyc_seed[pattern] * np.uint64(8) + np.uint64(p), lane_limbs, 23) & all_lanes
            lanes[none, p] = 0
            given[:, p] = one | pattern | none

    # Alternation 1: a write on every second repeat becomes a read of the word written just before.
    back = (alt == 1) & odd
    if back.any():
        prev_addr = np.vstack([addr[:1], addr[:-1]])
        for p, port in enumerate(ports):
            w = back & (kind[:, p] == WRITE)
            if port.can_read:
                kind[w, p] = READ
                addr[w, p] = prev_addr[w, p]
            else:
                kind[w, p] = IDLE
    # Alternation 2: every second repeat, every port rests with its pins as they were.
    rest = (alt == 2) & odd
    for p, port in enumerate(ports):
        kind[rest, p] = IDLE if port.can_idle else READ

    _no_lane_writes_read(contract, kind, lanes, given)
    # Clean pins where nothing asks for values: reads carry no data; an idle port whose record bytes
    # select nothing (and which is not resting from an operation) has clean pins.
    reads = kind == READ
    data[reads] = 0
    lanes[reads] = all_lanes
    given[reads] = False
    clean = (kind == IDLE) & ((op_byte >> 3) == 0)[rec] & (data_byte == 0)[rec] & ~rest[:, None]
    addr[clean] = 0
    data[clean] = 0
    lanes[clean] = all_lanes
    given[clean] = False

    cols = Columns(kind.astype(np.int8), addr, data, lanes, given)
    if drain and lat:
        cols = Columns.concat([cols, Columns.quiet(contract, lat)])
    return cols
