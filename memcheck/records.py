"""Records of a run on RTL: what the pins showed, compared traces, failures, phases and results.

Shared by the simulator side (:mod:`memcheck.sim`, which fills them in) and the reports
(:mod:`memcheck.report`, which renders them); neither of those is imported here. Every result of a
job (``check``, ``march run``, later ones) is a :class:`RunRecord`: verdict, contract, seed, phases,
failure, times, output files and notes, plus what the job adds.

Verdicts cover the behaviour the contract models, nothing more: they are not sign-off.
"""

from __future__ import annotations

import shlex
from dataclasses import dataclass, field
from enum import StrEnum
from pathlib import Path
from typing import Any, Generic, Literal, TypeVar

from memcheck.contract import Contract, unchecked_behaviours
from memcheck.cover import Coverage
from memcheck.march.expand import MarchStep
from memcheck.march.notation import MarchTest
from memcheck.ops import Expected, PortOp, Power, Trace

#: The note of a failure that did not fail again when run from the same state (the same canonical
#: fill and flush, the same operations): a fixed function of the pins would fail again, so the RTL's
#: result depends on something else, most often the order of processes woken by one clock edge.
LIKELY_RACE = (
    "likely a race in the RTL: this example failed once and passed when run again from the same state "
    "(same fill, same operations). Verilog runs the processes that one clock edge wakes in no defined "
    "order (IEEE 1364-2005 §11, scheduling semantics; IEEE 1800-2017 §4, scheduling regions), so a "
    "blocking assignment (=) in a clocked always block to a register that another block reads on the "
    "same edge, where a non-blocking assignment (<=) was meant, gives different results from run to run "
    "or simulator to simulator. Less often it is a register that neither the fill nor the flush sets "
    "(an output register holding data across examples, a synchroniser or power-state flop), whose "
    "value the earlier examples chose"
)

# -- observations and compared cycles ---------------------------------------------------------


@dataclass(frozen=True, slots=True)
class Observed:
    """Read data as sampled: ``value`` bits, and ``defined`` with a 1 for every bit that was 0 or 1."""

    value: int
    defined: int

    def render(self, width: int) -> str:
        """Binary, MSB first, with 'x' for X/Z bits."""
        return "".join(
            ("1" if self.value >> b & 1 else "0") if self.defined >> b & 1 else "x" for b in range(width - 1, -1, -1)
        )


@dataclass(frozen=True, slots=True)
class Settled:
    """Read data as it last changed after the sample point and before the next one (recorded when a
    failure is replayed): ``value``/``defined`` as :class:`Observed`, ``after_ns`` after the sample point."""

    value: int
    defined: int
    after_ns: float


#: How the model starts before a checked trace: fresh at power-up, right after the reset
#: sequence, or with every stored bit and pending read unknown (an independent example).
ModelStart = Literal["power-up", "reset", "unknown"]
MODEL_STARTS: tuple[str, ...] = ("power-up", "reset", "unknown")


@dataclass(frozen=True)
class CycleRow:
    """One checked cycle: what each port did, what the model expects, what the pins showed."""

    cycle: int
    ops: tuple[PortOp, ...]
    expected: tuple[Expected, ...]
    observed: tuple[Observed | None, ...]
    diff: tuple[int, ...]
    #: The power pins during this cycle (contracts with ``[power]``; "on" otherwise).
    power: Power = Power.ON
    #: Per port, read data as it settled after the sample point (replays only; empty otherwise). Not
    #: part of a row's identity: two runs of the same trace compare equal whether or not they recorded it.
    settled: tuple[Settled | None, ...] = field(default=(), compare=False)

    @property
    def ok(self) -> bool:
        return not any(self.diff)

    def to_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {
            "cycle": self.cycle,
            "ops": [op.to_json() for op in self.ops],
            "expected": [[hex(e.value), hex(e.known)] for e in self.expected],
            "observed": [None if o is None else [hex(o.value), hex(o.defined)] for o in self.observed],
            "diff": [hex(d) for d in self.diff],
        }
        if self.power != Power.ON:
            out["power"] = self.power.name.lower()
        if self.settled:
            out["settled"] = [None if s is None else [hex(s.value), hex(s.defined), s.after_ns] for s in self.settled]
        return out

    @classmethod
    def from_json(cls, obj: dict[str, Any]) -> CycleRow:
        return cls(
            cycle=int(obj["cycle"]),
            ops=tuple(PortOp.from_json(o) for o in obj["ops"]),
            expected=tuple(Expected(int(v, 16), int(k, 16)) for v, k in obj["expected"]),
            observed=tuple(None if o is None else Observed(int(o[0], 16), int(o[1], 16)) for o in obj["observed"]),
            diff=tuple(int(d, 16) for d in obj["diff"]),
            power=Power[str(obj.get("power", "on")).upper()],
            settled=tuple(
                None if s is None else Settled(int(s[0], 16), int(s[1], 16), float(s[2]))
                for s in obj.get("settled", [])
            ),
        )


