"""Hypothesis strategies that generate per-cycle operation traces valid for a contract.

They are built to find wrapper bugs rather than to be uniformly random: a trace draws a small pool
of "hot" addresses (0, the last word, powers of two and their neighbours, bank-boundary-like
addresses, pairs one bit apart, addresses beyond ``words``), then a list of *blocks*: a random
cycle, a write followed at once by a read of the same address, a read followed by a write, a
cross-port collision, or a stretch of idle cycles with garbage on the disabled ports' pins.

Everything shrinks toward the readable: fewer blocks (so fewer cycles), a pool of one address
(address 0), zero data, all lanes enabled, and clean pins on idle ports.
"""

from __future__ import annotations

from collections.abc import Sequence

from hypothesis import strategies as st

from memcheck.contract import Contract, PortSpec
from memcheck.ops import Cycle, PortOp, Trace

__all__ = [
    "addresses",
    "cycles",
    "data_words",
    "hot_addresses",
    "lane_values",
    "port_ops",
    "traces",
]


def hot_addresses(contract: Contract) -> list[int]:
    """Addresses where wrapper bugs hide, smallest first (0 first so that shrinking ends there)."""
    m = contract.memory
    limit = 1 << m.address_bits
    hot: set[int] = {0, m.words - 1, m.words // 2, m.words // 4, 3 * m.words // 4}
    p = 1
    while p < limit:
        hot.update((p - 1, p, p + 1))
        p <<= 1
    if m.words < limit:  # beyond the last word: reads are unknown, writes do nothing
        hot.update((m.words, limit - 1))
    return sorted(a for a in hot if 0 <= a < limit)


def addresses(contract: Contract) -> st.SearchStrategy[int]:
    """One address: usually a hot one, sometimes a neighbour one bit away, sometimes any."""
    m = contract.memory
    limit = 1 << m.address_bits
    hot = hot_addresses(contract)
    one_bit_apart = st.tuples(st.sampled_from(hot), st.integers(0, m.address_bits - 1)).map(
        lambda t: t[0] ^ (1 << t[1])
    )
    return st.one_of(st.sampled_from(hot), one_bit_apart, st.integers(0, limit - 1))


def data_words(width: int) -> st.SearchStrategy[int]:
    """Data patterns: all-0, all-1, walking one, walking zero, random (shrinks to 0)."""
    mask = (1 << width) - 1
    return st.one_of(
        st.just(0),
        st.just(mask),
        st.integers(0, width - 1).map(lambda b: 1 << b),
        st.integers(0, width - 1).map(lambda b: mask ^ (1 << b)),
        st.integers(0, mask),
    )


def lane_values(contract: Contract) -> st.SearchStrategy[int | None]:
    """Lane enables: all lanes (None), one lane, none, any pattern. Whole-word memories: all."""
    n = contract.memory.lanes
    if n == 0:
        return st.just(None)
    return st.one_of(
        st.just(None),
        st.integers(0, n - 1).map(lambda i: 1 << i),
        st.just(0),
        st.integers(0, (1 << n) - 1),
    )


def _garbage(contract: Contract) -> st.SearchStrategy[tuple[int, int, int | None]]:
    m = contract.memory
    limit = 1 << m.address_bits
    lanes: st.SearchStrategy[int | None] = st.just(None) if m.lanes == 0 else st.integers(0, m.all_lanes)
    return st.one_of(
        st.just((0, 0, None)),
        st.tuples(st.integers(0, limit - 1), st.integers(0, m.word_mask), lanes),
    )


def _rest(contract: Contract, port: PortSpec, pool: Sequence[int]) -> st.SearchStrategy[PortOp]:
    """What a port does when it has nothing to do: idle (with garbage pins) or, without an enable, read."""
    if port.can_idle:
        return _garbage(contract).map(lambda g: PortOp("idle", g[0], g[1], g[2]))
    return st.sampled_from(list(pool)).map(lambda a: PortOp("read", a))


def _write(contract: Contract, pool: Sequence[int], address: int | None = None) -> st.SearchStrategy[PortOp]:
    addr = st.just(address) if address is not None else st.sampled_from(list(pool))
    return st.builds(
        lambda a, d, lanes: PortOp("write", a, d, lanes),
        addr,
        data_words(contract.memory.width),
        lane_values(contract),
    )


def port_ops(contract: Contract, port: PortSpec, pool: Sequence[int]) -> st.SearchStrategy[PortOp]:
    """Any operation this port can perform, addresses drawn from ``pool``."""
    choices: list[st.SearchStrategy[PortOp]] = []
    if port.can_idle:
        choices.append(_rest(contract, port, pool))
    if port.can_read:
        choices.append(st.sampled_from(list(pool)).map(lambda a: PortOp("read", a)))
    if port.can_write:
        choices.append(_write(contract, pool))
    return st.one_of(*choices)


def cycles(contract: Contract, pool: Sequence[int]) -> st.SearchStrategy[Cycle]:
    """One cycle: an operation on every port."""
    return st.tuples(*(port_ops(contract, p, pool) for p in contract.ports))


@st.composite
def _block(draw: st.DrawFn, contract: Contract, pool: Sequence[int]) -> list[Cycle]:
    ports = contract.ports
    writers = [i for i, p in enumerate(ports) if p.can_write]
    readers = [i for i, p in enumerate(ports) if p.can_read]
    kinds = ["cycle", "idle"]
    if writers and readers:
        kinds += ["write_then_read", "read_then_write"]
        if any(r != w for r in readers for w in writers):
            kinds.append("collision")
    if len(writers) > 1:
        kinds.append("write_collision")
    kind = draw(st.sampled_from(kinds))

    def rest_cycle() -> list[PortOp]:
        return [draw(_rest(contract, p, pool)) for p in ports]

    if kind == "cycle":
        return [draw(cycles(contract, pool))]
    if kind == "idle":
        n = draw(st.integers(1, 8))
        return [tuple(rest_cycle()) for _ in range(n)]
    addr = draw(st.sampled_from(list(pool)))
    if kind in ("write_then_read", "read_then_write"):
        w = draw(st.sampled_from(writers))
        r = draw(st.sampled_from(readers))
        wc = rest_cycle()
        wc[w] = draw(_write(contract, pool, addr))
        rc = rest_cycle()
        rc[r] = PortOp("read", addr)
        pair = [tuple(wc), tuple(rc)] if kind == "write_then_read" else [tuple(rc), tuple(wc)]
        return pair
    c = rest_cycle()
    if kind == "collision":
        w, r = draw(st.sampled_from([(w, r) for w in writers for r in readers if w != r]))
        c[w] = draw(_write(contract, pool, addr))
        c[r] = PortOp("read", addr)
    else:  # write_collision
        both = draw(st.permutations(writers))[:2]
        for w in both:
            c[w] = draw(_write(contract, pool, addr))
    return [tuple(c)]


def drain_cycle(contract: Contract) -> Cycle:
    """A cycle that issues nothing new where possible (ports without an enable read address 0)."""
    return tuple(PortOp("idle") if p.can_idle else PortOp("read", 0) for p in contract.ports)


@st.composite
def traces(
    draw: st.DrawFn,
    contract: Contract,
    *,
    min_blocks: int = 1,
    max_blocks: int = 12,
    max_pool: int = 4,
    drain: bool = True,
) -> Trace:
    """A trace of blocks over a small pool of hot addresses.

    With ``drain`` the trace ends with ``read_latency`` quiet cycles, so the result of every read in
    it is observed within the trace.
    """
    pool = draw(st.lists(addresses(contract), min_size=1, max_size=max_pool, unique=True))
    blocks = draw(st.lists(_block(contract, pool), min_size=min_blocks, max_size=max_blocks))
    out: list[Cycle] = [c for b in blocks for c in b]
    if drain:
        out.extend(drain_cycle(contract) for _ in range(contract.memory.read_latency))
    return Trace(tuple(out))
