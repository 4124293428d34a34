"""Closing cover holes: directed examples after the random property examples.

For each cover point the random examples left unhit, :func:`memcheck.cover.directed_cycles` builds a
short trace that exercises it; it runs as an independent example (checked from the canonical state,
like any other) until every point is hit or ``SimOptions.directed_examples`` examples have run. A
reset in mid-run is closed by running the example preamble (reset, fill, flush) again before one
more example. Points without a directed trace (power episodes) stay holes.
"""

from __future__ import annotations

from memcheck.cover import CoverPoint, coverage_of, directed_cycles
from memcheck.ops import Cycle
from memcheck.records import CheckedTrace
from memcheck.sim.checking.runner import EXAMPLE_PREAMBLE, Runner


def _trace_for(runner: Runner, point: CoverPoint) -> list[Cycle] | None:
    c = runner.contract
    if point.kind == "reset.mid_run":
        port = c.ports[0]
        cycles = directed_cycles(c, CoverPoint(f"{port.name}:op.{'read' if port.can_read else 'write'}", ""))
        if cycles is not None:
            runner.run_steps(EXAMPLE_PREAMBLE)
        return cycles
    return directed_cycles(c, point)


def close_holes(runner: Runner, stats: dict[str, int]) -> CheckedTrace | None:
    """Run directed examples for the holes left; the first failing check (None: all conformed).

    ``stats`` gains ``directed`` (examples run) and the operations and cycles they drove."""
    budget = runner.options.directed_examples
    tried: set[str] = set()
    runner.where = {"phase": "property", "what": "directed examples for cover holes", "done": 0}
    while stats.setdefault("directed", 0) < budget:
        holes = [h.point for h in coverage_of(runner.contract, runner.coverage).holes if h.point.key not in tried]
        if not holes:
            break
        point = holes[0]
        tried.add(point.key)
        cycles = _trace_for(runner, point)
        if cycles is None:
            continue
        stats["directed"] += 1
        stats["cycles"] += len(cycles)
        stats["ops"] += sum(1 for cyc in cycles for op in cyc if op.kind.value in (1, 2))
        runner.where["done"] = stats["directed"]
        checked = runner.run_example(cycles)
        if not checked.ok:
            return checked
    return None
