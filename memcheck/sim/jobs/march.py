"""``memcheck march run`` as a job on the session: one March test alone on wrapper RTL.

``memcheck check`` runs a March test as one phase among others and shrinks what it finds; a DFT
engineer choosing the algorithm a BIST controller will run wants the test itself, in the order,
backgrounds and layout of their choice, and the first operation that fails, named the way March
tests are written: element and its notation, operation within the element, address, background.

How a run works: the expanded stream (:func:`memcheck.march.expand`) is laid out as clock cycles by
the one March schedule (:mod:`memcheck.sim.checking.schedule`: one operation per cycle, ``Del`` as
``pause_cycles`` quiet cycles) and runs in one fresh simulator, after the contract's reset sequence
if it has one; the build folder is shared with ``memcheck check``. The simulator side's March job
(:mod:`memcheck.sim.checking.march_job`) checks it batch by batch against the reference model and
the March expectation (the background or its complement, for addresses the run has already
written); only counts and the first failure come back, named here (:mod:`~memcheck.sim.checking.
march_naming`). The replay file and waveform hold the run up to the first failing cycle (a second,
short run, when it is at most :data:`REPLAY_MAX_CYCLES` cycles); ``memcheck replay`` re-runs them and
checks the contract model (not the March expectation). Verdicts cover the modelled behaviour on the
operations driven, nothing more: not sign-off.
"""

from __future__ import annotations

import pickle
from pathlib import Path
from typing import Any

from memcheck._atomic import open_atomic
from memcheck.contract import Contract
from memcheck.errors import BudgetError, FaultModelError, MemcheckError, NotationError
from memcheck.march.expand import expand
from memcheck.march.library import resolve_test
from memcheck.march.notation import MarchTest
from memcheck.ops import Trace
from memcheck.records import (
    CheckedTrace,
    CheckVerdict,
    Failure,
    MarchFailure,
    MarchRunResult,
    ModelStart,
    PhaseResult,
)
from memcheck.sim.checking.march_job import laid_cycles
from memcheck.sim.checking.march_naming import WINDOW, failure_from_job, first_failure
from memcheck.sim.checking.schedule import MarchSchedule, choose_ports, march_schedule
from memcheck.sim.options import SimOptions
from memcheck.sim.plumbing.icarus import ProgressCallback
from memcheck.sim.session import Session

#: Longest run up to the failure that gets a replay file and waveform: they are made by running the
#: stream up to the failure again through the replay job, whose memory grows by about 3 KB a cycle.
REPLAY_MAX_CYCLES = 50_000
#: Extra stall allowance per cycle for the replay job: it compares every cycle with the model after
#: the last batch, without progress records, before it reports back.
_STALL_PER_CYCLE = 50e-6
#: Extra stall allowance for the March job: the model checks one batch between progress records.
_STALL_PER_BATCH = 30.0
_PHASE = "march"


def _check_budget(opts: SimOptions) -> None:
    for name, low in (("pause_cycles", 0), ("max_ops", 1)):
        value = getattr(opts, name)
        if isinstance(value, bool) or not isinstance(value, int) or value < low:
            what = "quiet cycles per delay" if name == "pause_cycles" else ""
            raise MemcheckError(f"{name} = {value!r}; allowed: {low} or more{' ' + what if what else ''}.")


