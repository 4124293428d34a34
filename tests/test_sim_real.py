"""The simulator side of memories as they are: several clocks with their own periods and phases, a
slow clock-to-output delay against the clock period and ``[timing] sample``, addresses beyond
``words`` driven over the whole address pin, and read-back through a read-only port in the smoke phase.

Each invented fixture under tests/rtl/ has a conforming variant that passes and a bug that is caught
with a short trace that replays. Same-instant edges follow IEEE 1364-2005 section 11 (scheduling
semantics): processes of one time step run in any order, nonblocking updates after all of them.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest
from hypothesis import given, settings

from memcheck.contract import Contract, load_contract, parse_contract
from memcheck.ops import Expected, OpKind, PortOp, Power, Trace
from memcheck.records import CheckedTrace, CheckResult, CycleRow, Failure, Observed, Settled
from memcheck.report.json_report import report_dict
from memcheck.report.text import render_report
from memcheck.sim import check_contract, replay_file
from memcheck.sim.checking.sequences import restore_targets
from memcheck.sim.checking.settling import timing_hint
from memcheck.sim.checking.ticks import edge_pattern, harness_timing, hyper_ticks, lay
from memcheck.sim.plumbing.words import HarnessLayout
from memcheck.strategies import hot_addresses, traces

RTL = Path(__file__).parent / "rtl"


def _fixture(tmp_path: Path, name: str, **fields: str) -> Contract:
    """Copy tests/rtl/<name> to tmp_path and fill its contract template (or copy contract.toml)."""
    folder = tmp_path / name
    shutil.copytree(RTL / name, folder)
    template = folder / "contract.toml.in"
    path = folder / "contract.toml"
    if template.is_file():
        path.write_text(template.read_text(encoding="utf-8").format(**fields), encoding="utf-8")
    return load_contract(path)


def _run(c: Contract, tmp_path: Path, **opts: object) -> CheckResult:
    return check_contract(c, seed=4, out_dir=tmp_path / "out", waveform=False, **opts)  # type: ignore[arg-type]


def _caught_short_and_replays(res: CheckResult, max_cycles: int = 12) -> None:
    assert res.verdict == "fail", res.summary()
    assert res.failure is not None and res.replay_file is not None
    assert len(res.failure.trace) <= max_cycles, res.summary()
    assert res.reproduced, res.summary()
    again = replay_file(res.replay_file, waveform=False)
    assert again.reproduced, "the replay must show the recorded mismatch"


# -- the tick timeline and the harness's timing (no simulator) -----------------------------------


def test_dual_clock_pattern_and_harness_times_are_exact() -> None:
    c = load_contract(RTL / "dual" / "contract.toml")
    # clka 10 ns phase 0, clkb 15 ns phase 3: in 30 ns, a at 0, 10, 20 and b at 3, 18 (hand-worked)
    assert hyper_ticks(c) == 5
    assert edge_pattern(c).tolist() == [[True, False], [False, True], [True, False], [False, True], [True, False]]
    t = harness_timing(c)
    assert t.timescale == "1ps/1ps" and t.tick_times == (0, 3000, 10000, 18000, 20000)
    a, b = t.groups
    # first edge of each group = lead + phase; inputs 1 ns after each edge, sample 1 ns before the next
    assert (a.first + a.period, b.first + b.period) == (t.lead, t.lead + 3000)
    assert (a.apply, a.sample, b.apply, b.sample) == (1000, 9000, 1000, 14000)


def test_laying_puts_every_operation_on_an_edge_of_its_port() -> None:
    c = load_contract(RTL / "dual" / "contract.toml")
    from memcheck.ops import NO_EDGE, read, write

    laid = lay(c, [(write(1, 5), read(1)), (read(2), write(3, 4))])
    assert len(laid) % hyper_ticks(c) == 0
    ops = [(k, i, op) for k, cyc in enumerate(laid) for i, op in enumerate(cyc) if op.kind.name in ("READ", "WRITE")]
    assert [(i, op) for _, i, op in ops] == [(0, write(1, 5)), (1, read(1)), (0, read(2)), (1, write(3, 4))]
    pat = edge_pattern(c).tolist()
    for k, cyc in enumerate(laid):
        for i, op in enumerate(cyc):
            assert (op == NO_EDGE) == (not pat[k % len(pat)][i])


def test_sample_point_moves_the_capture_and_keeps_room_for_the_inputs() -> None:
    text = (RTL / "slow" / "contract.toml.in").read_text(encoding="utf-8")
    c = parse_contract(
        text.format(period="20.0", timing="[timing]\nsample = 12.5\n", sample_note=""), base_dir=RTL / "slow"
    )
    (g,) = harness_timing(c).groups
    assert (g.period, g.apply, g.sample) == (20000, 1000, 12500)


# -- under Icarus ---------------------------------------------------------------------------------


@pytest.mark.icarus
def test_dual_clock_tdp_conforms_and_an_address_bug_on_the_second_clock_is_caught(tmp_path: Path) -> None:
    c = _fixture(tmp_path, "dual")
    res = _run(c, tmp_path / "ok", examples=25, bulk_examples=2)
    assert res.verdict == "pass", res.summary()
    bug_file = tmp_path / "dual" / "bug.toml"
    text = (tmp_path / "dual" / "contract.toml").read_text(encoding="utf-8")
    bug_file.write_text(text.replace('top = "tdp_dual"', 'top = "tdp_dual"\ndefines = { BUG_B_ADDR = 1 }'), "utf-8")
    bug = load_contract(bug_file)
    res = _run(bug, tmp_path / "bug", examples=25, bulk_examples=0, phases=("smoke", "property"))
    _caught_short_and_replays(res)


@pytest.mark.icarus
def test_slow_clock_to_output_fails_at_10_ns_and_passes_at_20_ns(tmp_path: Path) -> None:
    fast = _fixture(tmp_path / "a", "slow", period="10.0", timing="", sample_note="")
    res = _run(fast, tmp_path / "a", examples=10, bulk_examples=0, phases=("smoke", "property"))
    _caught_short_and_replays(res)
    # the replay records how the read data settled: the report points at the timing, not the logic
    assert res.failure is not None
    hint = res.failure.timing_hint
    assert "after the sample point" in hint and "check [timing] sample or the clock period" in hint, hint
    assert "2 ns after" in hint  # valid 11 ns after the edge, sampled at 9 ns (hand-worked)
    assert f"Timing: {hint}" in render_report(res)
    assert report_dict(res)["minimal_trace"]["timing_hint"] == hint
    slow = _fixture(tmp_path / "b", "slow", period="20.0", timing="", sample_note="")
    assert _run(slow, tmp_path / "b", examples=10, bulk_examples=1).verdict == "pass"


@pytest.mark.icarus
def test_a_sample_point_before_the_data_settles_fails(tmp_path: Path) -> None:
    # 20 ns clock: the data is valid 11 ns after the edge; sampling at 10 ns is too early, at 12 ns fine
    early = _fixture(tmp_path / "a", "slow", period="20.0", timing="[timing]\nsample = 10.0\n", sample_note="")
    res = _run(early, tmp_path / "a", examples=10, bulk_examples=0, phases=("smoke",))
    assert res.verdict == "fail", res.summary()
    late = _fixture(tmp_path / "b", "slow", period="20.0", timing="[timing]\nsample = 12.0\n", sample_note="")
    assert _run(late, tmp_path / "b", examples=10, bulk_examples=1).verdict == "pass"


@pytest.mark.icarus
@pytest.mark.parametrize(
    ("words", "out_of_range", "defines", "verdict"),
    [
        ("512", "ignore", "", "pass"),  # ignores addresses >= 512: as promised
        ("512", "wrap", "", "fail"),  # ... but does not alias them
        ("512", "wrap", "WRAP = 1", "pass"),  # aliases: as promised
        ("512", "ignore", "WRAP = 1", "fail"),  # ... so a write at 512 + a changes word a
        ("1024", "unchecked", "WRAP = 1", "fail"),  # 1024 words declared, 512 stored
    ],
)
def test_addresses_beyond_words_are_driven_over_the_whole_pin(
    tmp_path: Path, words: str, out_of_range: str, defines: str, verdict: str
) -> None:
    c = _fixture(tmp_path, "oor", words=words, out_of_range=out_of_range, defines=defines)
    phases = ("property",) if words == "512" else ("smoke", "sweep", "property")
    res = _run(c, tmp_path, examples=40, bulk_examples=2, phases=phases)
    assert res.verdict == verdict, res.summary()
    if verdict == "fail":
        _caught_short_and_replays(res)


@pytest.mark.icarus
def test_smoke_reads_back_through_a_read_only_port(tmp_path: Path) -> None:
    ok = _fixture(tmp_path / "a", "r1w1", defines="")
    assert _run(ok, tmp_path / "a", phases=("smoke",)).verdict == "pass"
    bug = _fixture(tmp_path / "b", "r1w1", defines="BUG_READ_ADDR = 1")
    res = _run(bug, tmp_path / "b", phases=("smoke",))
    assert res.verdict == "fail", res.summary()
    assert res.phases[0].name == "smoke" and res.phases[0].verdict == "fail"
    _caught_short_and_replays(res)


@pytest.mark.icarus
@pytest.mark.parametrize(
    ("defines", "verdict"), [("", "pass"), ("BUG_SLEEP_WRITE = 1", "fail"), ("BUG_NO_WAKE = 1", "fail")]
)
def test_power_pins_are_driven_with_sleep_and_shutdown_episodes(tmp_path: Path, defines: str, verdict: str) -> None:
    c = _fixture(tmp_path, "pwr", defines=defines)
    res = _run(c, tmp_path, examples=150, bulk_examples=1)
    assert res.verdict == verdict, res.summary()
    if verdict == "fail":
        _caught_short_and_replays(res)
        assert res.failure is not None and any(res.failure.trace.power), "the failing trace has a power episode"


# -- records, hints and stimulus (no simulator) ---------------------------------------------------


def _slow(period: str = "10.0") -> Contract:
    text = (RTL / "slow" / "contract.toml.in").read_text(encoding="utf-8")
    return parse_contract(text.format(period=period, timing="", sample_note=""), base_dir=RTL / "slow")


def _failing_row(settled_after: float, settled_value: int) -> CheckedTrace:
    row = CycleRow(
        3,
        (PortOp(OpKind.IDLE),),
        (Expected(0x5A, 0xFF),),
        (Observed(0, 0),),  # all X at the sample point
        (0xFF,),
        Power.SLEEP,
        (Settled(settled_value, 0xFF, settled_after),),
    )
    return CheckedTrace("unknown", (row,))


def test_timing_hint_names_settling_after_the_sample_point_but_not_a_change_at_an_edge() -> None:
    c = _slow()
    # 10 ns clock, sample at 9 ns: the expected value 2 ns later is settling (data valid at 11 ns)
    hint = timing_hint(c, _failing_row(2.0, 0x5A))
    assert hint.startswith("port a, cycle 3: read data settled 2 ns after the sample point")
    assert hint.endswith("check [timing] sample or the clock period.")
    # another value, but the X cleared: still a timing hint
    assert "an X on the read data cleared 2 ns" in timing_hint(c, _failing_row(2.0, 0x11))
    # 1 ns after the sample point is the next rising edge: a synchronous change (latency), no hint
    assert timing_hint(c, _failing_row(1.0, 0x5A)) == ""


def test_rows_and_failures_keep_power_settling_and_the_hint_through_json() -> None:
    checked = _failing_row(2.0, 0x5A)
    again = CheckedTrace.from_json(checked.to_json())
    assert again == checked and again.rows[0].settled == checked.rows[0].settled
    assert again.trace.power == (Power.SLEEP,)
    f = Failure("property", ("reset",), checked, timing_hint="read data settled 2 ns after the sample point")
    assert Failure.from_json(f.to_json()) == f


def test_power_examples_put_a_write_before_the_episode_and_a_read_of_it_after() -> None:
    c = _fixture_contract("pwr", defines="")
    seen = []

    @settings(max_examples=60, deadline=None, database=None)
    @given(traces(c, max_blocks=3))
    def collect(t: Trace) -> None:
        seen.append(t)

    collect()
    episodes = [t for t in seen if t.power]
    assert episodes, "power contracts get power episodes"
    for t in episodes:
        k = next(i for i, p in enumerate(t.power) if p != Power.ON)
        assert k >= 1 and len(t.power) == len(t)
    assert any(t.cycles[t.power.index(next(p for p in t.power if p)) - 1][0].kind == OpKind.WRITE for t in episodes)


def test_out_of_range_addresses_cover_the_whole_pin_and_restores_write_the_aliased_word() -> None:
    wrap = _fixture_contract("oor", words="512", out_of_range="wrap", defines="")
    hot = hot_addresses(wrap, pin_bits=10)
    assert {512, 513, 1023} <= set(hot) and max(hot) == 1023
    assert restore_targets(wrap, [3, 515, 1023]) == [3, 511]
    ignore = _fixture_contract("oor", words="512", out_of_range="ignore", defines="")
    assert restore_targets(ignore, [3, 515, 1023]) == [3]


def _fixture_contract(name: str, **fields: str) -> Contract:
    text = (RTL / name / "contract.toml.in").read_text(encoding="utf-8").format(**fields)
    return parse_contract(text, base_dir=RTL / name)


def test_a_batch_splits_over_the_clock_groups_word_by_word() -> None:
    import numpy as np

    from memcheck.model_fast import Columns
    from memcheck.ops import read, write

    c = load_contract(RTL / "dual" / "contract.toml")
    widths = {"addra": 5, "addrb": 5, "dina": 16, "dinb": 16, "douta": 16, "doutb": 16}
    lay_ = HarnessLayout.build(c, widths)
    cycles = lay(c, [(write(1, 0xAB), read(2)), (read(1), write(2, 0xCD)), (read(3), read(3))])
    texts, tick, rows = lay_.stim(Columns.from_cycles(c, cycles), np.zeros(len(cycles), dtype=bool))
    assert tick is None  # no reset, no power: no per-tick file
    pat = edge_pattern(c)
    for g, (text, r) in enumerate(zip(texts, rows, strict=True)):
        port = lay_.timing.groups[g].ports[0]
        assert [int(k) for k in r] == [k for k in range(len(cycles)) if pat[k % len(pat), port]]
        words = [int(w, 16) for w in text.decode().split()]
        assert words == [lay_.words[g].encode(cycles[k]) for k in r]


@pytest.mark.icarus
@pytest.mark.parametrize(("defines", "verdict"), [("", "pass"), ("BUG_SLEEP_WRITE = 1", "fail")])
def test_two_clocks_with_reset_and_sleep_drive_the_per_tick_pins(tmp_path: Path, defines: str, verdict: str) -> None:
    c = _fixture(tmp_path, "pwr2", defines=defines)
    assert HarnessLayout.build(c, {"waddr": 4, "raddr": 4, "wdata": 8, "rdata": 8}).tick is not None
    res = _run(c, tmp_path, examples=150, bulk_examples=1)
    assert res.verdict == verdict, res.summary()
    if verdict == "fail":
        _caught_short_and_replays(res, max_cycles=24)  # ticks of two clocks: about 8 cycles of each


@pytest.mark.icarus
def test_march_run_on_two_clocks_names_the_failing_tick_and_replays(tmp_path: Path) -> None:
    from memcheck.sim import run_march

    folder = tmp_path / "dual"
    shutil.copytree(RTL / "dual", folder)
    text = (folder / "contract.toml").read_text(encoding="utf-8")
    (folder / "bug.toml").write_text(text.replace('top = "tdp_dual"', 'top = "tdp_dual"\ndefines = { BUG_B_ADDR = 1 }'))
    r = run_march(load_contract(folder / "bug.toml"), "MATS+", port="b", out_dir=tmp_path / "out", waveform=False)
    assert r.verdict == "fail" and r.failure is not None
    assert r.failure.port == "b" and "March step is not named" in r.failure.description
    assert r.reproduced and r.replay_file is not None
    assert replay_file(r.replay_file, waveform=False).reproduced
