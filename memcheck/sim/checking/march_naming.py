"""Name the first failing cycle of a March run: element, operation, address, background, port.

The simulator's March job (:mod:`memcheck.sim.checking.march_job`) reports the cycle and the last
:data:`WINDOW` compared cycles; :func:`name_failure` says, from the schedule alone, what the port did
then and which March operation it belongs to. :func:`first_failure` finds the first failure of a
whole compared run in Python (observations from anywhere: a whole run sent back, a stand-in).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Sequence
from typing import Any

import numpy as np

from memcheck._limbs import limbs_to_int
from memcheck.contract import Contract
from memcheck.march.expand import MarchStep
from memcheck.ops import OpKind
from memcheck.records import Activity, CheckedTrace, MarchFailure, ModelStart, Observed
from memcheck.sim.checking.compare import compare, start_model
from memcheck.sim.checking.schedule import MarchSchedule

#: Cycles shown in the report's table, ending at the failing one.
WINDOW = 12


def _activity(schedule: MarchSchedule, port: int, issued: int) -> tuple[Activity, int | None]:
    """What port ``port`` did at cycle ``issued``: the March read or write it carried, or nothing of
    the test's (``quiet``); with the March operation of that cycle, else the last one before."""
    if 0 <= issued < schedule.total_cycles:
        op = schedule.op_at(issued)
        if op >= 0:
            cyc = schedule.cycle_at(issued)
            kind = cyc[port].kind
            is_write = any(o.kind == OpKind.WRITE for o in cyc)
            carrier = schedule.writer if is_write else schedule.reader
            if port == carrier and kind != OpKind.IDLE:
                return ("write" if kind == OpKind.WRITE else "read"), op
            return "quiet", op
    return "quiet", schedule.last_op_before(issued)


def _describe(
    schedule: MarchSchedule, contract: Contract, port: int, cycle: int, issued: int, activity: Activity, op: int | None
) -> tuple[MarchStep | None, str]:
    stream = schedule.stream
    lat = contract.memory.read_latency
    pname = contract.ports[port].name
    step = schedule.step(op) if op is not None else None
    where = "" if step is None else stream.describe_step(dataclasses.replace(step, expected=None))
    due = "" if lat == 0 else f", data due at cycle {cycle} (read_latency = {lat})"
    if activity == "read":
        return step, f"{where}; the read was issued at cycle {issued} on port {pname}{due}"
    if activity == "write":
        return step, (
            f"{where}; port {pname} wrote at cycle {issued}: its read data in a cycle that writes "
            f"(read_during_write){due}"
        )
    quiet_op = schedule.cycle_at(issued)[port] if 0 <= issued < schedule.total_cycles else None
    doing = (
        "read address 0 (a port without an enable reads when the test does not use it)"
        if quiet_op is not None and quiet_op.kind == OpKind.READ
        else "issued no read (idle_read_data)"
    )
    span = schedule.pause_at(issued)
    if span is not None:
        el = span.pause.element
        text = (
            f"port {pname} {doing} at cycle {issued}, during the pause of element {el} "
            f"{stream.test.elements[el].to_unicode()} ({schedule.pause_cycles} quiet cycles, "
            f"background {stream.backgrounds[span.pause.background].name}){due}"
        )
    elif issued < 0:
        text = f"port {pname} read data at cycle {cycle}, before the first operation"
    else:
        text = f"port {pname} {doing} at cycle {issued}{due}"
    if step is not None:
        during = schedule.op_at(issued) == step.index
        text += f"; {'meanwhile' if during else 'the last operation before'}: {where}"
    return step, text


def first_failure(contract: Contract, schedule: MarchSchedule, checked: CheckedTrace) -> MarchFailure | None:
    """The first cycle where read data differs from the contract model or the March expectation.

    ``checked`` holds the model comparison of every cycle of ``schedule`` (from a whole run sent
    back by the simulator, or from a Python stand-in of the RTL in tests)."""
    rows = checked.rows
    if len(rows) != schedule.total_cycles:
        raise ValueError(f"{len(rows)} compared cycles for a schedule of {schedule.total_cycles}")
    mask = contract.memory.word_mask
    r = schedule.reader
    model_first = checked.first_mismatch
    due, expected, ops = schedule.judged_reads()
    march_first: tuple[int, int, int] | None = None  # (due cycle, diff, expected)
    for j in range(len(due)):
        at = int(due[j])
        if model_first is not None and at > model_first:
            break
        obs = rows[at].observed[r]
        assert obs is not None
        want = limbs_to_int(expected[j])
        d = mask & ((obs.value ^ want) | ~obs.defined)
        if d:
            march_first = (at, d, want)
            break
    if model_first is None and march_first is None:
        return None
    cycle = min(x for x in (model_first, None if march_first is None else march_first[0]) if x is not None)
    march_diff = 0
    march_expected = None
    if march_first is not None and march_first[0] == cycle:
        march_diff, march_expected = march_first[1], march_first[2]
    else:
        hit = np.flatnonzero(ops == schedule.op_at(cycle - contract.memory.read_latency))
        if len(hit):
            march_expected = limbs_to_int(expected[int(hit[0])])
    window = CheckedTrace(checked.start, rows[max(0, cycle - WINDOW + 1) : cycle + 1])
    return name_failure(contract, schedule, window, march_expected, march_diff)


