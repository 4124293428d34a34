"""Benchmark: what the scoreboard costs in a user's cocotb test, and how long a contract draft takes.

1. The invented telemetry logger (tests/rtl/scoreboard/telemetry_logger.v) runs its own traffic on
   the packet buffer example for N rising edges under cocotb + Icarus, once with the scoreboard
   watching ``u_buf`` and once without; printed: simulated edges per second of both and the
   scoreboard's cost per edge (Python once per edge: sampling the pins, stepping the model).
2. ``contract draft`` (Icarus elaboration + guessing) on every shipped example: seconds each.

    .venv/bin/python bench/bench_scoreboard.py [--edges N]
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))  # the cocotb test module lives in tests/

from memcheck.contract import load_contract  # noqa: E402
from memcheck.contract.draft import DraftPin, build_draft  # noqa: E402
from memcheck.examples import examples_dir  # noqa: E402
from memcheck.sim.plumbing.elaborate import top_ports  # noqa: E402


def _logger_run(work: Path, edges: int, watch: bool) -> float:
    from cocotb_tools.runner import get_runner

    runner = get_runner("icarus")
    pb = examples_dir() / "packet_buffer"
    build = work / "build"
    sources = [pb / "pktbuf_wrap.v", pb / "sram_sp_bw.v", ROOT / "tests" / "rtl" / "scoreboard" / "telemetry_logger.v"]
    runner.build(sources=sources, hdl_toplevel="telemetry_logger", build_dir=build, timescale=("1ns", "1ps"))
    env = {
        "MEMCHECK_SB_CONTRACT": str(pb / "contract.toml"),
        "MEMCHECK_SB_OUT": str(work / "seen.json"),
        "MEMCHECK_SB_EDGES": str(edges),
        "MEMCHECK_SB_WATCH": "1" if watch else "0",
    }
    t0 = time.perf_counter()
    runner.test(
        test_module="tests.cocotb_scoreboard",
        hdl_toplevel="telemetry_logger",
        testcase="logger_traffic",
        build_dir=build,
        test_dir=work,
        extra_env=env,
        log_file=work / f"sim-{int(watch)}.log",
    )
    return time.perf_counter() - t0


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--edges", type=int, default=20000)
    args = ap.parse_args()
    with tempfile.TemporaryDirectory(prefix="bench-scoreboard-") as tmp:
        work = Path(tmp)
        bare = _logger_run(work, args.edges, watch=False)
        watched = _logger_run(work, args.edges, watch=True)
    print(f"telemetry logger, {args.edges} rising edges (cocotb + Icarus, the test's own clock and loop):")
    print(f"  without scoreboard: {bare:7.2f} s  ({args.edges / bare:9.0f} edges/s)")
    print(f"  with scoreboard:    {watched:7.2f} s  ({args.edges / watched:9.0f} edges/s)")
    print(f"  scoreboard cost:    {(watched - bare) / args.edges * 1e6:7.1f} us per edge (1 port, 64-bit data)")
    index = tomllib.loads((examples_dir() / "index.toml").read_text(encoding="utf-8"))["example"]
    print("contract draft (elaboration + guessing):")
    for e in index:
        c = load_contract(examples_dir() / e["contract"])
        assert c.rtl is not None
        t0 = time.perf_counter()
        pins = top_ports(list(c.rtl.sources), c.rtl.top)
        build_draft([DraftPin(p.name, p.direction, p.width) for p in pins], c.rtl.top)
        print(f"  {e['name']:<30} {time.perf_counter() - t0:6.3f} s")


if __name__ == "__main__":
    main()
