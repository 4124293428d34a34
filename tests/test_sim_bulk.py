"""Bulk examples: decoded traces are contract-legal, zero bytes are the plainest trace, and the byte
format means what bulk.py documents."""

from __future__ import annotations

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from memcheck import Contract
from memcheck.model import Model
from memcheck.model_fast import IDLE, READ, WRITE, Columns, expected, expected_rows, validate
from memcheck.ops import OpKind, PortOp
from memcheck.sim.checking.bulk import REPEATS, BulkSpec, bulk_specs, decode, record_size
from tests.contract_strategies import contracts


@settings(max_examples=60, deadline=None, suppress_health_check=list(HealthCheck))
@given(st.data(), contracts(max_words=300, max_width=70, max_ports=3))
def test_decoded_traces_respect_the_contract(data: st.DataObject, contract: Contract) -> None:
    spec = data.draw(bulk_specs(contract, max_body=600))
    cols = decode(contract, spec)
    validate(contract, cols)  # no reads on write ports, no idle without an enable, values in range
    m = contract.memory
    lat = m.read_latency
    # The trace ends with read_latency quiet cycles, so every read is observed within it.
    assert (cols.kind[len(cols) - lat :] == Columns.quiet(contract, lat).kind).all()
    # Reads carry clean pins; idle ports carry either clean pins or garbage from the trace's pools.
    cycles = cols.to_cycles()
    for cyc in cycles:
        for op in cyc:
            if op.kind == OpKind.READ:
                assert op.data == 0 and op.lanes is None
    # ... and the cycle-by-cycle model agrees with the vectorised one on it.
    if len(cycles) <= 400:
        value, known = expected(contract, cols)
        model = Model(contract)
        model.forget()
        assert expected_rows(value, known) == model.run(cycles)


def test_zero_bytes_decode_to_the_plainest_trace() -> None:
    c = Contract.simple(16, 8, lane_width=4, read_latency=2)
    cols = decode(c, BulkSpec((5, 7), (0x3C,), bytes(3 * 10)))
    # One cycle per record, every port idle with clean pins, then the drain.
    assert cols.to_cycles() == [(PortOp(OpKind.IDLE),)] * (10 + 2)
    no_enable = Contract.simple(16, 8, enable=False)
    assert decode(no_enable, BulkSpec((0,), (0,), bytes(6))).to_cycles() == [(PortOp(OpKind.READ, 0),)] * 3


def test_records_repeat_step_and_read_back_as_documented() -> None:
    c = Contract.simple(64, 8, read_latency=1)
    assert record_size(c) == 3
    pool = (10, 20)
    # header: repeat code 3 (4 cycles), step +1 (bits 3-4 = 1), alternation 1 (write, then read back);
    # operation byte: write (selector 2), pool slot 1 (address 20); data byte: all ones (1), all lanes.
    head = 3 | (1 << 3) | (1 << 5)
    cols = decode(c, BulkSpec(pool, (0,), bytes([head, 2 | (1 << 3), 1])))
    assert REPEATS[3] == 4
    ops = [cyc[0] for cyc in cols.to_cycles()]
    assert ops[:4] == [
        PortOp(OpKind.WRITE, 20, 0xFF),
        PortOp(OpKind.READ, 20),
        PortOp(OpKind.WRITE, 22, 0xFF),
        PortOp(OpKind.READ, 22),
    ]
    assert ops[4:] == [PortOp(OpKind.IDLE)]  # drain


def test_resting_ports_keep_their_pins_so_a_deselected_write_would_show() -> None:
    c = Contract.simple(64, 8, read_latency=1)
    # alternation 2: every second repeat the port rests with its pins as they were (write enable too).
    head = 1 | (2 << 5)  # two cycles
    cols = decode(c, BulkSpec((9,), (0,), bytes([head, 2, 1])))
    assert cols.to_cycles()[:2] == [(PortOp(OpKind.WRITE, 9, 0xFF),), (PortOp(OpKind.IDLE, 9, 0xFF),)]


def test_collision_alternation_puts_every_port_on_the_writers_address() -> None:
    from tests.test_model_fast import _two_port

    c = _two_port()
    # alternation 3 on one cycle: port y writes pool[1], port x reads pool[0] -> x reads y's address
    head = 3 << 5
    body = bytes([head, 1 | (0 << 3), 0, 2 | (1 << 3), 0])
    cyc = decode(c, BulkSpec((1, 3), (0,), body)).to_cycles()[0]
    assert cyc == (PortOp(OpKind.READ, 3), PortOp(OpKind.WRITE, 3, 0))


def test_generated_examples_are_large() -> None:
    c = Contract.simple(1024, 32)
    sizes: list[int] = []

    @settings(max_examples=20, deadline=None, database=None, suppress_health_check=list(HealthCheck))
    @given(bulk_specs(c))
    def record(spec: BulkSpec) -> None:
        sizes.append(decode(c, spec).operation_count())

    record()
    assert np.median(sizes) > 3000


def test_operation_mix_has_every_kind() -> None:
    c = Contract.simple(64, 16, lane_width=8)
    rng = np.random.default_rng(3)
    cols = decode(c, BulkSpec((1, 2, 3), (0xBEEF,), rng.integers(0, 256, 3000, dtype=np.uint8).tobytes()))
    kinds = set(np.unique(cols.kind).tolist())
    assert kinds == {IDLE, READ, WRITE}
    partial = cols.lanes_given[cols.kind == WRITE]
    assert 0.2 < partial.mean() < 0.8  # a good share of writes enable only some lanes
