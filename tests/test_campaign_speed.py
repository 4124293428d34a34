"""Campaign speed work (issue #15): the Verilator build gives Icarus's results shard for shard and agrees
with the fast fault simulator; ``auto`` picks the simulator by the campaign's size; an unreachable
scheduler is refused naming it; the budget check counts the sampled universe.

The independent second model is the fault simulator (memcheck.faults.fast), as in test_campaign.py;
Icarus and Verilator are two independent simulators of the same Verilog.
"""

from __future__ import annotations

import shutil
import socket
import threading
from collections.abc import Iterator
from contextlib import contextmanager

import pytest

from memcheck.bist.campaign import CampaignSpec, execute, prepare, run_campaign, scheduler
from memcheck.bist.campaign.plan import MAX_INSTANCES, check_budget, universe_size
from memcheck.bist.campaign.rtl import ShardResult
from memcheck.bist.campaign.verilator import AUTO_VERILATOR_WORK, choose_simulator, tools_missing
from memcheck.cli import main
from memcheck.errors import BistError
from memcheck.faults.geometry import Arrangement
from memcheck.faults.sampling import class_size
from memcheck.faults.universe import CLASSES, parse_universe

needs_icarus = pytest.mark.skipif(shutil.which("iverilog") is None, reason="needs Icarus Verilog")
needs_both = pytest.mark.skipif(
    shutil.which("iverilog") is None or bool(tools_missing()), reason="needs Icarus Verilog and Verilator"
)


def _shards(spec: CampaignSpec) -> list[ShardResult]:
    return execute(prepare(spec), workers=2)


@needs_both
def test_verilator_gives_icarus_results_shard_for_shard() -> None:
    # every class on a 32 x 8 memory, lfsr order, standard backgrounds: same fail flags, same first
    # failing operation per copy, same engine flag, in the same shards
    spec = CampaignSpec("March C-", 32, 8, order="lfsr", universe="sample:6", seed=3, copies=128)
    icarus = _shards(CampaignSpec(**{**spec.__dict__, "simulator": "icarus"}))
    verilator = _shards(CampaignSpec(**{**spec.__dict__, "simulator": "verilator"}))
    assert len(icarus) > 1 and icarus == verilator
    assert any(any(r.failed) for r in icarus) and not all(all(r.failed) for r in icarus)
    assert any(r.engine_fail for r in icarus) and any(w is not None for r in icarus for w in r.first)


@needs_both
@pytest.mark.slow
@pytest.mark.parametrize(
    ("test", "words", "width", "order"),
    # the first shares its compiled harness with the test above (same engine, seed and copies)
    [("March C-", 32, 8, "lfsr"), ("March SS", 64, 1, "linear"), ("MATS+", 64, 1, "lfsr")],
)
def test_verilator_campaigns_agree_with_the_fault_simulator(test: str, words: int, width: int, order: str) -> None:
    spec = CampaignSpec(test, words, width, order=order, universe="sample:120", seed=3, copies=128)
    report = run_campaign(CampaignSpec(**{**spec.__dict__, "simulator": "verilator"}), workers=2)
    assert report.simulator == "verilator"
    assert [c.cls for c in report.classes] == list(CLASSES)  # every class, dynamic ones included
    assert report.disagreements == ()


def test_auto_takes_icarus_for_small_campaigns_and_refuses_unknown_names() -> None:
    assert choose_simulator("auto", AUTO_VERILATOR_WORK - 1) == "icarus"
    assert choose_simulator("icarus", 10 * AUTO_VERILATOR_WORK) == "icarus"
    expected = "icarus" if tools_missing() else "verilator"
    assert choose_simulator("auto", AUTO_VERILATOR_WORK) == expected
    with pytest.raises(BistError, match="unknown simulator"):
        choose_simulator("questa", 1)


@needs_icarus
def test_small_campaigns_run_on_icarus_by_default() -> None:
    report = run_campaign(CampaignSpec("MATS+", 8, 1, classes="SAF", seed=1), workers=1)
    assert report.simulator == "icarus" and report.to_json()["timing"]["simulator"] == "icarus"
    assert [k for k, _ in report.phases] == ["plan", "simulate", "compare"]


def test_an_unreachable_scheduler_exits_2_naming_it_before_any_planning(capsys: pytest.CaptureFixture[str]) -> None:
    with socket.socket() as s:  # a port nobody listens on
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    address = f"tcp://127.0.0.1:{port}"
    argv = ["bist", "campaign", "MATS+", "--words", "8", "--universe", "sample:1", "--scheduler", address]
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert address in err and "Traceback" not in err and "cannot reach" in err


