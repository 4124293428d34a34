"""The reference model against a separately written naive oracle, bit for bit, known masks included."""

from __future__ import annotations

from typing import Any

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from memcheck.contract import Contract
from memcheck.model import Model
from memcheck.strategies import traces
from tests.contract_strategies import contracts
from tests.naive_oracle import NaiveOracle


def _agree(data: st.DataObject, contract: Contract, max_blocks: int = 8) -> None:
    model = Model(contract)
    oracle = NaiveOracle(contract)
    if contract.reset is not None and data.draw(st.booleans(), label="reset first"):
        model.reset()
        oracle.reset()
    for _ in range(data.draw(st.integers(1, 3), label="segments")):
        trace = data.draw(traces(contract, max_blocks=max_blocks, first_tick=model.cycle), label="trace")
        for k, cycle in enumerate(trace.cycles):
            power = trace.power_at(k)
            got = model.step(cycle, power)
            want = oracle.step(cycle, power)
            assert got == want, f"tick {k} ({power.name}): {[op.describe() for op in cycle]}: model {got} oracle {want}"
        if data.draw(st.booleans(), label="forget between segments"):
            model.forget()
            oracle.forget()


@settings(max_examples=300)
@given(st.data(), contracts())
def test_model_agrees_with_naive_oracle(data: st.DataObject, contract: Contract) -> None:
    _agree(data, contract)


_SLOW: Any = [HealthCheck.too_slow, HealthCheck.filter_too_much]


@settings(max_examples=200, deadline=None, suppress_health_check=_SLOW)
@given(st.data(), contracts(new_keys=True, max_words=12, max_width=20))
def test_model_agrees_on_lane_maps_any_lane_writes_and_out_of_range(data: st.DataObject, contract: Contract) -> None:
    _agree(data, contract)


@settings(max_examples=200, deadline=None, suppress_health_check=_SLOW)
@given(st.data(), contracts(new_keys=True, clocks=True, max_words=4, max_width=8).filter(lambda c: not c.lockstep))
def test_model_agrees_on_several_clocks_and_the_collision_window(data: st.DataObject, contract: Contract) -> None:
    # Few words, so accesses from ports on different clocks meet on one address often.
    _agree(data, contract, max_blocks=12)


@settings(max_examples=200, deadline=None, suppress_health_check=_SLOW)
@given(st.data(), contracts(new_keys=True, clocks=True, power=True, max_words=4, max_width=8))
def test_model_agrees_on_power_modes(data: st.DataObject, contract: Contract) -> None:
    _agree(data, contract, max_blocks=12)