@dataclass(frozen=True)
class CheckedTrace:
    """A trace with the model's expectations and the observations, compared."""

    start: ModelStart
    rows: tuple[CycleRow, ...]

    @property
    def ok(self) -> bool:
        return all(r.ok for r in self.rows)

    @property
    def first_mismatch(self) -> int | None:
        for r in self.rows:
            if not r.ok:
                return r.cycle
        return None

    @property
    def trace(self) -> Trace:
        """The cycles (with their power states when any is not "on")."""
        power = tuple(r.power for r in self.rows)
        return Trace(tuple(r.ops for r in self.rows), power if any(power) else ())

    def mismatches(self) -> list[tuple[int, int, int]]:
        """(cycle, port index, differing bits) for every mismatch."""
        return [(r.cycle, i, d) for r in self.rows for i, d in enumerate(r.diff) if d]

    def signature(self) -> list[tuple[int, int, int, int, int]]:
        """What identifies the failure for replay: per mismatch, cycle, port, diff, observed value/defined."""
        out = []
        for r in self.rows:
            for i, d in enumerate(r.diff):
                if d:
                    o = r.observed[i]
                    assert o is not None
                    out.append((r.cycle, i, d, o.value & d, o.defined & d))
        return out

    def to_json(self) -> dict[str, Any]:
        return {"start": self.start, "rows": [r.to_json() for r in self.rows]}

    @classmethod
    def from_json(cls, obj: dict[str, Any]) -> CheckedTrace:
        start = obj.get("start", "unknown")
        if start not in MODEL_STARTS:
            raise ValueError(f"unknown model start {start!r}")
        return cls(start=start, rows=tuple(CycleRow.from_json(r) for r in obj["rows"]))


# -- phases and failures --------------------------------------------------------------------------

PhaseVerdict = Literal["pass", "fail", "skipped"]

#: Steps a replay runs, unchecked, before the checked trace (see sim/checking/sequences.py):
#: "reset", "fill", "flush", "smoke", "sweep:<k>".
PreambleStep = str


@dataclass(frozen=True)
class PhaseResult:
    name: str
    verdict: PhaseVerdict
    cycles: int = 0
    operations: int = 0
    seconds: float = 0.0
    detail: str = ""

    def to_json(self) -> dict[str, Any]:
        return {
            "name": self.name,
            "verdict": self.verdict,
            "cycles": self.cycles,
            "operations": self.operations,
            "seconds": round(self.seconds, 3),
            "detail": self.detail,
        }

    @classmethod
    def from_json(cls, obj: dict[str, Any]) -> PhaseResult:
        return cls(
            str(obj["name"]),
            obj["verdict"],
            int(obj.get("cycles", 0)),
            int(obj.get("operations", 0)),
            float(obj.get("seconds", 0.0)),
            str(obj.get("detail", "")),
        )


