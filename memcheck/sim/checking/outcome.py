"""What a job in the simulator process sends back: phases, the failure, notes and figures, as JSON.

The one record that crosses the process boundary (simulator -> memcheck); :mod:`memcheck.sim.session`
turns it into the job's result record (:mod:`memcheck.records`).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from memcheck.cover import Coverage
from memcheck.records import CheckedTrace, Failure, PhaseResult


@dataclass(frozen=True)
class RunResult:
    """Everything the simulation side found."""

    phases: tuple[PhaseResult, ...] = ()
    failure: Failure | None = None
    seed: int = 0
    notes: tuple[str, ...] = ()
    replayed: CheckedTrace | None = None
    coverage: Coverage | None = None
    extra: dict[str, Any] = field(default_factory=dict)

    def to_json(self) -> dict[str, Any]:
        return {
            "phases": [p.to_json() for p in self.phases],
            "failure": None if self.failure is None else self.failure.to_json(),
            "seed": self.seed,
            "notes": list(self.notes),
            "replayed": None if self.replayed is None else self.replayed.to_json(),
            "coverage": None if self.coverage is None else self.coverage.to_json(),
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
            coverage=None if obj.get("coverage") is None else Coverage.from_json(obj["coverage"]),
            extra=dict(obj.get("extra", {})),
        )
