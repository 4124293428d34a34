"""Python API of ``memcheck check`` and ``memcheck replay``: usable from a user's own pytest.

>>> from memcheck.sim import check_contract
>>> result = check_contract("rtl/contract.toml", examples=200, seed=1)   # doctest: +SKIP
>>> assert result.passed, result.summary()                                # doctest: +SKIP

Verdicts cover the behaviour the contract models, nothing more: they are not sign-off.
"""

from __future__ import annotations

import random
import shutil
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Literal

from memcheck.contract import Contract, load_contract
from memcheck.errors import InvalidOperation, MemcheckError, ReplayError
from memcheck.model import Model
from memcheck.sim.build import Build, build
from memcheck.sim.checker import CheckedTrace
from memcheck.sim.engine import PHASES, RunOptions
from memcheck.sim.harness import WAVE_FILE
from memcheck.sim.icarus import ProgressCallback
from memcheck.sim.launch import DEFAULT_STALL_SECONDS, run_job
from memcheck.sim.replayfile import ReplayFile, file_digest, read_replay
from memcheck.sim.result import Failure, PhaseResult

Verdict = Literal["pass", "fail", "error"]
DEFAULT_OUT = Path("memcheck-out")


@dataclass(frozen=True)
class CheckOptions:
    """Budget and outputs of a check. ``seed=None`` picks a fresh seed (reported in the result)."""

    examples: int = RunOptions.examples
    bulk_examples: int = RunOptions.bulk_examples
    seed: int | None = None
    phases: tuple[str, ...] = PHASES
    march: str = RunOptions.march
    backgrounds: str = RunOptions.backgrounds
    sweep_max_ops: int = RunOptions.sweep_max_ops
    max_blocks: int = RunOptions.max_blocks
    out_dir: Path | None = None
    build_dir: Path | None = None
    stall_seconds: float = DEFAULT_STALL_SECONDS
    waveform: bool = True


@dataclass(frozen=True)
class CheckResult:
    """The outcome of checking one contract's RTL."""

    verdict: Verdict
    contract: Contract
    contract_path: Path | None
    seed: int
    phases: tuple[PhaseResult, ...] = ()
    failure: Failure | None = None
    seconds: float = 0.0
    build_seconds: float = 0.0
    out_dir: Path | None = None
    replay_file: Path | None = None
    waveform_file: Path | None = None
    reproduced: bool | None = None
    replayed: CheckedTrace | None = None
    error: str | None = None
    notes: tuple[str, ...] = ()
    unconnected_inputs: tuple[str, ...] = ()
    extra: dict[str, object] = field(default_factory=dict)

    @property
    def passed(self) -> bool:
        return self.verdict == "pass"

    @property
    def operations(self) -> int:
        return sum(p.operations for p in self.phases)

    @property
    def cycles(self) -> int:
        return sum(p.cycles for p in self.phases)

    @property
    def unchecked(self) -> list[str]:
        return self.contract.unchecked_behaviours()

    @property
    def replay_command(self) -> str | None:
        return None if self.replay_file is None else f"memcheck replay {_shell_path(self.replay_file)}"

    def summary(self) -> str:
        """A few lines for an assertion message or a log: verdict, phases, seed, time, replay command."""
        c = self.contract
        name = str(self.contract_path) if self.contract_path else (c.rtl.top if c.rtl else "contract")
        verdict = {"pass": "conforms", "fail": "DIFFERENCE FOUND", "error": "ERROR"}[self.verdict]
        lines = [f"{name}: {verdict}"]
        if self.error:
            lines.append(self.error)
        if self.phases:
            lines.append(
                "phases: "
                + "; ".join(
                    f"{p.name} {p.verdict}" + (f" ({p.operations} operations)" if p.verdict != "skipped" else "")
                    for p in self.phases
                )
            )
        lines.append(f"seed {self.seed}; {self.seconds:.1f} s (build {self.build_seconds:.1f} s)")
        if self.failure is not None:
            f = self.failure
            first = f.checked.first_mismatch
            lines.append(
                f"minimal trace: {len(f.trace)} cycles (first difference at cycle {first}), found in the "
                f"{f.phase} phase" + (f"; {f.note}" if f.note else "")
            )
        if self.replay_command:
            lines.append(f"replay: {self.replay_command}")
        return "\n".join(lines)


def _shell_path(p: Path) -> str:
    import shlex

    try:
        rel = p.resolve().relative_to(Path.cwd().resolve())
        return shlex.quote(str(rel))
    except ValueError:
        return shlex.quote(str(p))


def default_out_dir(contract: Contract, contract_path: Path | None) -> Path:
    """``memcheck-out/<name>``: the contract's file stem, or its folder name for ``contract.toml``."""
    if contract_path is not None:
        name = contract_path.stem if contract_path.stem != "contract" else contract_path.resolve().parent.name
    else:
        name = contract.rtl.top if contract.rtl is not None else "memory"
    return DEFAULT_OUT / name


def _resolve(contract: Contract | str | Path) -> tuple[Contract, Path | None]:
    if isinstance(contract, Contract):
        return contract, contract.path
    return load_contract(contract), Path(contract)


