"""``memcheck check`` and ``memcheck replay`` as jobs on the session: usable from a user's own pytest.

>>> from memcheck.sim import check_contract
>>> result = check_contract("rtl/contract.toml", examples=200, seed=1)   # doctest: +SKIP
>>> assert result.passed, result.summary()                                # doctest: +SKIP

Verdicts cover the behaviour the contract models, nothing more: they are not sign-off.
"""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

from memcheck.contract import Contract, load_contract
from memcheck.errors import InvalidOperation, MemcheckError, ReplayError
from memcheck.model import Model
from memcheck.records import CheckResult, CheckVerdict, Failure, ReplayResult
from memcheck.sim.checking.settling import timing_hint
from memcheck.sim.checking.support import require_simulator_support
from memcheck.sim.options import PHASES, SimOptions
from memcheck.sim.plumbing.icarus import ProgressCallback
from memcheck.sim.replayfile import file_digest, read_replay
from memcheck.sim.session import Session


def _validate(c: Contract, opts: SimOptions) -> None:
    unknown = [p for p in opts.phases if p not in PHASES]
    if unknown or not opts.phases:
        raise MemcheckError(f"unknown phase(s) {', '.join(unknown) or '(none given)'}; allowed: {', '.join(PHASES)}.")
    for name in ("examples", "bulk_examples", "pause_cycles", "directed_examples"):
        value = getattr(opts, name)
        if isinstance(value, bool) or not isinstance(value, int) or value < 0:
            raise MemcheckError(f"{name} = {value!r}; allowed: 0 or more.")
    if "sweep" in opts.phases:
        from memcheck.march import expand

        m = c.memory
        expand(opts.march, m.words, m.width, backgrounds=opts.backgrounds_for(m.width))  # raises on bad names


def check_contract(
    contract: Contract | str | Path,
    options: SimOptions | None = None,
    *,
    on_progress: ProgressCallback | None = None,
    **overrides: object,
) -> CheckResult:
    """Check a contract's RTL: smoke, sweep and property phases under Icarus.

    Returns a :class:`~memcheck.records.CheckResult` with verdict "pass" or "fail". Bad input
    (contract, RTL that does not compile, pins that do not match, a stalled simulation) raises a
    :class:`~memcheck.errors.MemcheckError` whose message says what to fix. Keyword ``overrides`` set
    :class:`~memcheck.sim.options.SimOptions` fields (``examples=50, seed=1``).
    """
    opts = (options or SimOptions()).replace(**overrides)
    s = Session.open(contract, opts, on_progress=on_progress)
    _validate(s.contract, s.options)
    s.compile()
    res = s.launch({"mode": "check"}, "run")
    failure = res.failure
    replay_path = wave = reproduced = replayed = None
    if failure is not None:
        replay_path = s.write_replay_file(failure)
        replayed, wave = s.replay(failure)
        reproduced = replayed.signature() == failure.checked.signature()
        failure = replace(failure, timing_hint=timing_hint(s.contract, replayed))
    return CheckResult(
        verdict=CheckVerdict.FAIL if failure is not None else CheckVerdict.PASS,
        phases=res.phases,
        failure=failure,
        replay_file=replay_path,
        waveform_file=wave,
        reproduced=reproduced,
        replayed=replayed,
        notes=res.notes,
        extra=dict(res.extra),
        coverage=res.coverage,
        **s.record_fields(),
    )


def _validate_trace(c: Contract, failure: Failure, where: Path) -> None:
    m = Model(c)  # stepped, so that each cycle is checked at its own tick (several clocks)
    trace = failure.trace  # built from the rows on each access: once here
    for k, cycle in enumerate(trace.cycles):
        try:
            m.step(cycle, trace.power_at(k))
        except InvalidOperation as exc:
            raise ReplayError(f"{where}: cycle {k} of the trace does not fit the contract: {exc}.") from None


def replay_file(
    path: str | Path,
    options: SimOptions | None = None,
    *,
    on_progress: ProgressCallback | None = None,
    **overrides: object,
) -> ReplayResult:
    """Re-run the trace of a replay file against the contract's current RTL.

    Options that apply: ``out_dir`` (default: the replay file's folder), ``build_dir``, ``waveform``,
    ``stall_timeout``; the seed is the replay file's."""
    rf = read_replay(path)
    if not rf.contract_path.is_file():
        raise ReplayError(f"{path}: its contract {rf.contract_path} does not exist.")
    c = load_contract(rf.contract_path)
    require_simulator_support(c)
    _validate_trace(c, rf.failure, Path(path))
    opts = (options or SimOptions()).replace(**overrides)
    opts = opts.replace(seed=rf.seed, out_dir=opts.out_dir or Path(path).resolve().parent)
    s = Session.open(c, opts, on_progress=on_progress)
    checked, wave = s.replay(rf.failure)
    changed = bool(rf.contract_digest) and rf.contract_digest != file_digest(rf.contract_path)
    same = checked.signature() == rf.failure.checked.signature()
    return ReplayResult(rf.failure, rf.seed, rf.contract_path, c, checked, same, wave, changed)
