"""BIST engine planning without a simulator: address generators against the Python orders, the
microcode, the cycle formula, and bad input (exit 2, one paragraph)."""

from __future__ import annotations

from pathlib import Path

import pytest

from memcheck.bist.addrgen import build_address_gen, gray_blocks, lfsr_step_columns
from memcheck.bist.microcode import KIND_PAUSE, plan_engine
from memcheck.bist.verilog import engine_verilog
from memcheck.cli import main
from memcheck.errors import BistError, MemcheckError
from memcheck.examples import examples_dir
from memcheck.march import AddressOrder, algorithm_names

EXAMPLES = examples_dir()


@pytest.mark.parametrize("kind", ["linear", "complement", "gray", "lfsr"])
def test_hardware_walks_equal_the_python_orders_for_every_small_depth(kind: str) -> None:
    # Brute force: the generator's state machine replayed step by step against AddressOrder.up/down.
    for words in [*range(1, 80), 127, 128, 129, 255, 256, 257, 1000, 1024]:
        for seed in (None, 1, 99, 12345) if kind == "lfsr" else (None,):
            order = AddressOrder(kind, words, None, seed)
            gen = build_address_gen(order)
            assert gen.walk(down=False) == order.up().tolist(), (words, seed)
            assert gen.walk(down=True) == order.down().tolist(), (words, seed)


@pytest.mark.parametrize("layout", [(4, 8), (16, 2), (2, 16), (1, 8), (8, 1)])
def test_row_fast_and_col_fast_walks_with_power_of_two_layouts(layout: tuple[int, int]) -> None:
    words = layout[0] * layout[1]
    for kind in ("row-fast", "col-fast"):
        order = AddressOrder(kind, words, layout)
        gen = build_address_gen(order)
        assert gen.walk() == order.up().tolist()
        assert gen.walk(down=True) == order.down().tolist()


def test_gray_blocks_are_exactly_the_codes_below_words() -> None:
    for words in range(1, 300):
        bits = max(1, (words - 1).bit_length())
        valid = [i for i in range(1 << bits) if i ^ (i >> 1) < words]  # brute force
        from_blocks = [i for lo, hi in gray_blocks(words) for i in range(lo, hi + 1)]
        assert from_blocks == valid
        assert len(gray_blocks(words)) <= bits


def test_inverse_lfsr_step_undoes_the_forward_step() -> None:
    for bits in (2, 5, 10, 16):
        fwd = lfsr_step_columns(bits, 3)
        bwd = lfsr_step_columns(bits, 3, inverse=True)
        for s in (1, 2, 3, (1 << bits) - 1, 0b101 % (1 << bits) or 1):
            x = 0
            for i, c in enumerate(fwd):
                x ^= c if s >> i & 1 else 0
            y = 0
            for i, c in enumerate(bwd):
                y ^= c if x >> i & 1 else 0
            assert y == s


def test_microcode_of_march_g_merges_nothing_and_counts_pauses() -> None:
    plan = plan_engine("March G", 16, 8, backgrounds="solid", pause_cycles=7)
    pauses = [w for w in plan.rom if w.kind == KIND_PAUSE]
    assert [w.count for w in pauses] == [6, 6]  # two delay elements of 7 quiet cycles each
    assert len(plan.rom) == plan.test.length + 2
    # March G is 23n + 2 delays (van de Goor 1991; docs/march.md library table)
    assert plan.cycles() == 23 * 16 + 2 * 7 + 1 + 1
    assert plan_engine("March G", 16, 8, backgrounds="solid", pause_cycles=0).cycles(read_latency=3) == 23 * 16 + 3 + 1


def test_consecutive_delays_become_one_pause_word_and_reads_before_writes_are_not_compared() -> None:
    plan = plan_engine("{up(r0); del; del; any(w0); up(r0)}", 8, 4, backgrounds="solid", pause_cycles=5)
    kinds = [(w.kind, w.chk, w.count) for w in plan.rom]
    assert kinds == [(0, 0, 0), (KIND_PAUSE, 0, 9), (1, 0, 0), (0, 1, 0)]
    assert plan.cycles() == 3 * 8 + 10 + 1 + 1


