"""What a simulation run reports back: phases, counts and the minimal failing trace.

These records cross the process boundary (simulator -> memcheck) as JSON and end up in reports.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Literal

from memcheck.ops import Trace
from memcheck.sim.checker import CheckedTrace

PhaseVerdict = Literal["pass", "fail", "skipped"]

#: Steps a replay runs, unchecked, before the checked trace (see sequences.py):
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
        )


@dataclass(frozen=True)
class RunResult:
    """Everything the simulation side found."""

    phases: tuple[PhaseResult, ...] = ()
    failure: Failure | None = None
    seed: int = 0
    notes: tuple[str, ...] = ()
    replayed: CheckedTrace | None = None
    extra: dict[str, Any] = field(default_factory=dict)

    def to_json(self) -> dict[str, Any]:
        return {
            "phases": [p.to_json() for p in self.phases],
            "failure": None if self.failure is None else self.failure.to_json(),
            "seed": self.seed,
            "notes": list(self.notes),
            "replayed": None if self.replayed is None else self.replayed.to_json(),
            "extra": self.extra,
        }

    @classmethod
    def from_json(cls, obj: dict[str, Any]) -> RunResult:
        return cls(
            phases=tuple(PhaseResult.from_json(p) for p in obj.get("phases", [])),
            failure=None if obj.get("failure") is None else Failure.from_json(obj["failure"]),
            seed=int(obj.get("seed", 0)),
            notes=tuple(str(n) for n in obj.get("notes", [])),
            replayed=None if obj.get("replayed") is None else CheckedTrace.from_json(obj["replayed"]),
            extra=dict(obj.get("extra", {})),
        )
