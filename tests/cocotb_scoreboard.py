"""cocotb tests run by tests/test_scoreboard.py through cocotb's Python runner: a user's own
testbenches with memcheck's scoreboard watching a memory wrapper.

Each test reads its contract from ``MEMCHECK_SB_CONTRACT`` and writes what the scoreboard saw to
the JSON file ``MEMCHECK_SB_OUT`` when it ends without a mismatch. A mismatch fails the cocotb
test with the scoreboard's message (the runner's results file carries it).
"""

from __future__ import annotations

import json
import os
import random
from typing import Any

import cocotb
from cocotb.clock import Clock
from cocotb.triggers import RisingEdge

from memcheck.errors import MemcheckError
from memcheck.sim import Scoreboard

#: Rising edges with rst_n low before the logger runs (edges 0..2; the logger's step 0 is edge 3).
RESET_EDGES = 3


def _finish(board: Any) -> None:
    board.stop()
    board.check()
    out = {"cycles": board.cycles, "reads_checked": board.reads_checked, "summary": board.summary()}
    with open(os.environ["MEMCHECK_SB_OUT"], "w", encoding="utf-8") as fh:
        json.dump(out, fh)


@cocotb.test()
async def logger_traffic(dut: Any) -> None:
    """The telemetry logger's own traffic drives the buffer; the scoreboard watches dut.u_buf."""
    watch = os.environ.get("MEMCHECK_SB_WATCH", "1") == "1"  # bench/: the same run without the scoreboard
    board = Scoreboard(os.environ["MEMCHECK_SB_CONTRACT"], dut.u_buf, window=12).start() if watch else None
    dut.rst_n.value = 0
    Clock(dut.clk, 10, "ns").start(start_high=False)
    for _ in range(RESET_EDGES):
        await RisingEdge(dut.clk)
    dut.rst_n.value = 1
    for _ in range(int(os.environ.get("MEMCHECK_SB_EDGES", "900"))):
        await RisingEdge(dut.clk)
    if board is not None:
        _finish(board)


@cocotb.test()
async def wrong_handle(dut: Any) -> None:
    """Another wrapper's contract on the buffer instance: refused with one clear message."""
    try:
        Scoreboard(os.environ["MEMCHECK_SB_OTHER_CONTRACT"], dut.u_buf)
    except MemcheckError as exc:
        with open(os.environ["MEMCHECK_SB_OUT"], "w", encoding="utf-8") as fh:
            json.dump({"error": str(exc), "kind": type(exc).__name__}, fh)


@cocotb.test()
async def user_traffic_two_ports(dut: Any) -> None:
    """Random reads and writes driven from the test itself on a read port + write port wrapper
    (regfile: reset, initial zero, collision new; line buffer: no read enable, read latency 2)."""
    seed = int(os.environ["MEMCHECK_SB_SEED"])
    rng = random.Random(seed)
    dut._log.info("user traffic seed %d", seed)
    board = Scoreboard(os.environ["MEMCHECK_SB_CONTRACT"], dut, window=10).start()
    c = board.contract
    rd, wr = c.port("rd"), c.port("wr")
    words, width = c.memory.words, c.memory.width
    if c.reset is not None:
        dut._id(c.reset.signal, extended=False).value = 0 if c.reset.active_low else 1
    Clock(dut._id(c.clock, extended=False), 10, "ns").start(start_high=False)
    for _ in range(RESET_EDGES):
        await RisingEdge(dut._id(c.clock, extended=False))
    if c.reset is not None:
        dut._id(c.reset.signal, extended=False).value = 1 if c.reset.active_low else 0
    hot = rng.sample(range(words), 4)  # a few addresses, so reads meet recent writes and collisions
    for _ in range(int(os.environ.get("MEMCHECK_SB_EDGES", "600"))):
        if rd.enable:
            dut._id(rd.enable, extended=False).value = rng.random() < 0.7
        dut._id(rd.address, extended=False).value = rng.choice(hot)
        assert wr.enable is not None and wr.write_data is not None
        dut._id(wr.enable, extended=False).value = rng.random() < 0.5
        dut._id(wr.address, extended=False).value = rng.choice(hot)
        dut._id(wr.write_data, extended=False).value = rng.getrandbits(width)
        await RisingEdge(dut._id(c.clock, extended=False))
    _finish(board)