@dataclass(frozen=True)
class Failure:
    """A failing trace: a replay runs ``preamble`` unchecked, then ``trace`` checked from a model
    started as ``checked.start``. ``checked`` holds the compared rows: all of them for a shrunk
    trace, or the rows up to the first difference for a long one."""

    phase: str
    preamble: tuple[PreambleStep, ...]
    checked: CheckedTrace
    note: str = ""
    full_trace: Trace | None = None
    #: A timing hint found when the failure was replayed ("read data settled 2 ns after the sample
    #: point: ..."), or "".
    timing_hint: str = ""

    @property
    def trace(self) -> Trace:
        return self.full_trace if self.full_trace is not None else self.checked.trace

    def to_json(self) -> dict[str, Any]:
        return {
            "phase": self.phase,
            "preamble": list(self.preamble),
            "checked": self.checked.to_json(),
            "note": self.note,
            "trace": None if self.full_trace is None else self.full_trace.to_json(),
            "timing_hint": self.timing_hint,
        }

    @classmethod
    def from_json(cls, obj: dict[str, Any]) -> Failure:
        full = obj.get("trace")
        return cls(
            str(obj["phase"]),
            tuple(str(s) for s in obj.get("preamble", [])),
            CheckedTrace.from_json(obj["checked"]),
            str(obj.get("note", "")),
            None if full is None else Trace.from_json(full),
            str(obj.get("timing_hint", "")),
        )


Activity = Literal["read", "write", "quiet"]


@dataclass(frozen=True)
class MarchFailure:
    """The first cycle of a March run whose read data failed, and the March operation it belongs to.

    ``cycle`` is the cycle whose sampled read data failed on ``port``; ``issued_cycle`` = cycle -
    read_latency is when the port issued what that data answers. ``activity`` says what the port
    did then: a March ``read`` (``step`` is it), a March ``write`` (read data during a write,
    ``read_during_write``) or ``quiet``: nothing of the test's (idle, or a read of address 0 by a
    port without an enable); ``step`` is then the operation another port did in that cycle, else the
    last one before (None before the first).
    ``model_diff`` and ``march_diff`` are the bits that differ from the contract model and from the
    March expectation (``march_expected`` is None where the March expectation does not apply).
    """

    cycle: int
    port: str
    issued_cycle: int
    activity: Activity
    step: MarchStep | None
    description: str
    march_expected: int | None
    model_expected: Expected
    got: Observed
    march_diff: int
    model_diff: int
    window: CheckedTrace

    @property
    def failed_checks(self) -> tuple[str, ...]:
        """Which comparisons failed: "contract model", "March expectation", or both."""
        out = []
        if self.model_diff:
            out.append("contract model")
        if self.march_diff:
            out.append("March expectation")
        return tuple(out)

    @property
    def diff(self) -> int:
        return self.model_diff | self.march_diff


# -- results of a job -----------------------------------------------------------------------------


class CheckVerdict(StrEnum):
    """The verdict of a job on RTL (a string, so JSON shows "pass", "fail" or "error")."""

    PASS = "pass"
    FAIL = "fail"
    ERROR = "error"


F = TypeVar("F", Failure, MarchFailure)


@dataclass(frozen=True, kw_only=True)
class RunRecord(Generic[F]):
    """What every job on RTL reports: the shared fields of every result."""

    verdict: CheckVerdict
    contract: Contract
    contract_path: Path | None
    seed: int
    phases: tuple[PhaseResult, ...] = ()
    failure: F | None = None
    seconds: float = 0.0
    build_seconds: float = 0.0
    #: The simulation image was already up to date: ``build_seconds`` only checked it.
    build_reused: bool = False
    out_dir: Path | None = None
    replay_file: Path | None = None
    waveform_file: Path | None = None
    reproduced: bool | None = None
    notes: tuple[str, ...] = ()
    unconnected_inputs: tuple[str, ...] = ()
    #: Pin -> width as the RTL declares it (empty when the RTL was not elaborated).
    pin_widths: dict[str, int] = field(default_factory=dict)
    extra: dict[str, object] = field(default_factory=dict)

    @property
    def passed(self) -> bool:
        return self.verdict == CheckVerdict.PASS

    @property
    def build_text(self) -> str:
        """``build 1.3 s``, or ``build reused, 0.0 s`` when the image was already up to date."""
        return f"build {'reused, ' if self.build_reused else ''}{self.build_seconds:.1f} s"

    @property
    def unchecked(self) -> list[str]:
        """Behaviours the contract leaves unknown, so no job checks them (only those this RTL can have)."""
        return unchecked_behaviours(self.contract, self.pin_widths or None)

    @property
    def replay_command(self) -> str | None:
        return None if self.replay_file is None else f"memcheck replay {shell_path(self.replay_file)}"

    @property
    def name(self) -> str:
        """The contract file as given, else the RTL top (for headlines)."""
        c = self.contract
        return str(self.contract_path) if self.contract_path else (c.rtl.top if c.rtl else "contract")


