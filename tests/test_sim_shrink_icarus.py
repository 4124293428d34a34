"""Shrinking and the sweep on big memories under Icarus: a sweep failure that needs earlier writes
comes out as a 1-minimal trace of at most ten cycles, and a 64K-word wrapper gets its March sweep."""

from __future__ import annotations

from pathlib import Path

import pytest

from memcheck.ops import OpKind
from memcheck.sim import check_contract, replay_file

pytestmark = pytest.mark.icarus

RTL = Path(__file__).parent / "rtl"


def _contract(tmp: Path, name: str, bug: int) -> Path:
    """A copy of fixture ``name``'s contract with its source path made absolute and BUG set."""
    folder = RTL / name
    text = (folder / "contract.toml").read_text()
    text = text.replace(f'sources = ["{name}_wrap.v"]', f'sources = ["{folder / f"{name}_wrap.v"}"]')
    text = text.replace(f'top = "{name}_wrap"', f'top = "{name}_wrap"\nparameters = {{ BUG = {bug} }}')
    path = tmp / f"{name}_bug{bug}.toml"
    path.write_text(text)
    return path


def test_a_posted_write_bug_found_by_the_sweep_shrinks_to_a_one_minimal_trace(tmp_path: Path) -> None:
    """The buffer commits its oldest write to the newest entry's word: the sweep sees it a thousand
    cycles after the write it needs; the shrunk trace is that write, two writes that push it out of
    the buffer, the read and one cycle for its data."""
    res = check_contract(_contract(tmp_path, "pw", 1), phases=("smoke", "sweep"), seed=1, out_dir=tmp_path / "out")
    f = res.failure
    assert res.verdict == "fail" and f is not None and f.phase == "sweep", res.summary()
    assert len(f.trace) <= 10 and "1-minimal" in f.note
    kinds = [cyc[0].kind for cyc in f.trace.cycles]
    assert kinds.count(OpKind.WRITE) == 3 and kinds.count(OpKind.READ) == 1
    assert res.reproduced is True and res.replay_file is not None
    again = replay_file(res.replay_file, waveform=False)
    assert again.reproduced and again.checked.signature() == f.checked.signature()


def test_the_posted_write_wrapper_without_its_bug_passes_the_sweep(tmp_path: Path) -> None:
    res = check_contract(_contract(tmp_path, "pw", 0), phases=("smoke", "sweep"), seed=1, out_dir=tmp_path / "out")
    assert res.verdict == "pass", res.summary()


def test_a_64k_word_wrapper_gets_the_whole_sweep_and_a_short_trace_for_a_bug_near_the_top(tmp_path: Path) -> None:
    """March C- over 65,536 words, solid background: 655,360 operations (10N, A.J. van de Goor,
    "Testing Semiconductor Memories: Theory and Practice", 1991), run inside the simulator in batches.
    The bug (one stuck bit in word 0xFFF0) is found by the sweep near its first pass's end and shrinks
    to a write and a read of that word."""
    good = check_contract(
        _contract(tmp_path, "big", 0), phases=("sweep",), backgrounds="solid", seed=1, out_dir=tmp_path / "good"
    )
    assert good.verdict == "pass", good.summary()
    assert good.phases[0].verdict == "pass" and good.phases[0].operations == 10 * 65536
    bad = check_contract(
        _contract(tmp_path, "big", 1), phases=("sweep",), backgrounds="solid", seed=1, out_dir=tmp_path / "bad"
    )
    f = bad.failure
    assert bad.verdict == "fail" and f is not None and f.phase == "sweep"
    assert len(f.trace) <= 10 and "1-minimal" in f.note and bad.reproduced is True
    assert {op.address for cyc in f.trace.cycles for op in cyc if op.kind != OpKind.IDLE} == {0xFFF0}


def test_a_sweep_failure_that_depends_on_hidden_state_is_reported_as_a_replay_shows_it(tmp_path: Path) -> None:
    """scratchpad_bank_bug shows the other bank's output register, which the canonical restore and a
    fresh fill leave in different states: the reported run is the one after the replay's preamble, so
    a replay reproduces it exactly."""
    from memcheck.examples import examples_dir

    contract = examples_dir() / "scratchpad_bank_bug" / "contract.toml"
    res = check_contract(contract, phases=("sweep",), seed=1, out_dir=tmp_path / "out", waveform=False)
    f = res.failure
    assert res.verdict == "fail" and f is not None and f.phase == "sweep"
    assert len(f.trace) <= 10 and "1-minimal" in f.note
    assert res.reproduced is True