def name_failure(
    contract: Contract, schedule: MarchSchedule, window: CheckedTrace, march_expected: int | None, march_diff: int
) -> MarchFailure:
    """Name the failure at the last row of ``window`` (the first failing cycle). ``march_expected`` is
    the March expectation of the read the reader's data answers there (None: none applies)."""
    if not contract.lockstep:
        return _name_on_ticks(contract, schedule, window, march_diff)
    row = window.rows[-1]
    cycle = row.cycle
    r = schedule.reader
    port = r if march_diff or row.diff[r] else next(i for i, d in enumerate(row.diff) if d)
    issued = cycle - contract.memory.read_latency
    activity, op = _activity(schedule, port, issued)
    if port != r or activity != "read":
        march_expected = None
    step, text = _describe(schedule, contract, port, cycle, issued, activity, op)
    obs = row.observed[port]
    assert obs is not None
    shown = CheckedTrace(window.start if cycle < WINDOW else "unknown", window.rows[-WINDOW:])
    return MarchFailure(
        cycle,
        contract.ports[port].name,
        issued,
        activity,
        step,
        text,
        march_expected,
        row.expected[port],
        obs,
        march_diff,
        row.diff[port],
        shown,
    )


def _name_on_ticks(contract: Contract, schedule: MarchSchedule, window: CheckedTrace, march_diff: int) -> MarchFailure:
    """Several clocks: the schedule was laid on the tick timeline, so its cycle numbers do not name the
    failing tick; the failure is named from the window's own rows (the issuing operation counts the
    port's own edges) without a March step."""
    row = window.rows[-1]
    port = next((i for i, d in enumerate(row.diff) if d), schedule.reader)
    lat = contract.memory.read_latency
    own = [r for r in window.rows[:-1] if r.ops[port].kind != OpKind.NO_EDGE]
    src = row if lat == 0 else (own[-lat] if len(own) >= lat else None)
    op = None if src is None else src.ops[port]
    kind = None if op is None else op.kind
    activity: Activity = "read" if kind == OpKind.READ else "write" if kind == OpKind.WRITE else "quiet"
    name = contract.ports[port].name
    what = "an operation before the kept window" if op is None else op.describe()
    text = (
        f"port {name}, tick {row.cycle}: read data answering {what} "
        "(several clocks: ticks of the laid schedule; the March step is not named)"
    )
    obs = row.observed[port]
    assert obs is not None
    issued = row.cycle - lat if src is None else src.cycle
    return MarchFailure(
        row.cycle, name, issued, activity, None, text, None, row.expected[port], obs, march_diff, row.diff[port], window
    )


def failure_from_job(contract: Contract, schedule: MarchSchedule, info: dict[str, Any]) -> MarchFailure | None:
    """The first failure as the simulation's March job reported it (see
    :func:`memcheck.sim.march_job.run_march_job`), named against ``program`` (light or full)."""
    f = info.get("failure")
    if f is None:
        return None
    window = CheckedTrace.from_json(f["window"])
    march = f.get("march")
    return name_failure(
        contract,
        schedule,
        window,
        None if march is None else int(march["expected"], 16),
        0 if march is None else int(march["diff"], 16),
    )


def check_schedule(
    contract: Contract,
    schedule: MarchSchedule,
    observed: Sequence[tuple[Observed | None, ...]],
) -> MarchFailure | None:
    """:func:`first_failure` for observations from anywhere (a Python stand-in of the RTL, a log):
    runs the model over the program from power-up, or right after reset, and compares."""
    start: ModelStart = "reset" if contract.reset is not None else "power-up"
    cycles = schedule.cycles()
    expected = start_model(contract, start).run(cycles)
    return first_failure(contract, schedule, compare(expected, observed, cycles, start))
