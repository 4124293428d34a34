"""Report items of real memories: inputs nothing drives come first, a failure that passes when run
again is called a likely race, the real build time, a warning for a huge simulator log, and a
"not checked" list that names only what this memory and its RTL can have."""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

import pytest

from memcheck.contract import Contract, PortSpec, unchecked_behaviours
from memcheck.ops import PortOp, read, write
from memcheck.records import LIKELY_RACE, CheckResult, CheckVerdict, Failure, Observed, PhaseResult
from memcheck.report.text import render_report
from memcheck.sim.checking.compare import check
from memcheck.sim.checking.phases import PhaseRunner
from memcheck.sim.options import SimOptions
from memcheck.sim.plumbing.launch import log_size_note
from tests.sim_pyram import PyRam, contract


def _failing_result(**fields: object) -> CheckResult:
    c = Contract.simple(16, 8)
    cycles = [(write(2, 0xAB),), (read(2),), (PortOp(),)]
    ct = check(c, "unknown", cycles, [(Observed(0, 0),), (Observed(0, 0),), (Observed(0x12, 0xFF),)])
    return CheckResult(
        verdict=CheckVerdict.FAIL,
        contract=c,
        contract_path=None,
        seed=1,
        phases=(PhaseResult("property", "fail", 3, 2, 0.1),),
        failure=Failure("property", ("reset", "fill", "flush"), ct),
        **fields,  # type: ignore[arg-type]
    )


def test_unconnected_inputs_come_first_as_the_likely_cause() -> None:
    text = render_report(_failing_result(unconnected_inputs=("clkb", "pwr_ok")))
    cause = text.index("Likely cause of the difference below")
    assert "clkb, pwr_ok" in text[cause:].splitlines()[0]
    assert cause < text.index("cycle  port") < text.index("Not checked")
    assert "[rtl] tie" in text
    assert "Likely cause" not in render_report(_failing_result())


def test_build_time_is_the_real_one_or_says_reused() -> None:
    assert "(build 1.3 s)" in _failing_result(build_seconds=1.26).summary()
    assert "(build reused, 0.0 s)" in _failing_result(build_seconds=0.01, build_reused=True).summary()


def test_a_failure_that_passes_when_run_again_is_called_a_likely_race() -> None:
    # PyRam's "race" corrupts one read once: Hypothesis runs the failing example again from the same
    # state and it passes, as a same-edge race in RTL does under another process order.
    c = contract()
    opts = SimOptions(examples=100, seed=2, bulk_examples=0, phases=("property",))
    res = PhaseRunner(c, PyRam(c, "race"), opts).run()
    assert res.failure is not None and res.failure.note == LIKELY_RACE
    assert "likely a race in the RTL" in LIKELY_RACE and "state left by earlier examples" not in LIKELY_RACE
    # the source of the undefined order is named (IEEE 1364-2005 clause 11, IEEE 1800-2017 clause 4)
    assert "IEEE 1364-2005 §11" in LIKELY_RACE and "IEEE 1800-2017 §4" in LIKELY_RACE
    text = render_report(replace(_failing_result(), failure=res.failure))
    assert "likely a race in the RTL" in text


def test_a_huge_simulator_log_earns_a_warning(tmp_path: Path) -> None:
    log = tmp_path / "sim.log"
    assert log_size_note(log) is None  # no log
    log.write_bytes(b"x" * 3000)
    assert log_size_note(log, limit=4000) is None
    note = log_size_note(log, limit=2000)
    assert note is not None and str(log) in note and "[rtl] defines" in note
    text = render_report(_failing_result(notes=(note,)))
    assert f"note: {note}" in text


def test_not_checked_lists_only_what_can_apply() -> None:
    c = Contract.simple(16, 8, enable=False, idle_read_data="unknown")
    # a readwrite port without an enable reads on every edge that does not write: no idle edges
    assert not any("idle_read_data" in u for u in c.unchecked_behaviours())
    with_enable = Contract.simple(16, 8, idle_read_data="unknown")
    assert any("idle_read_data" in u for u in with_enable.unchecked_behaviours())
    # upper address bits: listed only when the RTL's address pin has bits above the ones words needs
    port: PortSpec = c.ports[0]
    assert any("address pin bits above bit 3" in u for u in unchecked_behaviours(c))
    assert not any("address pin bits" in u for u in unchecked_behaviours(c, {port.address: 4}))
    assert any("address pin bits above bit 3" in u for u in unchecked_behaviours(c, {port.address: 6}))
    # ... and a check result uses the widths the RTL declared
    assert not any("address pin bits" in u for u in _failing_result(pin_widths={"addr": 4}).unchecked)


@pytest.mark.parametrize(
    ("name", "needles"),
    [
        (
            "tile_exchange",
            [
                "rising edges at 5.0 + k x 15.0 ns; port compute steps on these edges",
                "edges of different clocks at the same instant are simultaneous",
                "less than 2.0 ns apart collide",
                "less than 2.0 ns away (collision_window)",  # unchecked
            ],
        ),
        (
            "coeff_store_slow",
            [
                "read data is sampled 15.0 ns after the rising edge that begins the cycle in which it is due",
                "1ns/100ps for RTL files without a `timescale directive",
                "read data from the edge to 15.0 ns after it, and after that ([timing] sample)",  # unchecked
            ],
        ),
        (
            "retention_buffer",
            [
                "sleep_req (active high), sampled by rising edges: contents kept, accesses ignored",
                "pwr_ok (active low)",
                "read data due after an edge that sampled a power pin: zero",
                "test_mode = 0",
                "accesses and read data on the first 1 edge(s) after wake-up (wake_cycles)",  # unchecked
                "contents after a shutdown",  # unchecked
            ],
        ),
        (
            "flit_store",
            [
                "lane 3 = bits 35:27",
                "lane 8 = bits 75:72",
                "no write_enable: an access with any lane enable active writes those lanes",
            ],
        ),
    ],
)
def test_validate_explains_each_new_key_of_the_real_memory_examples(
    name: str, needles: list[str], capsys: pytest.CaptureFixture[str]
) -> None:
    from memcheck.cli import main
    from memcheck.examples import examples_dir

    assert main(["contract", "validate", str(examples_dir() / name / "contract.toml")]) == 0
    out = " ".join(capsys.readouterr().out.split())
    for needle in needles:
        assert needle in out, needle
    assert "idle_read_data" not in out.split("Not promised")[-1]  # keep: nothing left unknown there


def test_a_collision_window_on_identical_clocks_is_explained_as_doing_nothing() -> None:
    from memcheck.contract import key_explanations

    c = Contract.simple(16, 8, collision_window=1.0)
    assert ("[memory] collision_window", "changes nothing here: every port clock has the same edges") in (
        key_explanations(c)
    )
