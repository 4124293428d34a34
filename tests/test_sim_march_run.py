"""``memcheck march run`` / ``run_march``: one March test alone on wrapper RTL, first failing operation.

The pure-Python part (ports, laying the stream out as cycles, finding and naming the first failure)
is tested against a small Python memory written here, independent of memcheck's model; the
end-to-end part runs memcheck/examples/ wrappers and a small generated RAM with injected faults under
Icarus. Every expected first failure below is worked out by hand from the test's notation.
"""

from __future__ import annotations

import json
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from memcheck.cli import main
from memcheck.contract import Contract, load_contract
from memcheck.errors import InvalidOperation, MemcheckError, NotationError, UnknownAlgorithm, UsageError
from memcheck.examples import examples_dir
from memcheck.march.expand import Pause
from memcheck.model_fast import Columns
from memcheck.ops import Cycle, OpKind
from memcheck.records import Observed
from memcheck.report import render_march_report
from memcheck.sim.checking.march_job import MarchJob, run_march_job
from memcheck.sim.checking.march_naming import check_schedule as check_program
from memcheck.sim.checking.march_naming import failure_from_job
from memcheck.sim.checking.runner import Runner as Engine
from memcheck.sim.checking.schedule import choose_ports
from memcheck.sim.checking.sequences import Segment
from memcheck.sim.jobs.march import check_by_replay, prepare, run_march
from memcheck.sim.options import SimOptions
from memcheck.sim.session import Session
from memcheck.strategies import drain_cycle
from tests.contract_strategies import contracts

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = examples_dir()
REGFILE = EXAMPLES / "regfile" / "contract.toml"
BANKED = EXAMPLES / "scratchpad_banked" / "contract.toml"
BANK_BUG = EXAMPLES / "scratchpad_bank_bug" / "contract.toml"

MATS_PLUS = "MATS+"  # {⇕(w0); ⇑(r0,w1); ⇓(r1,w0)}
MARCH_C_MINUS = "March C-"  # {⇕(w0); ⇑(r0,w1); ⇑(r1,w0); ⇓(r0,w1); ⇓(r1,w0); ⇕(r0)}


# -- a small Python memory (independent of memcheck.model) ----------------------------------------


def tiny_contract(**memory: Any) -> Contract:
    """16 x 8, one readwrite port with an enable, read latency 1, read data held on writes and idles."""
    keys: dict[str, Any] = {"read_latency": 1, "read_during_write": "keep", "idle_read_data": "keep", **memory}
    return Contract.simple(16, 8, **keys)


def stand_in(
    cycles: Sequence[Cycle],
    *,
    words: int = 16,
    width: int = 8,
    stuck: tuple[int, int, int] | None = None,
    sleep_after: int = 0,
    clear_when_idle: bool = False,
) -> list[tuple[Observed | None, ...]]:
    """What a registered-output RAM shows before each edge. ``stuck`` = (address, bit, value): that
    cell reads as ``value``; ``sleep_after``: after that many idle edges every word becomes X;
    ``clear_when_idle``: the output register clears on an idle edge (breaks idle_read_data keep)."""
    mask = (1 << width) - 1
    mem: list[int | None] = [None] * words
    rdata: int | None = None
    idle = 0
    out: list[tuple[Observed | None, ...]] = []
    for cyc in cycles:
        out.append((Observed(0, 0) if rdata is None else Observed(rdata, mask),))
        op = cyc[0]
        if op.kind == OpKind.WRITE:
            mem[op.address] = op.data
            idle = 0
        elif op.kind == OpKind.READ:
            v = mem[op.address]
            if stuck is not None and op.address == stuck[0] and v is not None:
                v = (v | 1 << stuck[1]) if stuck[2] else (v & ~(1 << stuck[1]))
            rdata = v
            idle = 0
        else:
            idle += 1
            if clear_when_idle:
                rdata = 0
            if sleep_after and idle >= sleep_after:
                mem = [None] * words
    return out


def program_for(contract: Contract, test: str, **options: object):  # type: ignore[no-untyped-def]
    opts = SimOptions().replace(**options)
    schedule, _ = prepare(contract, test, opts)
    return schedule


