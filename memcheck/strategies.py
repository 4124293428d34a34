"""Hypothesis strategies that generate per-cycle operation traces valid for a contract.

They are built to find wrapper bugs rather than to be uniformly random: a trace draws a small pool
of "hot" addresses (0, the last word, powers of two and their neighbours, bank-boundary-like
addresses, pairs one bit apart, addresses beyond ``words``), then a list of *blocks*: a random
cycle, a write followed at once by a read of the same address, a read followed by a write, a
cross-port collision, or a stretch of idle cycles with garbage on the disabled ports' pins (garbage
addresses from the same pool, so a wrapper that writes while deselected is caught by a later read).

Everything shrinks toward the readable: fewer blocks (so fewer cycles), a pool of one address
(address 0), zero data, all lanes enabled, and clean pins on idle ports.

Contracts with several clocks get their cycles laid on the tick timeline (a port without an edge at
a tick gets ``NO_EDGE``); contracts with power pins get power episodes (:func:`power_states`).
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import Any

from hypothesis import strategies as st

from memcheck.contract import Contract, PortSpec, timeline
from memcheck.ops import NO_EDGE, Cycle, OpKind, PortOp, Power, Trace

__all__ = [
    "addresses",
    "cycles",
    "data_words",
    "hot_addresses",
    "lane_values",
    "port_ops",
    "power_states",
    "traces",
]

#: Address bits driven beyond ``address_bits`` when ``out_of_range`` is "ignore" or "wrap" and the
#: real pin width is not known (the simulator side passes the width of the address pins).
EXTRA_ADDRESS_BITS = 2


def driven_address_bits(contract: Contract, pin_bits: int | None = None) -> int:
    """Address bits a trace drives: the minimum, or, when addresses beyond ``words`` are checked
    (``out_of_range`` "ignore" or "wrap"), the address pins' full width ``pin_bits`` (a few bits more
    than the minimum when it is not known)."""
    m = contract.memory
    if m.out_of_range == "unchecked":
        return m.address_bits
    return max(pin_bits, m.address_bits) if pin_bits is not None else m.address_bits + EXTRA_ADDRESS_BITS


def hot_addresses(contract: Contract, pin_bits: int | None = None) -> list[int]:
    """Addresses where wrapper bugs hide, smallest first (0 first so that shrinking ends there); with
    out-of-range addresses checked, also just above ``words`` and at the top of the pin range."""
    m = contract.memory
    limit = 1 << driven_address_bits(contract, pin_bits)
    hot: set[int] = {0, m.words - 1, m.words // 2, m.words // 4, 3 * m.words // 4}
    p = 1
    while p < limit:
        hot.update((p - 1, p, p + 1))
        p <<= 1
    if m.words < limit:  # beyond the last word: reads are unknown (or alias), writes do nothing (or alias)
        hot.update((m.words, m.words + 1, limit - 1))
    return sorted(a for a in hot if 0 <= a < limit)


def addresses(contract: Contract, pin_bits: int | None = None) -> st.SearchStrategy[int]:
    """One address: usually a hot one, sometimes a neighbour one bit away, sometimes any."""
    bits = driven_address_bits(contract, pin_bits)
    limit = 1 << bits
    hot = hot_addresses(contract, pin_bits)
    one_bit_apart = st.tuples(st.sampled_from(hot), st.integers(0, bits - 1)).map(lambda t: t[0] ^ (1 << t[1]))
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


# Operations are drawn as *raw* tuples that name addresses by their index in the trace's pool, so
# that every strategy object is built once per contract (building Hypothesis strategies per draw
# costs far more than drawing from them); :func:`_resolve` turns a raw operation into a PortOp.
#   (IDLE, None) clean pins | (IDLE, (i, data, lanes)) garbage on the pins | (READ, i)
#   | (WRITE, i, data, lanes)   (kinds as memcheck.ops.OpKind)
_Raw = tuple[Any, ...]


def _resolve(raw: _Raw, pool: Sequence[int]) -> PortOp:
    kind = raw[0]
    if kind == OpKind.IDLE:
        if raw[1] is None:
            return PortOp(OpKind.IDLE)
        i, data, lanes = raw[1]
        return PortOp(OpKind.IDLE, pool[i % len(pool)], data, lanes)
    if kind == OpKind.READ:
        return PortOp(OpKind.READ, pool[raw[1] % len(pool)])
    return PortOp(OpKind.WRITE, pool[raw[1] % len(pool)], raw[2], raw[3])


class _Plan:
    """The strategies for one contract, built once: raw operations, cycles and blocks."""

    def __init__(self, contract: Contract, max_pool: int) -> None:
        m = contract.memory
        self.contract = contract
        ports = contract.ports
        self.index = st.integers(0, max(max_pool, 1) - 1)
        self.data = data_words(m.width)
        self.lanes = lane_values(contract)
        garbage_lanes: st.SearchStrategy[int | None] = st.just(None) if m.lanes == 0 else st.integers(0, m.all_lanes)
        # Garbage addresses come from the pool, so a wrapper that writes while deselected is caught by
        # a read of the same address soon after.
        garbage = st.one_of(st.just(None), st.tuples(self.index, self.data, garbage_lanes))
        reads = self.index.map(lambda i: (OpKind.READ, i))
        self.rest = [garbage.map(lambda g: (OpKind.IDLE, g)) if p.can_idle else reads for p in ports]
        self.writes = st.tuples(st.just(OpKind.WRITE), self.index, self.data, self.lanes)
        self.payload = st.tuples(self.data, self.lanes)
        self.any_op = [
            st.one_of(
                *([self.rest[i]] if p.can_idle else [])
                + ([reads] if p.can_read else [])
                + ([self.writes] if p.can_write else [])
            )
            for i, p in enumerate(ports)
        ]
        self.cycle = st.tuples(*self.any_op)
        self.rest_cycle = st.tuples(*self.rest)
        writers = [i for i, p in enumerate(ports) if p.can_write]
        readers = [i for i, p in enumerate(ports) if p.can_read]
        kinds = ["cycle", "idle"]
        if writers and readers:
            kinds += ["write_then_read", "read_then_write"]
            if any(r != w for r in readers for w in writers):
                kinds.append("collision")
        if len(writers) > 1:
            kinds.append("write_collision")
        self.kinds = st.sampled_from(kinds)
        self.idle_len = st.integers(1, 8)
        self.writer = st.sampled_from(writers) if writers else st.nothing()
        self.reader = st.sampled_from(readers) if readers else st.nothing()
        pairs = [(w, r) for w in writers for r in readers if w != r]
        self.pair = st.sampled_from(pairs) if pairs else st.nothing()
        self.two_writers = st.permutations(writers) if len(writers) > 1 else st.nothing()
        self.block = _raw_block(self)


@st.composite
def _raw_block(draw: st.DrawFn, plan: _Plan) -> list[tuple[_Raw, ...]]:
    kind = draw(plan.kinds)
    if kind == "cycle":
        return [draw(plan.cycle)]
    if kind == "idle":
        return [draw(plan.rest_cycle) for _ in range(draw(plan.idle_len))]
    ai = draw(plan.index)

    def write() -> _Raw:
        data, lanes = draw(plan.payload)
        return (OpKind.WRITE, ai, data, lanes)

    if kind in ("write_then_read", "read_then_write"):
        w = draw(plan.writer)
        r = draw(plan.reader)
        wc = list(draw(plan.rest_cycle))
        wc[w] = write()
        rc = list(draw(plan.rest_cycle))
        rc[r] = (OpKind.READ, ai)
        return [tuple(wc), tuple(rc)] if kind == "write_then_read" else [tuple(rc), tuple(wc)]
    c = list(draw(plan.rest_cycle))
    if kind == "collision":
        w, r = draw(plan.pair)
        c[w] = write()
        c[r] = (OpKind.READ, ai)
    else:  # write_collision
        for w in draw(plan.two_writers)[:2]:
            c[w] = write()
    return [tuple(c)]


def port_ops(contract: Contract, port: PortSpec, pool: Sequence[int]) -> st.SearchStrategy[PortOp]:
    """Any operation this port can perform, addresses drawn from ``pool``."""
    plan = _Plan(contract, len(pool))
    at = list(pool)
    return plan.any_op[contract.ports.index(port)].map(lambda raw: _resolve(raw, at))


def cycles(contract: Contract, pool: Sequence[int]) -> st.SearchStrategy[Cycle]:
    """One cycle: an operation on every port."""
    plan = _Plan(contract, len(pool))
    at = list(pool)
    return plan.cycle.map(lambda raw: tuple(_resolve(r, at) for r in raw))


def drain_cycle(contract: Contract) -> Cycle:
    """A cycle that issues nothing new where possible (ports without an enable read address 0)."""
    return tuple(PortOp(OpKind.IDLE) if p.can_idle else PortOp(OpKind.READ, 0) for p in contract.ports)


def traces(
    contract: Contract,
    *,
    min_blocks: int = 1,
    max_blocks: int = 12,
    max_pool: int = 4,
    drain: bool = True,
    first_tick: int = 0,
    pin_bits: int | None = None,
) -> st.SearchStrategy[Trace]:
    """A trace of blocks over a small pool of hot addresses.

    With ``drain`` the trace ends with ``read_latency`` quiet cycles, so the result of every read in
    it is observed within the trace. With several clocks the trace starts at tick ``first_tick`` of
    the timeline (a model that has already stepped k times stands at tick k). ``pin_bits``: the width
    of the address pins, driven in full when out-of-range addresses are checked.
    """
    plan = _Plan(contract, max_pool)
    pools = st.lists(addresses(contract, pin_bits), min_size=1, max_size=max_pool, unique=True)
    blocks = st.lists(plan.block, min_size=min_blocks, max_size=max_blocks)
    tail = tuple(drain_cycle(contract) for _ in range(contract.memory.read_latency)) if drain else ()

    if contract.power is not None:
        on = plan.block.map(lambda b: (b, [Power.ON] * len(b)))
        powered = st.lists(st.one_of(on, _power_block(plan, contract)), min_size=min_blocks, max_size=max_blocks)

    @st.composite
    def draw_trace(draw: st.DrawFn) -> Trace:
        pool = draw(pools)
        power: list[Power] = []
        if contract.power is not None:
            parts = draw(powered)
            raw = [c for b, _ in parts for c in b]
            power = [p for _, ps in parts for p in ps] + [Power.ON] * len(tail)
        else:
            raw = [c for b in draw(blocks) for c in b]
        cycles = _fit(contract, [tuple(_resolve(r, pool) for r in c) for c in raw] + list(tail), first_tick)
        return Trace(tuple(cycles), tuple(power) if any(power) else ())

    return draw_trace()


def _power_block(plan: _Plan, contract: Contract) -> st.SearchStrategy[tuple[list[tuple[_Raw, ...]], list[Power]]]:
    """A power episode placed where power bugs hide: a write just before the power pins are asserted,
    a few cycles of any operations while they are (ignored by the memory), any operations on the
    wake-up edges and right after them, then a read of the address written before the episode."""
    spec = contract.power
    assert spec is not None
    states = [s for s, pin in ((Power.SLEEP, spec.sleep), (Power.SHUTDOWN, spec.shutdown)) if pin is not None]
    wake = spec.wake_cycles
    can_access = bool(contract.ports) and any(p.can_write for p in contract.ports)
    can_read = any(p.can_read for p in contract.ports)

    @st.composite
    def block(draw: st.DrawFn) -> tuple[list[tuple[_Raw, ...]], list[Power]]:
        ai = draw(plan.index)
        state = draw(st.sampled_from(states))
        k = draw(st.integers(1, 4))
        before = list(draw(plan.rest_cycle))
        if can_access:
            data, lanes = draw(plan.payload)
            before[draw(plan.writer)] = (OpKind.WRITE, ai, data, lanes)
        asleep = [draw(plan.cycle) for _ in range(k)]
        woken = [draw(plan.cycle) for _ in range(wake + 1)]
        after = list(draw(plan.rest_cycle))
        if can_read:
            after[draw(plan.reader)] = (OpKind.READ, ai)
        cycles = [tuple(before), *asleep, *woken, tuple(after)]
        return cycles, [Power.ON, *[state] * k, *[Power.ON] * (wake + 2)]

    return block()


def _fit(contract: Contract, cycles: list[Cycle], first_tick: int) -> list[Cycle]:
    """Make drawn cycles valid for the new contract features: ``NO_EDGE`` where a port's clock has no
    edge at the tick, and a write with no lane enabled on a port without write_enable becomes the
    read those pins mean."""
    any_lane = [p.any_lane_write for p in contract.ports]
    if any(any_lane):
        cycles = [
            tuple(
                PortOp(OpKind.READ, op.address) if a and op.kind == OpKind.WRITE and op.lanes == 0 else op
                for op, a in zip(c, any_lane, strict=True)
            )
            for c in cycles
        ]
    if contract.lockstep:
        return cycles
    ticks = timeline(contract.port_clocks, count=first_tick + len(cycles))[first_tick:]
    return [
        tuple(op if p.clock in t.clocks else NO_EDGE for op, p in zip(c, contract.ports, strict=True))
        for c, t in zip(cycles, ticks, strict=True)
    ]


def power_states(contract: Contract, n: int) -> st.SearchStrategy[list[Power]]:
    """``n`` power states: mostly on, with sleep and shutdown episodes of random length (only the
    states the contract has pins for). Shrinks toward always on."""
    spec = contract.power
    states = [Power.ON]
    if spec is not None and spec.sleep is not None:
        states.append(Power.SLEEP)
    if spec is not None and spec.shutdown is not None:
        states.append(Power.SHUTDOWN)
    runs = st.lists(st.tuples(st.sampled_from(states), st.integers(1, 6)), max_size=6)

    def lay(parts: list[tuple[Power, int]]) -> list[Power]:
        out = [s for state, k in parts for s in [state] * k][:n]
        return out + [Power.ON] * (n - len(out))

    return runs.map(lay)
