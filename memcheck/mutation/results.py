"""What a mutation run records: each mutant's outcome and the totals (pure data, JSON, sampling)."""

from __future__ import annotations

import random
from collections.abc import Sequence
from dataclasses import dataclass, field
from enum import IntEnum
from pathlib import Path
from typing import Any

from memcheck.errors import UsageError
from memcheck.mutation.explain import Reason
from memcheck.mutation.operators import Mutant


class MutantStatus(IntEnum):
    """A mutant's fate: the check failed on it, passed on it, or it did not compile."""

    KILLED = 0
    SURVIVED = 1
    NOT_COMPILED = 2

    @property
    def label(self) -> str:
        return self.name.lower().replace("_", " ")


@dataclass(frozen=True)
class MutantOutcome:
    """One mutant and what the check did with it.

    ``how`` says how it was killed (the failing phase, ``"hang"`` when the stall watchdog stopped the
    simulator, ``"error"`` for another simulation error) or why it did not compile; ``cycles`` is the
    length of the minimal failing trace of a killed mutant; ``reason`` is filled for survivors.
    """

    ident: str
    mutant: Mutant
    status: MutantStatus
    how: str = ""
    cycles: int | None = None
    seconds: float = 0.0
    reason: Reason | None = None
    diff: str = ""

    def to_json(self) -> dict[str, Any]:
        m = self.mutant
        out: dict[str, Any] = {
            "id": self.ident,
            "file": str(m.file),
            "line": m.line,
            "operator": m.operator.name.lower(),
            "description": m.description,
            "status": self.status.name.lower(),
            "how": self.how,
            "cycles": self.cycles,
            "seconds": round(self.seconds, 3),
            "diff": self.diff,
        }
        if self.reason is not None:
            out["reason"] = {"label": self.reason.label, "text": self.reason.text}
        return out


@dataclass(frozen=True)
class MutationReport:
    """The result of :func:`memcheck.mutation.mutate_contract`. Verdicts cover the modelled behaviour
    and the mutation operators only: a high kill rate is not sign-off."""

    contract_path: Path | None
    seed: int
    files: tuple[Path, ...]
    candidates: int
    outcomes: tuple[MutantOutcome, ...]
    workers: int
    seconds: float
    check_options: dict[str, Any] = field(default_factory=dict)

    def count(self, status: MutantStatus) -> int:
        return sum(1 for o in self.outcomes if o.status == status)

    @property
    def killed(self) -> int:
        return self.count(MutantStatus.KILLED)

    @property
    def survived(self) -> int:
        return self.count(MutantStatus.SURVIVED)

    @property
    def not_compiled(self) -> int:
        return self.count(MutantStatus.NOT_COMPILED)

    @property
    def likely_equivalent(self) -> int:
        return sum(1 for o in self.outcomes if o.reason is not None and o.reason.equivalent)

    @property
    def kill_rate(self) -> float | None:
        """Killed over compiled mutants (None when no mutant compiled)."""
        n = self.killed + self.survived
        return self.killed / n if n else None

    @property
    def kill_rate_non_equivalent(self) -> float | None:
        """Killed over compiled mutants not marked likely equivalent."""
        n = self.killed + self.survived - self.likely_equivalent
        return self.killed / n if n else None

    def summary(self) -> str:
        rate = self.kill_rate
        eq = self.kill_rate_non_equivalent
        text = (
            f"{len(self.outcomes)} mutants of {self.candidates} candidates: {self.killed} killed, "
            f"{self.survived} survived ({self.likely_equivalent} likely equivalent), {self.not_compiled} not compiled"
        )
        if rate is not None:
            text += f"; kill rate {100 * rate:.1f}%"
        if eq is not None:
            text += f" ({100 * eq:.1f}% of the non-equivalent)"
        return text

    def to_json(self) -> dict[str, Any]:
        return {
            "kind": "mutate",
            "contract": None if self.contract_path is None else str(self.contract_path),
            "seed": self.seed,
            "files": [str(f) for f in self.files],
            "candidates": self.candidates,
            "mutants": len(self.outcomes),
            "killed": self.killed,
            "survived": self.survived,
            "likely_equivalent": self.likely_equivalent,
            "not_compiled": self.not_compiled,
            "kill_rate": self.kill_rate,
            "kill_rate_non_equivalent": self.kill_rate_non_equivalent,
            "workers": self.workers,
            "seconds": round(self.seconds, 3),
            "check_options": self.check_options,
            "outcomes": [o.to_json() for o in self.outcomes],
            "note": "Verdicts cover the modelled behaviour and these mutation operators only, not sign-off.",
        }


def sample_mutants(candidates: Sequence[Mutant], n: int, seed: int) -> list[tuple[int, Mutant]]:
    """``n`` of ``candidates`` drawn with ``seed`` (all of them when there are no more than ``n``),
    each with its index among the candidates, in candidate order.

    Raises
    ------
    UsageError
        ``n`` below 1.
    """
    if n < 1:
        raise UsageError(f"--mutants {n}: allowed: 1 or more mutants.")
    picked = range(len(candidates)) if n >= len(candidates) else random.Random(seed).sample(range(len(candidates)), n)
    return [(k, candidates[k]) for k in sorted(picked)]


__all__ = ["MutantOutcome", "MutantStatus", "MutationReport", "sample_mutants"]