def check_contract(
    contract: Contract | str | Path,
    options: CheckOptions | None = None,
    *,
    on_progress: ProgressCallback | None = None,
    **overrides: object,
) -> CheckResult:
    """Check a contract's RTL: smoke, sweep and property phases under Icarus.

    Returns a :class:`CheckResult` with verdict "pass" or "fail". Bad input (contract, RTL that does
    not compile, pins that do not match, a stalled simulation) raises a
    :class:`~memcheck.errors.MemcheckError` whose message says what to fix. Keyword ``overrides`` set
    :class:`CheckOptions` fields (``examples=50, seed=1``).
    """
    import dataclasses

    opts = dataclasses.replace(options or CheckOptions(), **overrides)  # type: ignore[arg-type]
    t0 = time.perf_counter()
    c, path = _resolve(contract)
    seed = opts.seed if opts.seed is not None else random.SystemRandom().randrange(1 << 32)
    out = Path(opts.out_dir) if opts.out_dir is not None else default_out_dir(c, path)
    cache = Path(opts.build_dir) if opts.build_dir is not None else out / "build"
    unknown = [p for p in opts.phases if p not in PHASES]
    if unknown or not opts.phases:
        raise MemcheckError(f"unknown phase(s) {', '.join(unknown) or '(none given)'}; allowed: {', '.join(PHASES)}.")
    if opts.examples < 0:
        raise MemcheckError(f"examples = {opts.examples}; allowed: 0 or more.")
    if opts.bulk_examples < 0:
        raise MemcheckError(f"bulk_examples = {opts.bulk_examples}; allowed: 0 or more.")
    _check_march(c, opts)

    b = build(c, cache)
    build_seconds = time.perf_counter() - t0
    run_opts = RunOptions(
        phases=tuple(opts.phases),
        examples=opts.examples,
        seed=seed,
        march=opts.march,
        backgrounds=opts.backgrounds,
        sweep_max_ops=opts.sweep_max_ops,
        max_blocks=opts.max_blocks,
        bulk_examples=opts.bulk_examples,
    )
    res = run_job(
        b,
        {"mode": "check", "options": run_opts.to_json()},
        out / "run",
        stall_seconds=opts.stall_seconds,
        on_progress=on_progress,
    )
    failure = res.failure
    replay_path = wave = None
    reproduced = None
    replayed = None
    if failure is not None:
        replay_path = out / "replay.json"
        if path is not None:
            ReplayFile(path, failure, seed, file_digest(path)).write(replay_path)
        else:
            replay_path = None
        replayed, wave = _replay_run(b, failure, seed, out, opts.stall_seconds, opts.waveform, on_progress)
        reproduced = replayed.signature() == failure.checked.signature() if replayed is not None else None
    return CheckResult(
        verdict="fail" if failure is not None else "pass",
        contract=c,
        contract_path=path,
        seed=seed,
        phases=res.phases,
        failure=failure,
        seconds=time.perf_counter() - t0,
        build_seconds=build_seconds,
        out_dir=out,
        replay_file=replay_path,
        waveform_file=wave,
        reproduced=reproduced,
        replayed=replayed,
        notes=res.notes,
        unconnected_inputs=b.pins.unconnected_inputs,
        extra=dict(res.extra),
    )


def _check_march(c: Contract, opts: CheckOptions) -> None:
    if "sweep" not in opts.phases:
        return
    from memcheck.march import expand

    expand(opts.march, c.memory.words, c.memory.width, backgrounds=opts.backgrounds)  # raises on bad names


def _replay_run(
    b: Build,
    failure: Failure,
    seed: int,
    out: Path,
    stall_seconds: float,
    waveform: bool,
    on_progress: ProgressCallback | None,
) -> tuple[CheckedTrace, Path | None]:
    """Run a failure again in a fresh simulator (dumping the trace alone); returns what it showed."""
    work = out / "replay"
    opts = RunOptions(seed=seed)
    res = run_job(
        b,
        {"mode": "replay", "options": opts.to_json(), "failure": failure.to_json(), "dump": waveform},
        work,
        stall_seconds=stall_seconds,
        on_progress=on_progress,
        vcd=waveform,
    )
    assert res.replayed is not None
    wave = None
    if waveform and (work / WAVE_FILE).is_file():
        wave = out / WAVE_FILE
        shutil.copyfile(work / WAVE_FILE, wave)
    return res.replayed, wave


@dataclass(frozen=True)
class ReplayResult:
    """A replayed trace: ``reproduced`` is True when it shows the same mismatch as recorded."""

    replay: ReplayFile
    contract: Contract
    checked: CheckedTrace
    reproduced: bool
    waveform_file: Path | None
    contract_changed: bool

    @property
    def verdict(self) -> Verdict:
        return "pass" if self.checked.ok else "fail"


def _validate_trace(c: Contract, failure: Failure, where: Path) -> None:
    m = Model(c)
    for k, cycle in enumerate(failure.trace.cycles):
        try:
            m.validate(cycle)
        except InvalidOperation as exc:
            raise ReplayError(f"{where}: cycle {k} of the trace does not fit the contract: {exc}.") from None


def replay_file(
    path: str | Path,
    *,
    out_dir: Path | None = None,
    build_dir: Path | None = None,
    waveform: bool = True,
    stall_seconds: float = DEFAULT_STALL_SECONDS,
    on_progress: ProgressCallback | None = None,
) -> ReplayResult:
    """Re-run the trace of a replay file against the contract's current RTL."""
    rf = read_replay(path)
    if not rf.contract_path.is_file():
        raise ReplayError(f"{path}: its contract {rf.contract_path} does not exist.")
    c = load_contract(rf.contract_path)
    _validate_trace(c, rf.failure, Path(path))
    out = Path(out_dir) if out_dir is not None else Path(path).resolve().parent
    cache = Path(build_dir) if build_dir is not None else out / "build"
    b = build(c, cache)
    checked, wave = _replay_run(b, rf.failure, rf.seed, out, stall_seconds, waveform, on_progress)
    changed = bool(rf.contract_digest) and rf.contract_digest != file_digest(rf.contract_path)
    return ReplayResult(rf, c, checked, checked.signature() == rf.failure.checked.signature(), wave, changed)
