"""Wrong read data that equals data written elsewhere in the trace, worked out by hand on short traces,
and bit lists written as ranges only where contiguous."""

from __future__ import annotations

from collections.abc import Sequence

from memcheck.contract import Contract, load_contract
from memcheck.examples import examples_dir
from memcheck.ops import NO_EDGE, Cycle, PortOp, idle, read, write
from memcheck.records import CheckedTrace, Observed
from memcheck.report.lookalike import bit_ranges, bits_phrase, lookalike, verilog_width
from memcheck.report.text import render_failure
from memcheck.sim.checking.compare import check

X = Observed(0, 0)


def checked(c: Contract, cycles: Sequence[Cycle], shown: dict[int, int]) -> CheckedTrace:
    """The trace checked from a model that knows nothing, with the read data of port 0 X except at the
    cycles in ``shown`` (cycle -> clean value)."""
    full = c.memory.word_mask
    observed = [
        tuple((Observed(shown[k], full) if k in shown and i == 0 else X) for i in range(len(c.ports)))
        for k in range(len(cycles))
    ]
    return check(c, "unknown", cycles, observed)


def test_ignored_address_bit() -> None:
    c = Contract.simple(64, 16)
    # cycle 0 writes 0x00, cycle 1 writes 0x20; if bit 5 is ignored the second write lands on word 0,
    # and the read of 0x00 issued at cycle 2 shows at cycle 3 (read_latency 1) the word written to 0x20.
    cycles = [(write(0x00, 0xAAAA),), (write(0x20, 0x5555),), (read(0x00),), (PortOp(),)]
    ct = checked(c, cycles, {3: 0x5555})
    assert ct.first_mismatch == 3
    assert lookalike(c, ct) == "actual equals the write to 0x20 at cycle 1: address bit 5 ignored?"


def test_lane_holds_another_lanes_byte() -> None:
    c = Contract.simple(16, 32, lane_width=8)
    # write 44 33 22 11 to all four byte lanes; lane 3 comes back holding 0x33, the byte of lane 2
    cycles = [(write(3, 0x44332211),), (read(3),), (PortOp(),)]
    ct = checked(c, cycles, {2: 0x33332211})
    assert lookalike(c, ct) == "lane 3 holds the byte written to lane 2 at cycle 0: lane slices swapped or miswired?"


def test_uneven_lanes_and_a_write_cycle_that_shows_data() -> None:
    c = Contract.simple(16, 40, lanes=[9, 9, 9, 9, 4], read_during_write="new")
    # a write of every lane shows the new word in its own cycle's read data (due one cycle later);
    # lane 3 (bits 35:27) shows lane 2's 9 bits
    word = 0x5 << 36 | 0x1E1 << 27 | 0x00F << 18 | 0x1C3 << 9 | 0x07E
    bad = word & ~(0x1FF << 27) | 0x00F << 27
    ct = checked(c, [(write(0, word),), (PortOp(),)], {1: bad})
    assert lookalike(c, ct) == (
        "lane 3 holds the 9-bit lane data written to lane 2 at cycle 0: lane slices swapped or miswired?"
    )


def test_lost_write_and_early_forwarding() -> None:
    c = Contract.simple(16, 16)
    lost = [(write(1, 0x1111),), (write(1, 0x2222),), (read(1),), (PortOp(),)]
    assert (
        lookalike(c, checked(c, lost, {3: 0x1111}))
        == "actual equals the earlier write to 0x1 at cycle 0: the write at cycle 1 did not take effect?"
    )
    early = [(write(1, 0x1111),), (read(1),), (write(1, 0x2222),), (PortOp(),)]
    # the read of cycle 1 is due at cycle 2, where it shows the word the write of cycle 2 stores
    assert lookalike(c, checked(c, early, {2: 0x2222})) == (
        "actual equals the write to 0x1 at cycle 2, after the read was issued at cycle 1: "
        "write data forwarded too early?"
    )


def test_nothing_alike_gives_no_hint() -> None:
    c = Contract.simple(64, 16)
    cycles = [(write(0x00, 0xAAAA),), (write(0x20, 0x5555),), (read(0x00),), (PortOp(),)]
    assert lookalike(c, checked(c, cycles, {3: 0x1234})) is None
    # X on the differing bits is not data written anywhere
    x = check(c, "unknown", cycles, [(X,)] * 4)
    assert not x.ok and lookalike(c, x) is None
    # an idle port's garbage pins are not writes
    garbage = [(write(0x00, 0xAAAA),), (idle(0x20, 0x5555),), (read(0x00),), (PortOp(),)]
    assert lookalike(c, checked(c, garbage, {3: 0x5555})) is None


def test_two_clock_read_counts_its_own_edges() -> None:
    c = load_contract(examples_dir() / "tile_exchange" / "contract.toml")
    # ticks at 0 ns (sensor), 5 ns (compute), 10 ns (sensor), 20 ns (both): the compute read at tick 1
    # is due at tick 3 (its next edge); it shows the word the sensor writes only at tick 2.
    cycles = [
        (write(1, 0xC0C0C0C0), NO_EDGE),
        (NO_EDGE, read(1)),
        (write(1, 0xD0D0D0D0), NO_EDGE),
        (PortOp(), PortOp()),
    ]
    # the sensor's own write at tick 2 shows the old word (read_during_write = "old") at tick 3
    full = 0xFFFFFFFF
    observed = [(X, X), (X, X), (X, X), (Observed(0xC0C0C0C0, full), Observed(0xD0D0D0D0, full))]
    ct = check(c, "unknown", cycles, observed)
    assert ct.first_mismatch == 3
    hint = lookalike(c, ct)
    assert hint is not None and "write to 0x1 at cycle 2" in hint and "forwarded too early" in hint
    assert f"Hint: {hint}\n" in render_failure(c, ct) + "\n" and "?." not in render_failure(c, ct)


def test_bit_ranges_only_where_contiguous() -> None:
    assert bit_ranges(0b1110110100) == "9:7, 5:4, 2"
    assert bit_ranges(1) == "0"
    assert bit_ranges(0) == ""
    assert bits_phrase(1 << 5) == "bit 5"
    assert bits_phrase(0x1FF << 27) == "bits 35:27"
    assert bits_phrase(0b101) == "bits 2, 0"


def test_pin_widths_in_verilog_notation() -> None:
    # IEEE 1364-2005 §12.3.3 (port declarations): [msb:lsb], here msb = width - 1, lsb = 0
    assert verilog_width(4) == "[3:0]"
    assert verilog_width(76) == "[75:0]"
    assert verilog_width(1) == "1 bit"
