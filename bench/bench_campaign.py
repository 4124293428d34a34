"""Figures of ``memcheck bist campaign`` (prints them; never a timed test).

(a) faulty copies per second with K copies per simulation against one copy per simulator start, same rows;
(b) wall time of ~2,000 sampled instances over every class of a 1K x 8 memory under March C- (2 local workers);
(c) the same campaign through a Dask LocalCluster of 2 worker processes.

Usage: .venv/bin/python bench/bench_campaign.py [--quick]
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

from memcheck.bist.campaign import CampaignSpec, prepare, run_campaign
from memcheck.bist.campaign.rtl import ShardJob, build_harness, compiled, run_shard
from memcheck.bist.faulty_memory import MemoryShape
from memcheck.bist.microcode import plan_engine


def copies_speedup(words: int, width: int, rows: int, singles: int) -> None:
    spec = CampaignSpec("March C-", words, width, universe="sample:40", seed=1, copies=rows)
    prepared = prepare(spec)
    job = ShardJob(0, prepared.jobs[0].rows[:rows])
    compiled(prepared.harness)
    t0 = time.perf_counter()
    run_shard(prepared.harness, job)
    many = time.perf_counter() - t0
    plan = plan_engine("March C-", words, width, backgrounds="standard" if width > 1 else "solid")
    one = build_harness(plan, MemoryShape(words, width, copies=1))
    compiled(one)
    t0 = time.perf_counter()
    for r in job.rows[:singles]:
        run_shard(one, ShardJob(0, (r,)))
    single = (time.perf_counter() - t0) / singles
    rate_many, rate_one = len(job.rows) / many, 1 / single
    print(
        f"(a) {words} x {width} March C-: {len(job.rows)} copies in one simulation {many:.2f} s = {rate_many:.0f} "
        f"faulty copies/s; one copy per simulator start {single:.3f} s = {rate_one:.1f}/s; "
        f"speed-up {rate_many / rate_one:.0f}x (target >= 10x)"
    )


def big_campaign(per_class: int, scheduler: str | None) -> float:
    spec = CampaignSpec("March C-", 1024, 8, universe=f"sample:{per_class}", seed=7)
    t0 = time.perf_counter()
    report = run_campaign(spec, workers=2, scheduler=scheduler)
    wall = time.perf_counter() - t0
    f = report.figures
    where = "Dask LocalCluster(2)" if scheduler else "2 local processes"
    print(
        f"{'(c)' if scheduler else '(b)'} 1K x 8 March C-, {f['instances']} instances ({f['simulated_copies']} copies, "
        f"{f['simulations']} simulations of {f['copies_per_simulation']}), {where}: {wall:.1f} s wall "
        f"(target <= 60 s), {len(report.disagreements)} disagreements"
    )
    return wall


def main() -> None:
    quick = "--quick" in sys.argv
    copies_speedup(64, 8, 256, 8)
    per_class = 20 if quick else 112  # 112 x 18 classes = 2,016 instances
    local = big_campaign(per_class, None)
    from dask.distributed import LocalCluster

    with LocalCluster(n_workers=2, processes=True, threads_per_worker=1, dashboard_address=None) as lc:  # type: ignore[no-untyped-call]
        remote = big_campaign(per_class, lc.scheduler_address)
    print(f"Dask overhead against local processes: {remote - local:+.1f} s ({remote / local:.2f}x)")
    print(f"(machine: 2 shared cores; files under {Path(__file__).parent})")


if __name__ == "__main__":
    main()