def shell_path(p: Path) -> str:
    """``p`` relative to the working folder where it can be, quoted for a shell."""
    try:
        return shlex.quote(str(p.resolve().relative_to(Path.cwd().resolve())))
    except ValueError:
        return shlex.quote(str(p))


@dataclass(frozen=True, kw_only=True)
class CheckResult(RunRecord[Failure]):
    """The outcome of checking one contract's RTL (``memcheck check``)."""

    replayed: CheckedTrace | None = None
    error: str | None = None
    #: The cover points of the contract with their hit counts (None when no phase ran).
    coverage: Coverage | None = None

    @property
    def covered(self) -> bool:
        """True when every cover point of the contract was hit (what ``--require-coverage`` asks)."""
        return self.coverage is None or not self.coverage.holes

    @property
    def operations(self) -> int:
        return sum(p.operations for p in self.phases)

    @property
    def cycles(self) -> int:
        return sum(p.cycles for p in self.phases)

    def summary(self) -> str:
        """A few lines for an assertion message or a log: verdict, phases, seed, time, replay command."""
        verdict = {"pass": "conforms", "fail": "DIFFERENCE FOUND", "error": "ERROR"}[self.verdict]
        lines = [f"{self.name}: {verdict}" + ("" if self.coverage is None else f"; {self.coverage.summary()}")]
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
        lines.append(f"seed {self.seed}; {self.seconds:.1f} s ({self.build_text})")
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


@dataclass(frozen=True, kw_only=True)
class MarchRunResult(RunRecord[MarchFailure]):
    """The outcome of one March test alone on a contract's RTL (``memcheck march run``)."""

    test: MarchTest
    test_name: str
    order: str
    any_order: str
    layout: tuple[int, int] | None
    backgrounds: tuple[str, ...]
    writer: str
    reader: str
    pause_cycles: int
    operations: int
    cycles: int

    @property
    def ports_text(self) -> str:
        return (
            f"port {self.writer}"
            if self.writer == self.reader
            else f"write port {self.writer}, read port {self.reader}"
        )

    def headline(self) -> str:
        m = self.contract.memory
        name = str(self.contract_path) if self.contract_path else "contract"
        order = self.order + (f" (seed {self.seed})" if self.order == "lfsr" else "")
        lay = f", layout {self.layout[0]}x{self.layout[1]}" if self.layout else ""
        return (
            f"{name}: {self.test_name} {self.test.to_unicode()}\n"
            f"{m.words} words x {m.width} bits{lay}, order {order}, backgrounds {', '.join(self.backgrounds)}, "
            f"{self.ports_text}; {self.operations} operations in {self.cycles} cycles"
        )

    def summary(self) -> str:
        """A few lines: what ran, the verdict and the first failing operation."""
        lines = [self.headline()]
        if self.failure is None:
            march = (
                "" if self.extra.get("march_reads_checked") == 0 and self.operations else " and the March expectation"
            )
            lines.append(f"PASS: every read matched the contract model{march}")
        else:
            f = self.failure
            lines.append(f"FAIL at cycle {f.cycle}: {f.description}")
            lines.append(f"failed: {' and '.join(f.failed_checks)}")
        lines.append(f"{self.seconds:.1f} s ({self.build_text})")
        return "\n".join(lines)


@dataclass(frozen=True)
class ReplayResult:
    """A replayed trace: ``reproduced`` is True when it shows the same mismatch as recorded.

    ``failure`` and ``seed`` come from the replay file, ``contract_path`` is the contract it names."""

    failure: Failure
    seed: int
    contract_path: Path
    contract: Contract
    checked: CheckedTrace
    reproduced: bool
    waveform_file: Path | None
    contract_changed: bool

    @property
    def verdict(self) -> CheckVerdict:
        return CheckVerdict.PASS if self.checked.ok else CheckVerdict.FAIL