@pytest.mark.parametrize("name", algorithm_names())
def test_every_library_algorithm_plans_and_writes_verilog(name: str) -> None:
    plan = plan_engine(name, 37, 8, order="lfsr", seed=3, backgrounds="standard,checkerboard")
    text = engine_verilog(plan)
    assert text.count("endmodule") == 1
    assert f"module {plan.module} #(" in text
    for port in ("fail_background", "mem_rdata", "fail_actual", "done", "busy"):
        assert port in text


@pytest.mark.parametrize(
    "kwargs, words",
    [
        ({"order": "row-fast", "layout": (3, 4)}, 12),
        ({"backgrounds": "checkerboard", "layout": (4, 3)}, 12),
        ({"module": "module"}, 8),
        ({"module": "a-b"}, 8),
        ({"read_latency": 5}, 8),
        ({"pause_cycles": -1}, 8),
        ({}, 0),
        ({}, 1 << 25),
    ],
)
def test_requests_the_hardware_cannot_serve_are_refused(kwargs: dict[str, object], words: int) -> None:
    with pytest.raises(BistError):
        plan_engine("March C-", words, 8, **kwargs)  # type: ignore[arg-type]


def test_a_test_a_correct_memory_fails_is_refused() -> None:
    with pytest.raises(BistError, match="correct memory fails"):
        plan_engine("{any(w0); up(r1)}", 8, 8)
    with pytest.raises(MemcheckError, match="at least one element with operations"):
        plan_engine("{del}", 8, 8)
    with pytest.raises(MemcheckError):
        plan_engine("March Q", 8, 8)


@pytest.mark.parametrize(
    "args, needle",
    [
        (["March C-", "--words", "8"], "--words and --width"),
        (["March C-", "--words", "8", "--width", "2000"], "width"),
        (["March C-", "--contract", str(EXAMPLES / "line_buffer/contract.toml")], "no readwrite port"),
        (["March C-", "--contract", str(EXAMPLES / "mailbox/contract.toml"), "--port", "core9"], "no port"),
        (["March C-", "--contract", str(EXAMPLES / "tag_store/contract.toml"), "--words", "12"], "disagrees"),
        (["March C-", "--words", "8", "--width", "8", "--port", "a"], "--contract"),
        (["{up(w2)}", "--words", "8", "--width", "8"], "character"),
    ],
)
def test_cli_bad_input_exits_2_with_one_paragraph(
    args: list[str], needle: str, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    out = tmp_path / "e.v"
    assert main(["bist", "generate", *args, "-o", str(out)]) == 2
    err = capsys.readouterr().err
    assert needle in err and "Traceback" not in err
    assert not out.exists()


def test_cli_generate_writes_engine_adapter_and_testbench(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    contract = EXAMPLES / "packet_buffer/contract.toml"
    out = tmp_path / "bist" / "pkt_bist.v"
    args = [
        "bist",
        "generate",
        "March C-",
        "--contract",
        str(contract),
        "--module",
        "pkt_bist",
        "--testbench",
        "--backgrounds",
        "solid",
    ]
    assert main([*args, "-o", str(out)]) == 0
    text = capsys.readouterr().out
    assert "512 x 64" in text and "5122 cycles" in text  # 10n x 512 + READ_LATENCY 1 + 1
    adapter = (tmp_path / "bist" / "pkt_bist_adapter.v").read_text()
    assert "assign cs_n = ~mem_en;" in adapter  # active-low chip select from the contract
    assert "assign be = {8{1'b1}};" in adapter  # every byte lane enabled
    assert "pktbuf_wrap" in (tmp_path / "bist" / "pkt_bist_tb.v").read_text()
    assert "parameter READ_LATENCY = 1" in out.read_text()


def test_cli_generate_prints_the_lfsr_seed_first(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    base = ["bist", "generate", "MATS+", "--words", "37", "--width", "4", "--order", "lfsr"]
    assert main([*base, "-o", str(tmp_path / "a.v")]) == 0
    first = capsys.readouterr().out.splitlines()[0]
    assert ", seed " in first
    seed = int(first.split(", seed ")[1].split(",")[0])
    assert main([*base, "--seed", str(seed), "-o", str(tmp_path / "b.v")]) == 0
    assert (tmp_path / "a.v").read_text() == (tmp_path / "b.v").read_text()