# -- ports ---------------------------------------------------------------------------------------


def test_default_ports_readwrite_then_write_and_read() -> None:
    assert choose_ports(tiny_contract()) == (0, 0)
    rf = load_contract(REGFILE)  # ports: rd (read), wr (write)
    assert choose_ports(rf) == (1, 0)
    assert choose_ports(rf, "wr,rd") == (1, 0)


@pytest.mark.parametrize(
    ("spec", "words"),
    [
        ("rd", "cannot write"),
        ("wr", "cannot read"),
        ("rd,wr", "cannot write"),
        ("nope", "no port 'nope'"),
        ("wr,rd,wr", "WRITER,READER"),
    ],
)
def test_ports_that_cannot_do_the_job_are_refused(spec: str, words: str) -> None:
    with pytest.raises(InvalidOperation, match=words):
        choose_ports(load_contract(REGFILE), spec)


# -- the stream as cycles --------------------------------------------------------------------------


def test_cycles_one_operation_each_back_to_back_plus_pauses_and_drain() -> None:
    c = tiny_contract(read_latency=2)
    p = program_for(c, "{any(w1); del(10ms); up(r1,w0); del; down(r0)}", backgrounds="solid", pause_cycles=7)
    ops = 16 * 4
    assert p.operations == ops
    cycles = p.cycles()
    assert len(cycles) == p.total_cycles == ops + 2 * 7 + 2  # two pauses, read_latency quiet cycles at the end
    assert [(s.start, s.stop) for s in p.pauses] == [(16, 23), (55, 62)]
    # Each operation sits on its own cycle, in stream order; quiet cycles carry none.
    assert [k for k in range(len(cycles)) if p.op_at(k) >= 0][:17] == [*range(16), 23]
    assert all(p.op_at(k) == -1 for k in range(16, 23))
    assert cycles[23][0].kind == OpKind.READ and cycles[23][0].address == 0
    assert cycles[-1][0].kind == OpKind.IDLE
    # The last element walks down: its first read is address 15.
    assert cycles[62][0].address == 15


def test_reads_before_the_first_write_are_left_to_the_model() -> None:
    p = program_for(tiny_contract(), "{up(r0); any(w1); up(r1)}", backgrounds="solid")
    due, expected, ops = p.judged_reads()  # the second element's 16 reads, not the first's
    assert list(ops) == list(range(32, 48)) and list(due) == [k + 1 for k in range(32, 48)]
    assert {int(e[0]) for e in expected} == {0xFF}


def test_a_test_a_good_memory_fails_is_bad_input() -> None:
    with pytest.raises(NotationError, match="correct memory fails"):
        program_for(tiny_contract(), "{any(w0); up(r1)}")


def test_budget_is_checked_before_anything_runs() -> None:
    with pytest.raises(MemcheckError, match="max-ops"):
        program_for(tiny_contract(), MARCH_C_MINUS, backgrounds="solid", max_ops=159)
    assert program_for(tiny_contract(), MARCH_C_MINUS, backgrounds="solid", max_ops=160).operations == 160


def test_layout_and_orders_reach_the_stream() -> None:
    p = program_for(tiny_contract(), MATS_PLUS, backgrounds="solid", layout=(4, 4), order="row-fast")
    first = [p.cycles(5)[k][0].address for k in range(5)]
    assert first == [0, 4, 8, 12, 1]  # row changes fastest: address = row * 4 + col
    with pytest.raises(UsageError):
        program_for(tiny_contract(), MATS_PLUS, layout=(3, 4))


# -- the first failure, on the Python memory --------------------------------------------------------


def test_correct_memory_passes_mats_plus_and_march_c_minus() -> None:
    c = tiny_contract()
    for test in (MATS_PLUS, MARCH_C_MINUS):
        p = program_for(c, test, backgrounds="standard")
        assert check_program(c, p, stand_in(p.cycles())) is None