def prepare(contract: Contract, test: MarchTest | str, opts: SimOptions) -> tuple[MarchSchedule, str]:
    """Check the request and lay the test out as cycles: (schedule, test name).

    Everything a user can get wrong (notation, order, backgrounds, layout, ports, budget) is caught
    here, before anything is compiled. ``opts.seed`` starts the LFSR order (``order="lfsr"``)."""
    t = resolve_test(test) if isinstance(test, str) else test
    m = contract.memory
    writer, reader = choose_ports(contract, opts.port)
    _check_budget(opts)
    stream = expand(
        t,
        m.words,
        m.width,
        layout=opts.layout,
        order=opts.order,
        backgrounds=opts.backgrounds_for(m.width),
        any_order=opts.any_order,
        seed=opts.seed if opts.order == "lfsr" else None,
    )
    try:
        from memcheck.faults.geometry import check_consistent

        check_consistent(t, len(stream.backgrounds))
    except FaultModelError as exc:
        raise NotationError(f"a correct memory fails this test, so it cannot judge RTL: {exc}.") from None
    if stream.total_ops > opts.max_ops:
        raise BudgetError(
            f"{t.name or 'the test'} is {stream.total_ops} operations here ({t.length} x {m.words} words x "
            f"{len(stream.backgrounds)} backgrounds), more than the limit of {opts.max_ops}; raise it with "
            "--max-ops (a safety limit on run time: RTL simulation runs some 10 to 100 thousand operations a "
            "second) or use fewer backgrounds."
        )
    return march_schedule(contract, stream, writer, reader, opts.pause_cycles), t.name or "custom test"


def _model_start(c: Contract) -> tuple[ModelStart, tuple[str, ...]]:
    return ("reset", ("reset",)) if c.reset is not None else ("power-up", ())


def _run_schedule(
    s: Session, schedule: MarchSchedule, fail_reads: int = 0
) -> tuple[MarchFailure | None, dict[str, object]]:
    """The schedule runs and is checked inside the simulator, batch by batch; counts and the first
    failure come back (and, with ``fail_reads``, the first that many failing March reads, named in
    ``extra["failing_reads"]`` as (background, element, operation, address, expected, actual))."""
    work = s.out_dir / "run"
    work.mkdir(parents=True, exist_ok=True)
    stream_file = work / "stream.pickle"
    with open_atomic(stream_file) as fh:
        pickle.dump(schedule.stream, fh)
    spec = {
        "stream_pickle": str(stream_file.resolve()),
        "writer": schedule.writer,
        "reader": schedule.reader,
        "pause_cycles": schedule.pause_cycles,
        "start": _model_start(s.contract)[0],
        "window": WINDOW,
        "fail_reads": fail_reads,
    }
    res = s.launch({"mode": "march", "march": spec}, "run", extra_stall=_STALL_PER_BATCH)
    info = dict(res.extra.get("march", {}))
    extra = {k: v for k, v in res.extra.items() if k != "march"}
    extra.update({k: v for k, v in info.items() if k != "failure"})
    if "failing_reads" in info:
        extra["failing_reads"] = [_named_read(schedule, *row) for row in info["failing_reads"]]
    return failure_from_job(s.contract, schedule, info), extra


def _named_read(schedule: MarchSchedule, cycle: int, op: int, expected: str, diff: str) -> list[int]:
    """A failing March read the job listed, as a fail-log row: (background, element, operation in the
    element, address, expected, actual); bits read as X or Z count as failing (complemented)."""
    step = schedule.step(int(op))
    exp = int(expected, 16)
    return [step.background, step.element, step.step, step.op.address, exp, exp ^ int(diff, 16)]


def _replay_prefix(s: Session, schedule: MarchSchedule, name: str, failure: MarchFailure, notes: list[str]) -> Any:
    """Run the schedule up to the failing cycle again (with the waveform when asked): its compared
    rows are the replay file, and it shows whether the failure reproduces.
    Returns (replay file, waveform, reproduced)."""
    k = failure.cycle
    if k + 1 > REPLAY_MAX_CYCLES:
        notes.append(
            f"no replay file{' or waveform' if s.options.waveform else ''}: the run up to the failure is "
            f"{k + 1} cycles (more than {REPLAY_MAX_CYCLES}); the report names the failing operation"
        )
        return None, None, None
    start, preamble = _model_start(s.contract)
    desc = f"{name} on RTL up to its first failing cycle ({k})"
    prefix = Trace(tuple(laid_cycles(schedule, k + 1)))
    replayed, wave = s.replay(
        Failure(_PHASE, preamble, CheckedTrace(start, ()), desc, prefix), extra_stall=_STALL_PER_CYCLE * (k + 1)
    )
    reproduced = replayed.signature() == failure.window.signature() if failure.model_diff else None
    replay_path = s.write_replay_file(Failure(_PHASE, preamble, replayed, desc))
    if not failure.model_diff:
        notes.append(
            "the contract model accepts the failing read, so the replay file (which checks the "
            "contract model) shows no difference there"
        )
    return replay_path, wave, reproduced


