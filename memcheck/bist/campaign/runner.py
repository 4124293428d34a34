"""Run a campaign: plan the rows, cut them into shards of ``copies`` rows, simulate the shards here, in
local worker processes or on a Dask cluster, and put the verdicts together.

Shards are numbered and results are put back in shard order, so the outcome is the same, shard for
shard, whichever way the shards ran.
"""

from __future__ import annotations

import os
import time
from collections.abc import Callable, Iterator, Sequence
from concurrent.futures import ProcessPoolExecutor, as_completed
from dataclasses import dataclass
from typing import Any, Literal

from memcheck.bist.campaign.plan import RTL_CLASSES, Row, check_budget, plan_instances, rows_of, verdict_of
from memcheck.bist.campaign.report import CampaignReport, InstanceOutcome, build_report
from memcheck.bist.campaign.rtl import Harness, ShardJob, ShardResult, build_harness, compiled, run_shard
from memcheck.bist.campaign.scheduler import on_cluster, probe
from memcheck.bist.campaign.verilator import VERILATOR_COPIES, choose_simulator
from memcheck.bist.faulty_memory import MemoryShape, check_copies, default_copies
from memcheck.bist.microcode import plan_engine
from memcheck.errors import BistError
from memcheck.faults import simulate
from memcheck.faults.geometry import Arrangement
from memcheck.faults.universe import parse_classes, parse_universe
from memcheck.march import MarchTest, resolve_test

Progress = Callable[[int, int], None]


@dataclass(frozen=True)
class CampaignSpec:
    """What to measure (the options of ``memcheck bist campaign``)."""

    test: str | MarchTest  # a library name, notation, or a test resolved already (a user library's)
    words: int
    width: int = 1
    layout: tuple[int, int] | None = None
    order: str = "linear"
    any_order: Literal["up", "down"] = "up"
    backgrounds: str | None = None
    classes: str | None = None
    universe: str = "all"
    seed: int = 1
    copies: int | None = None
    pause_cycles: int = 100
    read_latency: int = 1
    simulator: str = "auto"  # auto, icarus or verilator (see choose_simulator)


@dataclass(frozen=True)
class Prepared:
    spec: CampaignSpec
    setup: Arrangement
    harness: Harness
    instances: list[tuple[str, list[Any]]]
    rows: list[Row]
    jobs: list[ShardJob]
    label: str
    backgrounds: tuple[str, ...]
    test: MarchTest


def prepare(spec: CampaignSpec) -> Prepared:
    """Check the request and plan every simulation (raises a MemcheckError naming the cause)."""
    test = spec.test if isinstance(spec.test, MarchTest) else resolve_test(spec.test)
    setup = Arrangement(spec.words, spec.width, spec.layout, spec.order, spec.backgrounds, spec.seed, spec.any_order)
    bg = setup.background_spec
    plan = plan_engine(
        test,
        spec.words,
        spec.width,
        order=spec.order,
        any_order=spec.any_order,
        backgrounds=bg if isinstance(bg, str) else ",".join(bg),
        layout=spec.layout,
        seed=spec.seed,
        pause_cycles=spec.pause_cycles,
        read_latency=spec.read_latency,
    )
    if test.delays and spec.pause_cycles < 1:
        raise BistError(
            "the test has delay elements: a campaign needs --pause-cycles of at least 1 (the retention time)"
        )
    if spec.copies is not None:
        check_copies(spec.words, spec.copies)
    classes = parse_classes(spec.classes) if spec.classes is not None else RTL_CLASSES
    universe = parse_universe(spec.universe, spec.seed)
    check_budget(setup, classes, universe)
    instances = plan_instances(setup, classes, universe)
    rows: list[Row] = []
    flat = [f for _, found in instances for f in found]
    for i, f in enumerate(flat):
        rows.extend(rows_of(i, f, spec.width))
    simulator = choose_simulator(spec.simulator, len(rows) * plan.cycles())
    copies = spec.copies if spec.copies is not None else default_copies(spec.words, len(rows))
    if spec.copies is None and simulator == "verilator":
        copies = min(copies, VERILATOR_COPIES)
    check_copies(spec.words, copies)
    shape = MemoryShape(spec.words, spec.width, plan.read_latency, copies, max(1, spec.pause_cycles))
    jobs = [
        ShardJob(j, tuple(r.packed(drive=k == 0) for k, r in enumerate(rows[s : s + copies])))
        for j, s in enumerate(range(0, len(rows), copies))
    ]
    label = test.name or (spec.test if isinstance(spec.test, str) else test.to_unicode())
    return Prepared(
        spec,
        setup,
        build_harness(plan, shape, simulator),
        instances,
        rows,
        jobs,
        label,
        tuple(b.name for b in plan.backgrounds),
        test,
    )


