"""``memcheck mutate``: the check's strength on the user's own wrapper, measured with source mutants.

Each sampled mutant (:mod:`memcheck.mutation`) is written to a scratch folder (never over the
user's sources), compiled and checked with the normal check (the job of ``check_contract``, same
seed and budget for every mutant, without the replay of a failure) in worker processes, each with
its own output folder. The unmutated
wrapper is checked too, alongside: when it fails, the measure means nothing and the run stops.
"""

from __future__ import annotations

import dataclasses
import multiprocessing
import time
from collections.abc import Callable, Sequence
from concurrent.futures import Future, ProcessPoolExecutor, as_completed
from dataclasses import dataclass
from pathlib import Path

from memcheck._atomic import write_text_atomic
from memcheck.contract import Contract, unchecked_behaviours
from memcheck.errors import MemcheckError, SimulationError, SimulationStalled, UsageError
from memcheck.mutation.explain import survivor_reason
from memcheck.mutation.operators import Mutant
from memcheck.mutation.plan import MutationPlan, plan_mutants, source_diff
from memcheck.mutation.results import MutantOutcome, MutantStatus, MutationReport
from memcheck.sim.checking.support import require_simulator_support
from memcheck.sim.jobs.check import _validate as validate_options
from memcheck.sim.options import SimOptions
from memcheck.sim.session import Session, default_out_dir, fresh_seed, resolve_contract

#: Called with each mutant's outcome as it arrives (progress output).
OutcomeCallback = Callable[[MutantOutcome], None]


@dataclass(frozen=True)
class _Task:
    ident: str
    contract: Contract
    options: SimOptions


@dataclass(frozen=True)
class _Done:
    ident: str
    status: MutantStatus
    how: str
    cycles: int | None
    seconds: float
    unconnected: tuple[str, ...] = ()


def _first_line(text: str) -> str:
    return text.strip().splitlines()[0] if text.strip() else ""


def _run_task(task: _Task) -> _Done:
    """Compile and check one contract (a worker process's job): the check of ``check_contract``
    without the replay of a failure, which a mutant does not need."""
    t0 = time.perf_counter()
    s = Session.open(task.contract, task.options)
    try:
        s.compile()
    except SimulationError as exc:
        return _Done(task.ident, MutantStatus.NOT_COMPILED, _first_line(str(exc)), None, time.perf_counter() - t0)
    unconnected = s.build.pins.unconnected_inputs if s.build is not None else ()
    try:
        res = s.launch({"mode": "check"}, "run")
    except SimulationStalled:
        return _Done(task.ident, MutantStatus.KILLED, "hang", None, time.perf_counter() - t0)
    except MemcheckError as exc:
        return _Done(task.ident, MutantStatus.KILLED, f"error: {_first_line(str(exc))}", None, time.perf_counter() - t0)
    seconds = time.perf_counter() - t0
    if res.failure is None:
        return _Done(task.ident, MutantStatus.SURVIVED, "", None, seconds, unconnected)
    cycles = len(res.failure.trace.cycles)
    return _Done(task.ident, MutantStatus.KILLED, res.failure.phase, cycles, seconds, unconnected)


def _mutant_contract(c: Contract, plan: MutationPlan, ident: str, folder: Path) -> Contract:
    """The contract with the mutated file written under ``folder`` in place of the original."""
    mutant = dict(plan.chosen)[ident]
    assert c.rtl is not None
    path = folder / mutant.file.name
    write_text_atomic(path, mutant.apply(plan.texts[mutant.file]))
    sources = tuple(path if s == mutant.file else s for s in c.rtl.sources)
    incs = (*c.rtl.include_dirs, mutant.file.parent)
    rtl = dataclasses.replace(c.rtl, sources=sources, include_dirs=incs)
    return dataclasses.replace(c, rtl=rtl, path=None)


def _tasks(c: Contract, plan: MutationPlan, opts: SimOptions, out: Path) -> list[_Task]:
    assert c.rtl is not None
    original = dataclasses.replace(c, path=None)
    tasks = [_Task("original", original, opts.replace(out_dir=out / "original"))]
    for ident, _ in plan.chosen:
        folder = out / "mutants" / ident
        tasks.append(_Task(ident, _mutant_contract(c, plan, ident, folder), opts.replace(out_dir=folder / "run")))
    return tasks


