"""The reference model against a separately written naive oracle, bit for bit, known masks included."""

from __future__ import annotations

from hypothesis import given, settings
from hypothesis import strategies as st

from memcheck.contract import Contract
from memcheck.model import Model
from memcheck.strategies import traces
from tests.contract_strategies import contracts
from tests.naive_oracle import NaiveOracle


@settings(max_examples=300)
@given(st.data(), contracts())
def test_model_agrees_with_naive_oracle(data: st.DataObject, contract: Contract) -> None:
    model = Model(contract)
    oracle = NaiveOracle(contract)
    if contract.reset is not None and data.draw(st.booleans(), label="reset first"):
        model.reset()
        oracle.reset()
    for _ in range(data.draw(st.integers(1, 3), label="segments")):
        trace = data.draw(traces(contract, max_blocks=8), label="trace")
        for k, cycle in enumerate(trace.cycles):
            got = model.step(cycle)
            want = oracle.step(cycle)
            assert got == want, f"cycle {k}: {[op.describe() for op in cycle]}: model {got} oracle {want}"
        if data.draw(st.booleans(), label="forget between segments"):
            model.forget()
            oracle.forget()