# Published claim: MATS+ detects every stuck-at fault (M.S. Abadir, H.K. Reghbati, "Functional testing
# of semiconductor random access memories", ACM Computing Surveys, 1983; also A.J. van de Goor,
# "Testing Semiconductor Memories", 1991). Which operation fails first follows from the notation:
# a cell stuck at 1 fails the r0 of ⇑(r0,w1) (element 1), one stuck at 0 the r1 of ⇓(r1,w0) (element 2).
@settings(max_examples=25)
@given(address=st.integers(0, 15), bit=st.integers(0, 7), value=st.integers(0, 1))
def test_mats_plus_finds_every_stuck_at_fault_at_the_operation_the_notation_predicts(
    address: int, bit: int, value: int
) -> None:
    c = tiny_contract()
    p = program_for(c, MATS_PLUS, backgrounds="solid")
    f = check_program(c, p, stand_in(p.cycles(), stuck=(address, bit, value)))
    assert f is not None
    assert f.step is not None and f.activity == "read"
    if value == 1:
        assert (f.step.element, f.step.step) == (1, 0)
        index = 16 + 2 * address
        expected, got = 0x00, 1 << bit
    else:
        assert (f.step.element, f.step.step) == (2, 0)
        index = 16 + 32 + 2 * (15 - address)
        expected, got = 0xFF, 0xFF & ~(1 << bit)
    assert f.step.index == index and f.step.op.address == address
    assert (f.issued_cycle, f.cycle) == (index, index + 1)  # one operation per cycle, read latency 1
    assert f.march_expected == expected and f.got == Observed(got, 0xFF)
    assert f.march_diff == f.model_diff == 1 << bit
    assert f.failed_checks == ("contract model", "March expectation")
    el = "⇑(r0,w1)" if value else "⇓(r1,w0)"
    assert f.description.startswith(
        f"element {f.step.element} {el} operation 1 (r{1 - value}) at address {address:#x}, background solid"
    )


def test_model_alone_judges_reads_of_words_never_written() -> None:
    # initial = "zero" promises zeros at power-up; the March expectation does not apply before a write.
    c = tiny_contract(initial="zero")
    p = program_for(c, "{up(r0); any(w1); up(r1)}", backgrounds="solid")
    f = check_program(c, p, stand_in(p.cycles()))  # the Python memory powers up X
    assert f is not None
    assert f.failed_checks == ("contract model",) and f.march_expected is None
    assert (f.cycle, f.step and f.step.op.address) == (1, 0)


def test_idle_read_data_failure_names_the_pause() -> None:
    c = tiny_contract()
    p = program_for(c, "{any(w1); up(r1); del; any(r1)}", backgrounds="solid", pause_cycles=3)
    f = check_program(c, p, stand_in(p.cycles(), clear_when_idle=True))
    # The first idle edge (cycle 32, first pause cycle) clears the held read data; it shows at cycle 33.
    assert f is not None and f.activity == "quiet"
    assert (f.issued_cycle, f.cycle) == (32, 33)
    assert (
        "issued no read (idle_read_data) at cycle 32, during the pause of element 2 Del (3 quiet cycles"
        in f.description
    )
    assert f.step is not None and f.step.index == 31  # the last operation before: r1 at address 15
    assert f.failed_checks == ("contract model",)


def test_pause_cycles_decide_whether_a_sleeping_memory_fails() -> None:
    c = tiny_contract()
    test = "{any(w1); del; any(r1)}"
    short = program_for(c, test, backgrounds="solid", pause_cycles=4)
    assert check_program(c, short, stand_in(short.cycles(), sleep_after=8)) is None
    long = program_for(c, test, backgrounds="solid", pause_cycles=20)
    f = check_program(c, long, stand_in(long.cycles(), sleep_after=8))
    assert f is not None and f.step is not None
    assert (f.step.element, f.step.op.address, f.issued_cycle) == (2, 0, 36)


# -- bad input on the command line (no simulator needed) ---------------------------------------------


