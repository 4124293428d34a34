"""Benchmark: property-phase throughput of ``memcheck check`` against a plain Verilog testbench.

On a 1K x 32 single-port wrapper (bench/rtl/sp1k) the property phase runs with its stimulus and
capture files recorded. A plain, self-checking Verilog testbench then plays exactly the same cycles
(every stimulus word of every batch, restore and flush cycles included) through the same wrapper in
the same Icarus, in one run, comparing each cycle's read data with a reference array. Measured, in
one run of this script:

* the property phase in bulk mode (``--examples 0 --bulk-examples N``: every example thousands of
  operations, the mode that carries the phase's throughput);
* the default property phase (short examples, then bulk examples);
* the short examples alone (a handful of operations each: bound by Hypothesis generation).

For each: operations per second of the plain testbench on the same cycles, of memcheck counting only
simulator time (stimulus file, the cocotb round trip, the simulated cycles, the capture file), and
of the whole phase (Hypothesis generation, decoding, the reference model, the simulator), with the
ratios. Target: the whole property phase in bulk mode within 2x of the plain testbench.

"Operations" are the example operations (non-idle port operations of the examples); both sides are
timed on the same cycles, so the ratio compares the same work.

With ``--wall`` it also runs a default ``memcheck check`` (build included, fresh output folder) on
every example wrapper and prints verdict, minimal trace length and wall time.

With ``--big`` it times a default ``memcheck check`` (build included, fresh output folder) on a
65,536 x 64 single-port wrapper (bench/rtl/sp64k: the full March C- sweep over the 7 standard
backgrounds, 4,587,520 operations; target <= 60 s) and on the 1K x 32 one (target <= 15 s).

With ``--shrink`` it prints the minimal-trace length of every failing example wrapper (and of the
posted-write test fixture, whose bug only the sweep finds), by the phase that found it: the default
phases, then the sweep alone and the property phase alone (target <= 10 cycles each).

``--skip-property`` skips the property-phase measurements (for ``--big`` / ``--shrink`` alone).

    .venv/bin/python bench/bench_check.py [--bulk-examples N] [--examples N] [--wall] [--big] [--shrink]
"""

from __future__ import annotations

import argparse
import re
import shutil
import subprocess
import sys
import tempfile
import time
import tomllib
from pathlib import Path

from memcheck.contract import load_contract
from memcheck.examples import examples_dir
from memcheck.sim.options import SimOptions
from memcheck.sim.plumbing.build import build
from memcheck.sim.plumbing.launch import run_job

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
CONTRACT = HERE / "rtl" / "sp1k" / "contract.toml"

PLAIN_TB = """`timescale 1ns/1ps
module plain_tb;
  localparam integer N = {n};
  reg [43:0] stim [0:N-1];
  reg [31:0] ref_value [0:N-1];
  reg [31:0] ref_known [0:N-1];
  reg clk = 0; reg en = 0; reg we = 0; reg [9:0] addr = 0; reg [31:0] wdata = 0;
  wire [31:0] rdata;
  integer i; integer errors = 0;
  sp1k_wrap dut(.clk(clk), .en(en), .we(we), .addr(addr), .wdata(wdata), .rdata(rdata));
  initial begin
    $readmemh("stim.hex", stim);
    $readmemh("ref_value.hex", ref_value);
    $readmemh("ref_known.hex", ref_known);
    for (i = 0; i < N; i = i + 1) begin
      #1 {{wdata, addr, we, en}} = stim[i];
      #4 clk = 0;
      #4 if (((rdata ^ ref_value[i]) & ref_known[i]) !== 32'b0) errors = errors + 1;
      #1 clk = 1;
    end
    $display("cycles %0d errors %0d", N, errors);
    $finish;
  end
endmodule
"""


def _run_vvp(folder: Path, n: int) -> float:
    """Compile and run the plain testbench over the first ``n`` recorded cycles; wall seconds of vvp."""
    (folder / "plain_tb.v").write_text(PLAIN_TB.format(n=max(n, 1)))
    vvp = folder / f"plain_{n}.vvp"
    subprocess.run(
        ["iverilog", "-g2012", "-o", str(vvp), str(folder / "plain_tb.v"), str(CONTRACT.parent / "sp1k_wrap.v")],
        check=True,
        cwd=folder,
    )
    t0 = time.perf_counter()
    out = subprocess.run(
        ["vvp", "-n", str(vvp), "-none"], check=True, cwd=folder, capture_output=True, text=True
    ).stdout
    seconds = time.perf_counter() - t0
    m = re.search(r"cycles (\d+) errors (\d+)", out)
    assert m and int(m.group(2)) == 0, out
    return seconds