def run_march(
    contract: Contract | str | Path,
    test: MarchTest | str,
    options: SimOptions | None = None,
    *,
    on_progress: ProgressCallback | None = None,
    fail_reads: int = 0,
    **overrides: Any,
) -> MarchRunResult:
    """Run ``test`` (library name, notation or MarchTest) alone on the contract's RTL under Icarus.

    Returns a :class:`~memcheck.records.MarchRunResult`: verdict "pass", or "fail" with ``failure``
    naming the first failing operation. Bad input (notation, algorithm, order, backgrounds, layout,
    ports, budget, contract, RTL that does not compile, a stalled simulation) raises a MemcheckError
    subclass. Keyword ``overrides`` set :class:`~memcheck.sim.options.SimOptions` fields
    (``backgrounds="solid", port="a"``). ``fail_reads`` > 0: the run goes on past its first failure
    and ``extra["failing_reads"]`` lists the first ``fail_reads`` failing March reads
    (``extra["failing_reads_total"]`` counts them all); the verdict and ``failure`` are unchanged.
    """
    opts = (options or SimOptions()).replace(**overrides)
    s = Session.open(contract, opts, job="march", on_progress=on_progress)
    schedule, name = prepare(s.contract, test, s.options)
    s.compile()
    failure, extra = _run_schedule(s, schedule, fail_reads)
    notes: list[str] = []
    if schedule.pauses:
        notes.append(
            f"each delay element ran as {schedule.pause_cycles} quiet cycles; RTL simulation has no "
            "charge leakage, so this checks that the contents survive idle cycles, not retention"
        )
    files = _replay_prefix(s, schedule, name, failure, notes) if failure is not None else (None, None, None)
    stream = schedule.stream
    ran = int(str(extra.get("cycles_run", schedule.total_cycles)))
    verdict = CheckVerdict.FAIL if failure is not None else CheckVerdict.PASS
    detail = "" if failure is None else f"first failure at cycle {failure.cycle}: {failure.description}"
    phase = PhaseResult(_PHASE, "fail" if failure else "pass", ran, schedule.operations, s.elapsed(), detail)
    return MarchRunResult(
        verdict=verdict,
        phases=(phase,),
        failure=failure,
        replay_file=files[0],
        waveform_file=files[1],
        reproduced=files[2],
        notes=tuple(notes),
        extra=extra,
        **s.record_fields(),
        test=stream.test,
        test_name=name,
        order=s.options.order,
        any_order=s.options.any_order,
        layout=stream.layout,
        backgrounds=tuple(bg.name for bg in stream.backgrounds),
        writer=s.contract.ports[schedule.writer].name,
        reader=s.contract.ports[schedule.reader].name,
        pause_cycles=schedule.pause_cycles,
        operations=schedule.operations,
        cycles=schedule.total_cycles,
    )


def check_by_replay(s: Session, schedule: MarchSchedule) -> tuple[MarchFailure | None, dict[str, object]]:
    """The earlier way to run a schedule, kept for comparisons (bench/, tests), not used by
    :func:`run_march`: the replay job runs every cycle and sends every cycle's comparison back (about
    3 KB per operation in each process), and the first failure is found in Python."""
    start, preamble = _model_start(s.contract)
    whole = Failure(_PHASE, preamble, CheckedTrace(start, ()), "March run", Trace(tuple(schedule.cycles())))
    res = s.launch(
        {"mode": "replay", "failure": whole.to_json(), "dump": False},
        "run",
        extra_stall=_STALL_PER_CYCLE * schedule.total_cycles,
    )
    assert res.replayed is not None
    return first_failure(s.contract, schedule, res.replayed), dict(res.extra)