@contextmanager
def _listener(greeting: bytes | None) -> Iterator[str]:
    """A loopback server that accepts connections and says ``greeting`` (None: nothing) then stays open."""
    server = socket.socket()
    server.bind(("127.0.0.1", 0))
    server.listen(8)
    server.settimeout(0.2)
    stop = threading.Event()
    held: list[socket.socket] = []

    def serve() -> None:
        while not stop.is_set():
            try:
                conn, _ = server.accept()
            except TimeoutError:
                continue
            if greeting is not None:
                conn.sendall(greeting)
            held.append(conn)

    thread = threading.Thread(target=serve, daemon=True)
    thread.start()
    try:
        yield f"tcp://127.0.0.1:{server.getsockname()[1]}"
    finally:
        stop.set()
        thread.join(5)
        for conn in held:
            conn.close()
        server.close()


def test_a_silent_listener_is_not_taken_for_a_scheduler(
    capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    # it accepts the connection but never sends Dask's handshake (which a scheduler sends at once)
    monkeypatch.setattr(scheduler, "PROBE_TIMEOUT", 0.5)
    with _listener(None) as address:
        assert main(["bist", "campaign", "MATS+", "--words", "8", "--scheduler", address]) == 2
    err = capsys.readouterr().err
    assert address in err and "no answer" in err and "Traceback" not in err


def test_a_listener_speaking_another_protocol_is_refused(
    capsys: pytest.CaptureFixture[str], monkeypatch: pytest.MonkeyPatch
) -> None:
    pytest.importorskip("dask.distributed")
    monkeypatch.setattr(scheduler, "CLIENT_TIMEOUT", 3.0)
    with _listener(b"HELLO-1.0 some other service\r\n") as address:
        assert main(["bist", "campaign", "MATS+", "--words", "8", "--scheduler", address]) == 2
    err = capsys.readouterr().err
    assert address in err and "cannot reach" in err and "Traceback" not in err


def test_a_scheduler_address_that_is_not_host_port_exits_2(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["bist", "campaign", "MATS+", "--words", "8", "--scheduler", "tcp://nowhere"]) == 2
    assert "tcp://nowhere" in capsys.readouterr().err


def test_the_budget_counts_the_sampled_universe() -> None:
    setup = Arrangement(1 << 20, 64, layout=(1024, 1 << 14))
    classes = ["SAF", "CFid"]
    # all: refused (far above the limit); a sample of 1000 per class: 2,000 instances, accepted
    with pytest.raises(BistError, match="all"):
        check_budget(setup, classes, parse_universe("all", 1))
    sample = parse_universe("sample:1000", 1)
    assert universe_size(setup, classes, sample) == 2000
    check_budget(setup, classes, sample)
    check_budget(setup, classes, parse_universe("sample:1000:neighbours", 1))
    # a sample too big for the limit is refused with its own count
    big = parse_universe(f"sample:{MAX_INSTANCES}", 1)
    with pytest.raises(BistError, match=f"{2 * MAX_INSTANCES:,}"):
        check_budget(setup, classes, big)


def test_a_sample_larger_than_a_class_counts_the_class() -> None:
    setup = Arrangement(8, 1)
    sample = parse_universe("sample:1000", 1)
    assert universe_size(setup, ["SAF", "CFid"], sample) == class_size("SAF", setup) + class_size("CFid", setup)


def test_fast_row_packing_equals_the_table_format() -> None:
    from memcheck.bist.campaign.plan import _fields
    from memcheck.bist.faulty_memory import model_bits, pack_row
    from memcheck.faults import CellFault, CouplingFault

    prepared = prepare(CampaignSpec("March C-", 16, 4, universe="sample:5", seed=8, simulator="icarus"))
    flat = [f for _, found in prepared.instances for f in found]
    assert len({type(f) for f in flat}) == 4  # cell, coupling, stuck-open and decoder faults
    for row in prepared.rows:
        fault = flat[row.instance]
        fields = _fields(fault, row.state, row.bit)
        if isinstance(fault, CellFault | CouplingFault):
            fields.update(model_bits(fault.model))
        for drive in (False, True):
            assert row.packed(drive) == pack_row({**fields, "drive": int(drive)})


def test_an_unknown_simulator_on_the_command_line_exits_2(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["bist", "campaign", "MATS+", "--words", "8", "--simulator", "questa"]) == 2
    assert "questa" in capsys.readouterr().err