@pytest.mark.parametrize(
    ("args", "words"),
    [
        ([str(REGFILE), "{up(w2)}"], "bad March notation"),
        ([str(REGFILE), "March Q"], "March Q"),
        ([str(REGFILE), "MATS+", "--port", "rd"], "cannot write"),
        ([str(REGFILE), "MATS+", "--layout", "3x3"], "layout"),
        ([str(REGFILE), "MATS+", "--backgrounds", "plaid"], "plaid"),
        ([str(REGFILE), "{any(w0); up(r1)}"], "correct memory fails"),
        ([str(REGFILE), "March C-", "--max-ops", "100"], "max-ops"),
        (["no/such/contract.toml", "MATS+"], "contract.toml"),
    ],
)
def test_bad_input_exits_2_with_one_paragraph(
    args: list[str], words: str, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    report = tmp_path / "r.json"
    assert main(["march", "run", *args, "--out", str(tmp_path / "out"), "--json", str(report)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("memcheck: error:") and words in err and "Traceback" not in err
    data = json.loads(report.read_text())
    assert data["verdict"] == "error" and words in data["error"]


def test_api_rejects_unknown_options_and_algorithms() -> None:
    with pytest.raises(MemcheckError, match="unknown option"):
        run_march(REGFILE, MATS_PLUS, colour="red")
    with pytest.raises(UnknownAlgorithm):
        run_march(REGFILE, "March Q")


# -- end to end under Icarus ---------------------------------------------------------------------------

TINY_RAM = """
// 16 x 8 RAM, registered read data held while idle or writing. Injected faults for the tests:
// SA_ADDR/SA_BIT/SA_VAL make one cell read stuck; SLEEP_AFTER > 0 turns every word to X after
// that many idle edges in a row.
module tiny_ram #(parameter SA_ADDR = -1, parameter SA_BIT = 0, parameter SA_VAL = 0,
                  parameter SLEEP_AFTER = 0) (
    input  wire       clk,
    input  wire       en,
    input  wire       we,
    input  wire [3:0] addr,
    input  wire [7:0] wdata,
    output reg  [7:0] rdata
);
    reg [7:0] mem [0:15];
    integer idle = 0;
    integer i;
    always @(posedge clk) begin
        if (en) begin
            idle <= 0;
            if (we) mem[addr] <= wdata;
            else if (addr == SA_ADDR) begin
                rdata <= mem[addr];
                rdata[SA_BIT] <= SA_VAL;
            end else rdata <= mem[addr];
        end else begin
            idle <= idle + 1;
            if (SLEEP_AFTER > 0 && idle + 1 >= SLEEP_AFTER)
                for (i = 0; i < 16; i = i + 1) mem[i] <= 8'bx;
        end
    end
endmodule
"""

TINY_CONTRACT = """
[memory]
words = 16
width = 8
read_latency = 1
read_during_write = "keep"
idle_read_data = "keep"

[rtl]
sources = ["tiny_ram.v"]
top = "tiny_ram"
parameters = {{ {params} }}

[[port]]
name = "a"
role = "readwrite"
clock = "clk"
enable = "en"
write_enable = "we"
address = "addr"
write_data = "wdata"
read_data = "rdata"
"""


def tiny_rtl(folder: Path, name: str, **params: int) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    (folder / "tiny_ram.v").write_text(TINY_RAM)
    path = folder / f"{name}.toml"
    path.write_text(TINY_CONTRACT.format(params=", ".join(f"{k} = {v}" for k, v in params.items())))
    return path


@pytest.fixture(scope="module")
def builds(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """One build cache for the module: builds are keyed by content, so runs share them."""
    return tmp_path_factory.mktemp("march-builds")


@pytest.mark.icarus
def test_correct_wrapper_passes_mats_plus_and_march_c_minus(tmp_path: Path, builds: Path) -> None:
    for test in (MATS_PLUS, MARCH_C_MINUS):
        r = run_march(REGFILE, test, out_dir=tmp_path / test, build_dir=builds)
        assert r.passed, render_march_report(r)
        assert (r.writer, r.reader) == ("wr", "rd")
        assert r.backgrounds == ("std0", "std1", "std2", "std3", "std4", "std5")  # log2(32) + 1
        assert r.operations == {MATS_PLUS: 5, MARCH_C_MINUS: 10}[test] * 32 * 6
        assert r.cycles == r.operations + 1  # read_latency 1: one quiet cycle lets the last read out
        assert r.failure is None and r.replay_file is None


@pytest.mark.icarus
def test_bank_bug_fails_march_c_minus_at_its_final_read_element(
    tmp_path: Path, builds: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    # The read mux follows the live address bit 9 instead of a registered copy. MATS+ reads each
    # address right before writing the same address (same bank), so the bug never shows; March C-'s
    # last element ⇕(r0) reads 0x1ff then 0x200: the data of the read of 0x1ff (bank 0), due one
    # cycle later, comes from bank 1, whose macro output is X after element 4's write of 0x200.
    # Cycle: 9 x 1024 operations before element 5, then 511 reads: the read is issued at cycle 9727.
    out = tmp_path / "out"
    report = tmp_path / "report.json"
    assert main(["march", "run", str(BANK_BUG), MATS_PLUS, "--backgrounds", "solid", "--out", str(out)]) == 0
    capsys.readouterr()
    assert (
        main(
            [
                "march",
                "run",
                str(BANK_BUG),
                MARCH_C_MINUS,
                "--backgrounds",
                "solid",
                "--out",
                str(out),
                "--json",
                str(report),
            ]
        )
        == 1
    )
    text = capsys.readouterr().out
    assert (
        "FAIL at cycle 9728: element 5 ⇕(r0) operation 1 (r0) at address 0x1ff, background solid; "
        "the read was issued at cycle 9727 on port a"
    ) in text
    assert "failed: contract model and March expectation" in text
    assert "got            xxxxxxxxxxxxxxxx" in text and "not sign-off" in text
    data = json.loads(report.read_text())
    f = data["first_failure"]
    assert data["verdict"] == "fail" and data["operations"] == 10240
    assert (f["element"], f["operation"], f["address"], f["cycle"], f["issued_cycle"]) == (5, 1, 0x1FF, 9728, 9727)
    assert f["march_expected"] == "0" * 16 and f["got"] == "x" * 16 and len(f["differing_bits"]) == 64
    assert (out / "report.txt").read_text().startswith(str(BANK_BUG))
    assert (out / "trace.vcd").is_file() and data["reproduced_by_replay"] is True
    # The replay file holds the run up to the failing cycle and shows the same mismatch again.
    assert main(["replay", str(out / "replay.json"), "--no-waveform", "--out", str(tmp_path / "re")]) == 1
    assert "Reproduced" in capsys.readouterr().out


@pytest.mark.icarus
def test_quiet_reads_of_a_port_without_enable_are_checked_too(tmp_path: Path, builds: Path) -> None:
    # line_buffer: write port wr, read port rd without an enable (it reads address 0 whenever the test
    # does not use it), read latency 2, collision = "old". The seeded bug forwards the word being
    # written to a same-address read. Element 0 writes cycles 0..639; element 1 ⇑(r0,w1) reads 0 at
    # cycle 640 and writes 1s to address 0 at cycle 641, while rd reads address 0: that read must
    # return the old word (0), due two cycles later, at cycle 643. The March expectation does not
    # apply to it; only the contract model judges it.
    r = run_march(
        EXAMPLES / "line_buffer_bypass_bug" / "contract.toml",
        MARCH_C_MINUS,
        backgrounds="solid",
        out_dir=tmp_path / "out",
        build_dir=builds,
        waveform=False,
    )
    f = r.failure
    assert f is not None and f.step is not None
    assert (f.port, f.activity, f.issued_cycle, f.cycle) == ("rd", "quiet", 641, 643)
    assert (f.step.element, f.step.step, f.step.op.kind, f.step.op.address) == (1, 1, OpKind.WRITE, 0)
    assert f.failed_checks == ("contract model",) and f.march_expected is None
    assert f.got == Observed((1 << 30) - 1, (1 << 30) - 1) and f.model_expected.value == 0
    assert "read address 0 (a port without an enable" in f.description
    assert 'collision = "old"' in render_march_report(r)


@pytest.mark.icarus
@pytest.mark.parametrize(("value", "element", "address"), [(1, 1, 6), (0, 2, 6)])
def test_stuck_at_cell_fails_where_the_notation_predicts(
    tmp_path: Path, builds: Path, value: int, element: int, address: int
) -> None:
    # MATS+ detects stuck-at faults (Abadir and Reghbati, ACM Computing Surveys, 1983); see the Python
    # version above for the operation that fails first.
    c = tiny_rtl(tmp_path, "sa", SA_ADDR=address, SA_BIT=3, SA_VAL=value)
    r = run_march(c, MATS_PLUS, backgrounds="solid", out_dir=tmp_path / "out", build_dir=builds, waveform=False)
    f = r.failure
    assert f is not None and f.step is not None
    index = 16 + 2 * address if value else 48 + 2 * (15 - address)
    assert (f.step.element, f.step.step, f.step.op.address, f.issued_cycle) == (element, 0, address, index)
    assert f.got == Observed(0x08 if value else 0xF7, 0xFF)
    assert r.replay_file is not None and r.waveform_file is None


@pytest.mark.icarus
def test_delay_elements_are_quiet_cycles_on_rtl(tmp_path: Path, builds: Path) -> None:
    c = tiny_rtl(tmp_path, "sleepy", SLEEP_AFTER=8)
    test = "{any(w1); del(1ms); any(r1)}"
    ok = run_march(c, test, backgrounds="solid", pause_cycles=4, out_dir=tmp_path / "a", build_dir=builds)
    assert ok.passed and ok.cycles == 16 + 4 + 16 + 1
    assert any("quiet cycles" in n for n in ok.notes)
    bad = run_march(
        c, test, backgrounds="solid", pause_cycles=20, out_dir=tmp_path / "b", build_dir=builds, waveform=False
    )
    f = bad.failure
    assert f is not None and f.step is not None
    assert (f.step.element, f.step.op.address, f.issued_cycle) == (2, 0, 36)
    assert f.got.defined == 0 and f.march_expected == 0xFF


@pytest.mark.icarus
def test_rtl_that_does_not_compile_exits_2(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    c = tiny_rtl(tmp_path, "broken")
    (tmp_path / "tiny_ram.v").write_text("module tiny_ram(input wire clk;\nendmodule\n")
    assert main(["march", "run", str(c), MATS_PLUS, "--out", str(tmp_path / "out")]) == 2
    assert "does not compile" in capsys.readouterr().err


# -- the simulator's March job, on the Python memory ------------------------------------------------


class StandInBackend:
    """The Python memory above as an engine backend: it keeps every cycle run so far and answers
    each batch from the whole history, so state carries across batches as on RTL."""

    batch_limit = 5

    def __init__(self, **faults: object) -> None:
        self.history: list[Cycle] = []
        self.faults = faults

    def run(self, segments: Sequence[Segment], *, dump: bool = False) -> list[tuple[Observed | None, ...]]:
        cycles = [c for s in segments for c in s.cycles]
        self.history.extend(cycles)
        return stand_in(self.history, **self.faults)[-len(cycles) :] if cycles else []  # type: ignore[arg-type]


def job_failure(
    contract: Contract,
    test: str,
    batch: int,
    faults: dict[str, Any],
    vectorised: bool = True,
    **options: Any,
) -> tuple[Any, Any, Any, Any]:
    """Run ``test`` through the March job on the stand-in (batches of ``batch`` cycles) and name its
    failure against the schedule; also the failure check_program finds on the whole run."""
    opts = SimOptions().replace(**options)
    full, _ = prepare(contract, test, opts)
    light = full
    engine = Engine(contract, StandInBackend(**faults))
    info = run_march_job(engine, light, MarchJob("power-up", batch=batch, vectorised=vectorised))
    whole = check_program(contract, full, stand_in(full.cycles(), **faults))
    return failure_from_job(contract, light, info), whole, info, full


def test_schedule_names_cycles_as_its_cycles_show() -> None:
    cases: list[tuple[Contract, str, dict[str, Any]]] = [
        (tiny_contract(read_latency=2), "{any(w1); del; up(r1,w0); del; down(r0)}", {"pause_cycles": 7}),
        (load_contract(REGFILE), MATS_PLUS, {"backgrounds": "solid"}),
        (tiny_contract(), MARCH_C_MINUS, {"backgrounds": "standard"}),
        # Reads of words written earlier in the same element (same chunk) are March-checked too.
        (tiny_contract(), "{up(r0,w1,r1); down(r1,w0,r0)}", {"backgrounds": "solid"}),
    ]
    for c, test, kw in cases:
        p = program_for(c, test, **kw)
        cycles = p.cycles()
        # Built independently, one Python object per operation, from the stream's steps.
        quiet = drain_cycle(c)
        want: list[Cycle] = []
        issuing: list[int] = []
        for item in p.stream.steps():
            if isinstance(item, Pause):
                want += [quiet] * p.pause_cycles
                continue
            cyc = list(quiet)
            cyc[p.writer if item.expected is None else p.reader] = item.op
            issuing.append(len(want))
            want.append(tuple(cyc))
        want += [quiet] * c.memory.read_latency
        assert cycles == want and len(cycles) == p.total_cycles and len(issuing) == p.operations
        for k in range(-2, len(cycles) + 2):
            assert p.op_at(k) == (issuing.index(k) if k in issuing else -1)
            before = [i for i, at in enumerate(issuing) if at <= k]
            assert p.last_op_before(k) == (before[-1] if before else None)
            if 0 <= k < len(cycles):
                assert p.cycle_at(k) == cycles[k]
        assert p.cycles(40) == cycles[:40]
        # Every judged read is a read of a word some earlier cycle wrote, due read_latency later.
        due, _, ops = p.judged_reads()
        lat = c.memory.read_latency
        for d, op in zip(due.tolist(), ops.tolist(), strict=True):
            issued = issuing[op]
            assert d == issued + lat
            addr = cycles[issued][p.reader].address
            assert any(cyc[p.writer].kind == OpKind.WRITE and cyc[p.writer].address == addr for cyc in cycles[:issued])


@pytest.mark.parametrize(("batch", "vectorised"), [(3, True), (16, True), (1000, True), (3, False), (16, False)])
def test_march_job_finds_the_failure_first_failure_finds(batch: int, vectorised: bool) -> None:
    c = tiny_contract()
    # A correct memory passes in any batch size; every read after a write is March-checked.
    f, whole, info, full = job_failure(c, MARCH_C_MINUS, batch, {}, vectorised)
    assert f is None and whole is None and info["failure"] is None
    assert info["cycles_run"] == full.total_cycles
    assert info["march_reads_checked"] == len(full.judged_reads()[0])
    # Stuck-at faults (MATS+ and March C- detect all of them: van de Goor, "Testing Semiconductor
    # Memories", 1991), idle_read_data and a sleeping memory: the same failure, named the same way.
    cases: list[tuple[str, dict[str, object], dict[str, object]]] = [
        (MATS_PLUS, {"stuck": (5, 2, 1)}, {"backgrounds": "solid"}),
        (MARCH_C_MINUS, {"stuck": (12, 7, 0)}, {}),
        ("{any(w1); up(r1); del; any(r1)}", {"clear_when_idle": True}, {"backgrounds": "solid", "pause_cycles": 3}),
        ("{any(w1); del; any(r1)}", {"sleep_after": 8}, {"backgrounds": "solid", "pause_cycles": 20}),
    ]
    for test, faults, kw in cases:
        f, whole, info, _ = job_failure(c, test, batch, faults, vectorised, **kw)
        assert f is not None and whole is not None
        assert f == whole
        assert f.description == whole.description and f.window == whole.window
        assert info["cycles_run"] == f.cycle + 1  # the run stops at the first failure


def test_march_job_model_alone_before_the_first_write() -> None:
    c = tiny_contract(initial="zero")
    for batch in (1, 2, 50):
        f, whole, _, _ = job_failure(c, "{up(r0); any(w1); up(r1)}", batch, {}, backgrounds="solid")
        assert f is not None and whole is not None and f == whole
        assert f.failed_checks == ("contract model",) and f.march_expected is None


@pytest.mark.icarus
def test_failure_past_the_replay_limit_is_named_without_a_replay_file(
    tmp_path: Path, builds: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    import memcheck.sim.jobs.march as mr

    monkeypatch.setattr(mr, "REPLAY_MAX_CYCLES", 10)
    c = tiny_rtl(tmp_path, "sa", SA_ADDR=6, SA_BIT=3, SA_VAL=1)
    r = run_march(c, MATS_PLUS, backgrounds="solid", out_dir=tmp_path / "out", build_dir=builds)
    f = r.failure
    assert f is not None and f.step is not None and (f.step.element, f.step.op.address) == (1, 6)
    assert r.replay_file is None and r.waveform_file is None and r.reproduced is None
    assert any("no replay file or waveform" in n for n in r.notes)
    assert r.extra["cycles_run"] == f.cycle + 1 and r.cycles == 16 * 5 + 1


@pytest.mark.icarus
def test_the_march_job_and_a_whole_replay_run_report_the_same_failure(tmp_path: Path, builds: Path) -> None:
    c = tiny_rtl(tmp_path, "sa", SA_ADDR=9, SA_BIT=0, SA_VAL=0)
    r = run_march(c, MARCH_C_MINUS, backgrounds="standard", out_dir=tmp_path / "march", build_dir=builds)
    s = Session.open(c, SimOptions(backgrounds="standard", out_dir=tmp_path / "replay", build_dir=builds), job="march")
    schedule, _ = prepare(s.contract, MARCH_C_MINUS, s.options)
    whole, _ = check_by_replay(s, schedule)
    assert r.failure is not None and r.failure == whole


def test_carried_vectorised_model_agrees_with_the_model_batch_by_batch() -> None:
    from memcheck.model_fast import expected_rows
    from memcheck.sim.checking.compare import start_model
    from memcheck.sim.checking.march_job import CarriedModel

    contracts = [
        tiny_contract(),
        tiny_contract(read_latency=0, read_during_write="new", idle_read_data="unknown"),
        tiny_contract(read_latency=2, read_during_write="old", initial="zero"),
        tiny_contract(read_latency=3, read_during_write="unknown", idle_read_data="keep"),
        load_contract(REGFILE),
        load_contract(EXAMPLES / "line_buffer" / "contract.toml"),
        load_contract(EXAMPLES / "mailbox" / "contract.toml"),
    ]
    for c in contracts:
        for test in (MARCH_C_MINUS, "{any(w1); del; up(r1,w0); down(r0,w1,r1)}"):
            p = program_for(c, test, backgrounds="solid", pause_cycles=9)
            start = "reset" if c.reset is not None else "power-up"
            want = start_model(c, start).run(p.cycles())  # type: ignore[arg-type]
            cols = Columns.from_cycles(c, p.cycles())
            for batch in (1, 4, 13, 200):
                fast = CarriedModel(c, start, p.writer)  # type: ignore[arg-type]
                got = []
                for lo in range(0, len(cols), batch):
                    got += expected_rows(*fast.run(cols[lo : lo + batch]))
                assert got == want, (c.memory, test, batch)


@settings(max_examples=30, deadline=None)
@given(
    data=st.data(),
    contract=contracts(max_words=12, max_width=70, max_ports=3),
    test=st.sampled_from([MATS_PLUS, MARCH_C_MINUS, "{any(w1); del; up(r1,w0,r0); down(r0,r0,w1)}"]),
    batch=st.integers(1, 40),
)
def test_carried_model_agrees_on_random_contracts(
    data: st.DataObject, contract: Contract, test: str, batch: int
) -> None:
    # Random contracts (latency, lanes, read_during_write, collision, idle_read_data, initial, ports
    # without enables): the carried vectorised model gives Model's answers in batches of any size.
    from hypothesis import assume

    from memcheck.model_fast import expected_rows
    from memcheck.sim.checking.compare import start_model
    from memcheck.sim.checking.march_job import CarriedModel

    try:
        p = program_for(contract, test, backgrounds="solid", pause_cycles=data.draw(st.integers(0, 5)))
    except (InvalidOperation, NotationError, UsageError):
        assume(False)
        return
    start = "reset" if contract.reset is not None else "power-up"
    want = start_model(contract, start).run(p.cycles())  # type: ignore[arg-type]
    cols = Columns.from_cycles(contract, p.cycles())
    fast = CarriedModel(contract, start, p.writer)  # type: ignore[arg-type]
    got = []
    for lo in range(0, len(cols), batch):
        got += expected_rows(*fast.run(cols[lo : lo + batch]))
    assert got == want