def _outcome(c: Contract, plan: MutationPlan, done: _Done, undriven: tuple[str, ...]) -> MutantOutcome:
    mutant = dict(plan.chosen)[done.ident]
    text = plan.texts[mutant.file]
    reason = None
    if done.status == MutantStatus.SURVIVED:
        tied = tuple(c.rtl.tie) if c.rtl is not None else ()
        reason = survivor_reason(mutant, text, tied=tied, undriven=undriven, unknown=unchecked_behaviours(c))
    return MutantOutcome(
        done.ident,
        mutant,
        done.status,
        done.how,
        done.cycles,
        done.seconds,
        reason,
        source_diff(mutant, text, done.ident),
    )


def _baseline_failed(done: _Done) -> UsageError:
    what = "fails" if done.status == MutantStatus.KILLED else "does not compile"
    return UsageError(
        f"the check {what} on the unmutated wrapper ({done.how or 'see memcheck check'}); fix that first "
        "(run 'memcheck check' on the contract), since a mutant can only be measured against a wrapper that conforms."
    )


def _run_all(tasks: list[_Task], workers: int, on_done: Callable[[_Done], None]) -> None:
    """Run ``tasks`` in ``workers`` processes (one: in this process, one after the other)."""
    if workers == 1:
        for t in tasks:
            on_done(_run_task(t))
        return
    ctx = multiprocessing.get_context("spawn")
    with ProcessPoolExecutor(max_workers=workers, mp_context=ctx) as pool:
        futures: list[Future[_Done]] = [pool.submit(_run_task, t) for t in tasks]
        try:
            for fut in as_completed(futures):
                on_done(fut.result())
        except BaseException:
            for f in futures:
                f.cancel()
            raise


def mutate_contract(
    contract: Contract | str | Path,
    *,
    mutants: int = 50,
    seed: int | None = None,
    workers: int = 2,
    options: SimOptions | None = None,
    out_dir: str | Path | None = None,
    on_outcome: OutcomeCallback | None = None,
    given: Sequence[Mutant] | None = None,
    only: Sequence[str] = (),
) -> MutationReport:
    """Measure the check's strength on the contract's own wrapper RTL with ``mutants`` source mutants.

    Parameters
    ----------
    contract:
        A contract or its file; ``[rtl] mutate`` names the files to mutate (default: the file
        defining ``top``); macro models are never mutated.
    mutants, seed:
        How many mutants to draw among all candidates, and the seed of that draw and of every check
        (None: a fresh seed, recorded in the report).
    workers:
        Worker processes, each checking one mutant at a time (1: in this process).
    options:
        The check's budget (``examples``, ``bulk_examples``, ``phases``, ``stall_timeout`` ...).
    only:
        Mutant ids (``M007``) to run instead of a sample: one mutant of an earlier run again.
    given:
        Hand-made mutants (:meth:`Mutant.from_edit`) to run instead of a sample of the candidates.
    out_dir:
        Scratch folder for the mutated sources, builds and check outputs (default
        ``memcheck-out/<name>/mutate``).

    Returns
    -------
    MutationReport
        Killed, survived (with a diff and a reason each) and not compiled mutants, the kill rate.

    Raises
    ------
    MemcheckError
        Bad input: ``mutants`` or ``workers`` below 1, a contract error, no operator found, or a
        check that fails on the unmutated wrapper.
    """
    t0 = time.perf_counter()
    if workers < 1:
        raise UsageError(f"--workers {workers}: allowed: 1 or more worker processes.")
    c, path = resolve_contract(contract)
    require_simulator_support(c)
    seed = fresh_seed() if seed is None else seed
    plan = plan_mutants(c, mutants, seed, given, only)
    out = Path(out_dir) if out_dir is not None else default_out_dir(c, path) / "mutate"
    base = (options or SimOptions()).replace(seed=seed, waveform=False, build_dir=out / "build")
    validate_options(c, base)
    results: dict[str, _Done] = {}

    def on_done(done: _Done) -> None:
        results[done.ident] = done
        if done.ident == "original":
            if done.status != MutantStatus.SURVIVED:
                raise _baseline_failed(done)
        elif on_outcome is not None:
            on_outcome(_outcome(c, plan, done, ()))

    _run_all(_tasks(c, plan, base, out), workers, on_done)
    undriven = results["original"].unconnected
    outcomes = tuple(_outcome(c, plan, results[ident], undriven) for ident, _ in plan.chosen)
    opts = base.to_json()
    check_options = {k: opts[k] for k in ("phases", "examples", "bulk_examples", "march", "sweep_ops", "stall_timeout")}
    return MutationReport(
        contract_path=path,
        seed=seed,
        files=plan.files,
        candidates=len(plan.candidates),
        outcomes=outcomes,
        workers=workers,
        seconds=time.perf_counter() - t0,
        check_options=check_options,
    )


__all__ = ["mutate_contract"]