def plain_testbench(record: Path) -> tuple[int, float]:
    """Cycles played and vvp seconds (start-up subtracted) for the recorded stimulus."""
    stim = [ln for ln in (record / "stim.hex").read_text().split() if ln]
    caps = [ln for ln in re.sub(r"//[^\n]*", "", (record / "cap.bin").read_text()).split() if ln]
    assert len(stim) == len(caps)
    # The contract's stimulus layout for this wrapper: en, we, addr[9:0], wdata[31:0] from bit 0.
    (record / "stim.hex").write_text("\n".join(stim) + "\n")
    (record / "ref_value.hex").write_text(
        "\n".join(f"{int(c.replace('x', '0').replace('z', '0'), 2):x}" for c in caps) + "\n"
    )
    (record / "ref_known.hex").write_text(
        "\n".join(f"{int(''.join('1' if ch in '01' else '0' for ch in c), 2):x}" for c in caps) + "\n"
    )
    full = _run_vvp(record, len(stim))
    empty = _run_vvp(record, 1)
    return len(stim), max(full - empty, 1e-9)


def property_run(examples: int, bulk_examples: int, max_blocks: int, seed: int) -> tuple[dict[str, float], Path]:
    contract = load_contract(CONTRACT)
    work = Path(tempfile.mkdtemp(prefix="memcheck-bench-"))
    b = build(contract, work / "build")
    record = work / "record"
    record.mkdir()
    opts = SimOptions(
        phases=("property",), examples=examples, seed=seed, max_blocks=max_blocks, bulk_examples=bulk_examples
    )
    t0 = time.perf_counter()
    res = run_job(b, {"mode": "check", "options": opts.to_json(), "record": str(record)}, work / "run")
    wall = time.perf_counter() - t0
    assert res.failure is None, "the benchmark wrapper should conform"
    phase = res.phases[0]
    stats = {
        "ops": float(phase.operations),
        "phase_seconds": phase.seconds,
        "wall": wall,
        **{k: float(v) for k, v in res.extra.items()},
    }
    return stats, record


def bench_property(title: str, examples: int, bulk_examples: int, max_blocks: int, seed: int) -> float:
    """One property-phase configuration against the plain testbench; returns the whole-phase ratio."""
    stats, record = property_run(examples, bulk_examples, max_blocks, seed)
    cycles, plain_s = plain_testbench(record)
    ops = stats["ops"]
    sim_s = stats["seconds_batches"]
    phase_s = stats["phase_seconds"]
    print(f"{title}: {examples} short examples (up to {max_blocks} blocks), {bulk_examples} bulk examples, seed {seed}")
    print(
        f"  example operations          {int(ops):>10}  ({int(stats['bulk_examples'])} bulk examples ran, "
        f"{int(stats['bulk_operations'])} operations)"
    )
    print(f"  cycles simulated            {cycles:>10}  (examples + restore/flush + canonical fill)")
    print(f"  simulator batches           {int(stats['batches']):>10}")
    print(f"  plain Verilog testbench     {ops / plain_s:>10.0f} ops/s  ({plain_s:.3f} s, same cycles, one run)")
    print(f"  memcheck, simulator time    {ops / sim_s:>10.0f} ops/s  ({sim_s:.3f} s)   ratio {sim_s / plain_s:.2f}x")
    print(
        f"  memcheck, whole phase       {ops / phase_s:>10.0f} ops/s  ({phase_s:.3f} s)   "
        f"ratio {phase_s / plain_s:.2f}x"
    )
    rtl, model = stats["seconds_example_rtl"], stats["seconds_example_model"]
    gen, dec = stats["seconds_bulk_generate"], stats["seconds_bulk_decode"]
    other = phase_s - rtl - model - gen - dec
    print(
        f"    of which: RTL runs {rtl:.2f} s (simulator batches {sim_s:.2f} s), model and comparison "
        f"{model:.2f} s, bulk generation {gen:.2f} s, bulk decoding {dec:.2f} s, "
        f"short-example generation and the rest {other:.2f} s"
    )
    shutil.rmtree(record.parent, ignore_errors=True)
    return phase_s / plain_s


