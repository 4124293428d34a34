"""Figures of ``memcheck bist campaign`` (prints them; never a timed test). Each figure is printed with
the load average (``os.getloadavg``) when it was taken: the machine is shared.

(a) faulty copies per second with K copies per simulation against one copy per simulator start, same rows,
    for Icarus and Verilator (target >= 10x each);
(b) wall time of ~2,000 sampled instances over every class of a 1K x 8 memory under March C- (2 local
    workers), Icarus and Verilator side by side; Verilator cold (empty build cache, its run-time library
    included) and warm (the harness already compiled); with the time split into plan/simulate/compare;
(c) the same campaign through a Dask LocalCluster of 2 worker processes (Verilator, warm);
(d) how long an unusable ``--scheduler`` address takes to be refused (nothing listening; a silent listener),
    target <= 30 s including start-up;
(e) with ``--literal``: ``--universe sample:2000`` as written, i.e. 2,000 per class (36,000 instances).

Usage: .venv/bin/python bench/bench_campaign.py [--quick] [--no-icarus] [--literal]
"""

from __future__ import annotations

import os
import resource
import socket
import subprocess
import sys
import tempfile
import threading
import time
from pathlib import Path

from memcheck.bist.campaign import CampaignSpec, prepare, run_campaign
from memcheck.bist.campaign.rtl import ShardJob, build_harness, compiled, run_shard
from memcheck.bist.faulty_memory import MemoryShape
from memcheck.bist.microcode import plan_engine
from memcheck.faults.universe import CLASSES

#: The issue's "2,000 sampled instances over all classes": per class, every class (static and dynamic)
#: of the campaign's default (25 classes: 80 x 25 = 2,000).
PER_CLASS = -(-2000 // len(CLASSES))


def load() -> str:
    return "load {:.1f} {:.1f} {:.1f}".format(*os.getloadavg())


def cpu() -> float:
    """CPU seconds of this process and its finished children (compilers, simulators, local workers)."""
    me, kids = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
    return me.ru_utime + me.ru_stime + kids.ru_utime + kids.ru_stime


def copies_speedup(simulator: str, words: int, width: int, rows: int, singles: int) -> float:
    spec = CampaignSpec("March C-", words, width, universe="sample:40", seed=1, copies=rows, simulator=simulator)
    prepared = prepare(spec)
    job = ShardJob(0, prepared.jobs[0].rows[:rows])
    compiled(prepared.harness)
    t0 = time.perf_counter()
    run_shard(prepared.harness, job)
    many = time.perf_counter() - t0
    plan = plan_engine("March C-", words, width, backgrounds="standard" if width > 1 else "solid")
    one = build_harness(plan, MemoryShape(words, width, copies=1), simulator)
    compiled(one)
    t0 = time.perf_counter()
    for r in job.rows[:singles]:
        run_shard(one, ShardJob(0, (r,)))
    single = (time.perf_counter() - t0) / singles
    rate_many, rate_one = len(job.rows) / many, 1 / single
    ratio = rate_many / rate_one
    print(
        f"(a) {simulator:<9} {words} x {width} March C-: {len(job.rows)} copies in one simulation {many:.2f} s = "
        f"{rate_many:.0f} copies/s; one copy per simulator start {single:.3f} s = {rate_one:.1f}/s; "
        f"ratio {ratio:.0f}x (target >= 10x) [{load()}]",
        flush=True,
    )
    return ratio


def big_campaign(per_class: int, simulator: str, tag: str, scheduler: str | None = None) -> float:
    spec = CampaignSpec("March C-", 1024, 8, universe=f"sample:{per_class}", seed=7, simulator=simulator)
    before = load()
    t0, c0 = time.perf_counter(), cpu()
    report = run_campaign(spec, workers=None if scheduler else 2, scheduler=scheduler)
    wall, used = time.perf_counter() - t0, cpu() - c0
    f = report.figures
    phases = ", ".join(f"{k} {v:.1f} s" for k, v in report.phases)
    where = "Dask LocalCluster(2)" if scheduler else "2 local processes"
    print(
        f"{tag} {simulator:<9} 1K x 8 March C-, {f['instances']} instances ({f['simulated_copies']} copies, "
        f"{f['simulations']} simulations of {f['copies_per_simulation']}), {where}: {wall:.1f} s wall, "
        f"{used:.1f} s CPU here ({phases}; target <= 60 s), {len(report.disagreements)} disagreements "
        f"[{before} -> {load()}]",
        flush=True,
    )
    return wall


def _silent_listener(stop: threading.Event) -> int:
    server = socket.socket()
    server.bind(("127.0.0.1", 0))
    server.listen(8)
    server.settimeout(0.2)
    held = []

    def serve() -> None:
        while not stop.is_set():
            try:
                held.append(server.accept()[0])
            except TimeoutError:
                continue
        for c in held:
            c.close()
        server.close()

    threading.Thread(target=serve, daemon=True).start()
    return int(server.getsockname()[1])


def scheduler_refusal() -> None:
    exe = Path(sys.executable).with_name("memcheck")
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        free = s.getsockname()[1]
    stop = threading.Event()
    silent = _silent_listener(stop)
    try:
        for what, port in (("nothing listening", free), ("silent listener", silent)):
            argv = [str(exe), "bist", "campaign", "MATS+", "--words", "8", "--scheduler", f"tcp://127.0.0.1:{port}"]
            before = load()
            t0 = time.perf_counter()
            proc = subprocess.run(argv, capture_output=True, text=True, timeout=120)
            wall = time.perf_counter() - t0
            named = f"127.0.0.1:{port}" in proc.stderr
            print(
                f"(d) --scheduler, {what}: exit {proc.returncode} after {wall:.1f} s wall (target <= 30 s), "
                f"address named: {named} [{before}]",
                flush=True,
            )
    finally:
        stop.set()


def main() -> None:
    quick = "--quick" in sys.argv
    per_class = 20 if quick else PER_CLASS
    print(f"bench_campaign on {os.cpu_count()} cores [{load()}]", flush=True)
    scheduler_refusal()
    for simulator in ("icarus", "verilator"):
        copies_speedup(simulator, 64, 8, 256, 8)
    walls: dict[str, float] = {}
    if "--no-icarus" not in sys.argv:
        walls["icarus"] = big_campaign(per_class, "icarus", "(b)")
    with tempfile.TemporaryDirectory(prefix="bench-campaign-cold-") as cold:
        tempfile.tempdir = cold  # an empty build cache: the first run compiles everything
        try:
            walls["verilator cold"] = big_campaign(per_class, "verilator", "(b) cold")
            walls["verilator warm"] = big_campaign(per_class, "verilator", "(b) warm")
        finally:
            tempfile.tempdir = None
    print("(b) side by side: " + ", ".join(f"{k} {v:.1f} s" for k, v in walls.items()), flush=True)
    from dask.distributed import LocalCluster

    big_campaign(per_class, "verilator", "(c) warm")  # this cache (the cold one above is gone)
    with LocalCluster(n_workers=2, processes=True, threads_per_worker=1, dashboard_address=None) as lc:  # type: ignore[no-untyped-call]
        remote = big_campaign(per_class, "verilator", "(c)", lc.scheduler_address)
    local = big_campaign(per_class, "verilator", "(c) warm")
    print(f"(c) Dask overhead against local processes: {remote - local:+.1f} s ({remote / local:.2f}x)", flush=True)
    if "--literal" in sys.argv:
        big_campaign(2000, "verilator", "(e) sample:2000")


if __name__ == "__main__":
    main()
