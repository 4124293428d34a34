"""Stimulus strategies: generated traces respect the contract and shrink toward readable traces."""

from __future__ import annotations

import contextlib

from hypothesis import given, settings
from hypothesis import strategies as st

from memcheck import Contract, PortOp, Trace
from memcheck.model import Model
from memcheck.ops import OpKind
from memcheck.strategies import hot_addresses, traces
from tests.contract_strategies import contracts


@settings(max_examples=200)
@given(st.data(), contracts(max_words=300, max_width=40))
def test_generated_traces_respect_the_contract(data: st.DataObject, contract: Contract) -> None:
    trace = data.draw(traces(contract))
    m = contract.memory
    lat = m.read_latency
    for cycle in trace.cycles:
        assert len(cycle) == len(contract.ports)
        for port, op in zip(contract.ports, cycle, strict=True):
            assert op.kind != OpKind.WRITE or port.can_write, "no writes on read ports"
            assert op.kind != OpKind.READ or port.can_read, "no reads on write ports"
            assert op.kind != OpKind.IDLE or port.can_idle, "ports without an enable never idle"
            assert 0 <= op.address < (1 << m.address_bits)
            assert 0 <= op.data <= m.word_mask
            if m.lanes == 0:
                assert op.lanes is None
            elif op.lanes is not None:
                assert 0 <= op.lanes < (1 << m.lanes)
    # The trailing drain cycles issue nothing new where possible, so every read result is observed.
    for cycle in trace.cycles[len(trace.cycles) - lat :] if lat else ():
        for port, op in zip(contract.ports, cycle, strict=True):
            assert op.kind == (OpKind.IDLE if port.can_idle else OpKind.READ)
    Model(contract).run(trace.cycles)  # and the model accepts every cycle


@settings(max_examples=200)
@given(contracts(max_words=5000, max_width=8))
def test_hot_addresses_cover_the_edges(contract: Contract) -> None:
    """Properties of the pool, not its members copied: sorted, in range, 0 first (shrinking ends
    there), the last word and the first address beyond it, both sides of every power-of-two boundary,
    and for every address bit a pair of addresses differing in that bit alone (decoder faults)."""
    m = contract.memory
    limit = 1 << m.address_bits
    hot = hot_addresses(contract)
    assert hot == sorted(set(hot)) and hot[0] == 0 and hot[-1] < limit
    assert m.words - 1 in hot
    assert (m.words in hot) == (m.words < limit)  # beyond the last word only when the pins can say it
    pool = set(hot)
    for b in range(m.address_bits):
        assert {(1 << b) - 1, 1 << b} <= pool
        assert any(a ^ (1 << b) in pool for a in pool), f"no pair differing in address bit {b} alone"


def test_strategies_find_and_shrink_a_read_after_write_bug() -> None:
    """A wrapper that forwards nothing on read-after-write is found, and the trace shrinks small."""
    c = Contract.simple(16, 8, read_latency=1, read_during_write="old", initial="zero")
    found: list[Trace] = []

    @settings(max_examples=500, database=None, derandomize=True)
    @given(traces(c))
    def prop(trace: Trace) -> None:
        # A buggy "wrapper": reads right after a write to the same address return the old word.
        model, buggy = Model(c), Model(c)
        prev: PortOp | None = None
        for cycle in trace.cycles:
            want = model.step(cycle)
            op = cycle[0]
            got = buggy.step(cycle)
            if prev is not None and prev.kind == OpKind.WRITE and op.kind == OpKind.READ and op.address == prev.address:
                buggy.poke(prev.address, 0)  # ... modelled crudely: the written word reads back as zero
            # The buggy wrapper's RAM starts at zero (initial = "zero"), so it drives clean bits: its
            # read data is defined in every bit, whatever the reference model knows.
            defined = c.memory.word_mask
            if any(w.mismatch(g.value, defined) for w, g in zip(want, got, strict=True)):
                found.append(trace)
                raise AssertionError("mismatch")
            prev = op

    with contextlib.suppress(AssertionError):
        prop()
    assert found, "the strategies never produced a write followed at once by a read of that address"
    smallest = found[-1]  # Hypothesis replays the shrunk example last
    assert len(smallest) <= 6
    used = {op.address for c_ in smallest.cycles for op in c_ if op.kind != OpKind.IDLE}
    assert len(used) == 1, f"shrinks toward a single address: {smallest}"