def bench_long_batches(cycles: int, seed: int) -> None:
    """The harness on long batches: a random trace of ``cycles`` cycles replayed through the same
    stimulus/capture path (batches of up to 8192 cycles), against the plain testbench."""
    import random

    from memcheck.ops import IDLE, Trace, read, write
    from memcheck.records import CheckedTrace, Failure

    rng = random.Random(seed)
    ops = []
    for _ in range(cycles):
        r = rng.random()
        a = rng.randrange(1024)
        ops.append((write(a, rng.getrandbits(32)),) if r < 0.45 else (read(a),) if r < 0.9 else (IDLE,))
    trace = Trace.of(ops)
    contract = load_contract(CONTRACT)
    work = Path(tempfile.mkdtemp(prefix="memcheck-bench-"))
    b = build(contract, work / "build")
    record = work / "record"
    record.mkdir()
    failure = Failure("bench", (), CheckedTrace("unknown", ()), full_trace=trace)
    res = run_job(
        b,
        {"mode": "replay", "options": SimOptions().to_json(), "failure": failure.to_json(), "record": str(record)},
        work / "run",
    )
    n_ops = trace.operation_count()
    sim_s = float(res.extra["seconds_batches"])
    _, plain_s = plain_testbench(record)
    print(
        f"long batches: one random trace of {cycles} cycles ({n_ops} operations), {int(res.extra['batches'])} batches"
    )
    print(f"  plain Verilog testbench     {n_ops / plain_s:>10.0f} ops/s  ({plain_s:.3f} s)")
    print(f"  memcheck harness            {n_ops / sim_s:>10.0f} ops/s  ({sim_s:.3f} s)   ratio {sim_s / plain_s:.2f}x")
    shutil.rmtree(work, ignore_errors=True)


def bench_examples_wall() -> None:
    index = tomllib.loads((examples_dir() / "index.toml").read_text())["example"]
    print("\ndefault `memcheck check` (build included) on each example wrapper:")
    for ex in index:
        out = Path(tempfile.mkdtemp(prefix="memcheck-wall-"))
        t0 = time.perf_counter()
        proc = subprocess.run(
            [
                sys.executable,
                "-m",
                "memcheck",
                "check",
                str(examples_dir() / ex["contract"]),
                "--seed",
                "1",
                "--out",
                str(out),
                "--quiet",
                "--json",
                str(out / "r.json"),
            ],
            capture_output=True,
            text=True,
        )
        wall = time.perf_counter() - t0
        import json

        rep = json.loads((out / "r.json").read_text())
        mt = rep.get("minimal_trace") or {}
        trace = f"{mt.get('cycles')} cycles" if mt else ""
        ok = "ok" if rep["verdict"] == ex["expect"] else "UNEXPECTED"
        print(
            f"  {ex['name']:30s} expect {ex['expect']:4s} got {rep['verdict']:4s} {ok:10s} {wall:6.1f} s  {trace}"
            f"  (exit {proc.returncode})"
        )
        shutil.rmtree(out, ignore_errors=True)


def _default_check(contract: Path) -> tuple[float, dict[str, object]]:
    """Wall seconds of a default ``memcheck check`` (fresh output folder, build included) and its JSON."""
    import json

    out = Path(tempfile.mkdtemp(prefix="memcheck-big-"))
    t0 = time.perf_counter()
    argv = ["memcheck", "check", str(contract), "--seed", "1", "--out", str(out / "o"), "--quiet"]
    subprocess.run(
        [sys.executable, "-m", *argv, "--json", str(out / "r.json")],
        capture_output=True,
        text=True,
    )
    wall = time.perf_counter() - t0
    rep: dict[str, object] = json.loads((out / "r.json").read_text())
    shutil.rmtree(out, ignore_errors=True)
    return wall, rep


def bench_big() -> None:
    """Default check wall time on the 65,536 x 64 and the 1K x 32 single-port wrappers."""
    print("\ndefault `memcheck check --seed 1` (build included, fresh output folder):")
    for name, target in (("sp64k", 60.0), ("sp1k", 15.0)):
        wall, rep = _default_check(HERE / "rtl" / name / "contract.toml")
        phases = rep["phases"]
        assert isinstance(phases, list)
        parts = ", ".join(f"{p['name']} {p['verdict']} {p['operations']} ops {p['seconds']:.1f} s" for p in phases)
        met = "met" if wall <= target else "NOT met"
        build_s = rep["build_seconds"]
        print(f"  {name:6s} {rep['verdict']:4s} {wall:6.1f} s (build {build_s:.1f} s; target <= {target:.0f} s: {met})")
        print(f"         {parts}")