def _local(harness: Harness, jobs: Sequence[ShardJob], workers: int) -> Iterator[ShardResult]:
    compiled(harness)  # once, here, before the workers need it
    if workers <= 1 or len(jobs) <= 1:
        for job in jobs:
            yield run_shard(harness, job)
        return
    with ProcessPoolExecutor(max_workers=min(workers, len(jobs))) as pool:
        futures = [pool.submit(run_shard, harness, job) for job in jobs]
        try:
            for fut in as_completed(futures):
                yield fut.result()
        except BaseException:
            for fut in futures:
                fut.cancel()
            raise


def execute(
    prepared: Prepared, *, workers: int | None = None, scheduler: str | None = None, progress: Progress | None = None
) -> list[ShardResult]:
    """Every shard's result, in shard order."""
    jobs = prepared.jobs
    n = workers if workers is not None else (os.cpu_count() or 1)
    source = on_cluster(prepared.harness, jobs, scheduler) if scheduler else _local(prepared.harness, jobs, n)
    results: dict[int, ShardResult] = {}
    if progress is not None:
        progress(0, len(jobs))  # the total is known while the harness compiles
    for res in source:
        results[res.index] = res
        if progress is not None:
            progress(len(results), len(jobs))
    return [results[j.index] for j in jobs]


def outcomes(prepared: Prepared, results: Sequence[ShardResult]) -> list[InstanceOutcome]:
    """RTL verdict and simulator verdict of every instance."""
    for res in results:
        if res.failed and res.failed[0] != res.engine_fail:
            raise BistError(
                f"shard {res.index}: the engine's own fail flag ({int(res.engine_fail)}) differs from the harness's "
                f"comparison of the same copy ({int(res.failed[0])}); the harness does not match this engine"
            )
    failed = [f for r in results for f in r.failed]
    first = [w for r in results for w in r.first]
    by_instance: dict[int, list[int]] = {}
    for k, row in enumerate(prepared.rows):
        by_instance.setdefault(row.instance, []).append(k)
    flat = [(cls, f) for cls, found in prepared.instances for f in found]
    setup = prepared.setup
    test = prepared.test
    sim = simulate(test, [f for _, f in flat], setup)
    out = []
    for i, ((cls, fault), fr) in enumerate(zip(flat, sim, strict=True)):
        ks = by_instance[i]
        rows = [prepared.rows[k] for k in ks]
        rtl = verdict_of(fault, rows, [failed[k] for k in ks], setup.width)
        out.append(
            InstanceOutcome(cls, fault, rtl, fr, tuple(rows), tuple(failed[k] for k in ks), tuple(first[k] for k in ks))
        )
    return out


def run_campaign(
    spec: CampaignSpec,
    *,
    workers: int | None = None,
    scheduler: str | None = None,
    progress: Progress | None = None,
) -> CampaignReport:
    """Measure ``spec`` on RTL and compare it with the fast fault simulator, instance by instance."""
    t0 = time.perf_counter()
    if scheduler:
        probe(scheduler)  # before planning: a bad address costs only the probe
    prepared = prepare(spec)
    t1 = time.perf_counter()
    results = execute(prepared, workers=workers, scheduler=scheduler, progress=progress)
    t2 = time.perf_counter()
    found = outcomes(prepared, results)
    t3 = time.perf_counter()
    phases = (("plan", t1 - t0), ("simulate", t2 - t1), ("compare", t3 - t2))
    return build_report(prepared, found, t3 - t0, phases)