def _shrink_cases() -> list[tuple[str, Path]]:
    index = tomllib.loads((examples_dir() / "index.toml").read_text())["example"]
    cases: list[tuple[str, Path]] = [
        (ex["name"], examples_dir() / ex["contract"]) for ex in index if ex["expect"] == "fail"
    ]
    pw = ROOT / "tests" / "rtl" / "pw"
    text = (pw / "contract.toml").read_text().replace('"pw_wrap.v"', f'"{pw / "pw_wrap.v"}"')
    text = text.replace('top = "pw_wrap"', 'top = "pw_wrap"\nparameters = { BUG = 1 }')
    folder = Path(tempfile.mkdtemp(prefix="memcheck-pw-"))
    (folder / "contract.toml").write_text(text)
    cases.append(("tests/rtl/pw (posted-write bug)", folder / "contract.toml"))
    return cases


def bench_shrink() -> None:
    """Minimal-trace length of every failing example, by the phase that found it."""
    from memcheck.sim import check_contract

    print("\nminimal trace of every failing example, by the phase that found it (seed 1; target <= 10 cycles):")
    build_dir = Path(tempfile.mkdtemp(prefix="memcheck-shrink-build-"))
    worst = 0
    for name, contract in _shrink_cases():
        for phases in (("smoke", "sweep", "property"), ("sweep",), ("property",)):
            out = Path(tempfile.mkdtemp(prefix="memcheck-shrink-"))
            t0 = time.perf_counter()
            res = check_contract(contract, phases=phases, seed=1, out_dir=out, build_dir=build_dir, waveform=False)
            wall = time.perf_counter() - t0
            label = "+".join(phases) if len(phases) == 1 else "default"
            f = res.failure
            if f is None:
                print(f"  {name:34s} {label:9s} no failure found ({wall:.1f} s)")
            else:
                worst = max(worst, len(f.trace))
                minimal = "1-minimal" if "1-minimal" in f.note else "NOT 1-minimal"
                print(
                    f"  {name:34s} {label:9s} found by {f.phase:8s} {len(f.trace):3d} cycles  {minimal:13s} "
                    f"replay {'reproduces' if res.reproduced else 'DIFFERS'}  ({wall:.1f} s)"
                )
            shutil.rmtree(out, ignore_errors=True)
    print(f"  -> longest minimal trace {worst} cycles: target <= 10 {'met' if worst <= 10 else 'NOT met'}")
    shutil.rmtree(build_dir, ignore_errors=True)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--bulk-examples", type=int, default=100, help="bulk examples of the bulk-mode measurement")
    ap.add_argument(
        "--examples", type=int, default=SimOptions.examples, help="short examples of the default-phase measurement"
    )
    ap.add_argument("--max-blocks", type=int, default=12)
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--long-cycles", type=int, default=100_000, help="cycles of the long-batch measurement")
    ap.add_argument("--wall", action="store_true", help="also time a default check of every example wrapper")
    ap.add_argument("--big", action="store_true", help="default check wall time on 64K x 64 and 1K x 32 wrappers")
    ap.add_argument("--shrink", action="store_true", help="minimal-trace length of every failing example")
    ap.add_argument("--skip-property", action="store_true", help="skip the property-phase measurements")
    args = ap.parse_args()
    if not args.skip_property:
        bench_properties(args)
    if args.wall:
        bench_examples_wall()
    if args.big:
        bench_big()
    if args.shrink:
        bench_shrink()


def bench_properties(args: argparse.Namespace) -> None:
    """The property-phase measurements against the plain testbench, and the long batches."""
    ratio = bench_property(
        "property phase, bulk mode, 1K x 32 single port", 0, args.bulk_examples, args.max_blocks, args.seed
    )
    print(
        f"  -> target: the property phase within 2x of the plain testbench: "
        f"{'met' if ratio <= 2 else 'NOT met'} ({ratio:.2f}x)\n"
    )
    bench_property(
        "property phase, default budget", args.examples, SimOptions.bulk_examples, args.max_blocks, args.seed
    )
    print()
    bench_property("property phase, short examples only", args.examples, 0, args.max_blocks, args.seed)
    print()
    bench_long_batches(args.long_cycles, args.seed)


if __name__ == "__main__":
    main()
