"""Check strength on the user's own wrapper: small faults (mutants) made in the wrapper's RTL source.

The pure part (no simulator): ``tokens`` (a small tokenizer), ``context`` (where mutation is
allowed), ``operators`` (the mutation operators and :class:`Mutant`), ``plan`` (files, candidates,
seeded sampling, source diffs), ``explain`` (why a survivor may be equivalent or a hole) and
``results`` (outcomes, the report, JSON). :func:`mutate_contract` (loaded on first use from
``memcheck.sim.jobs.mutate``) runs each mutant through the normal check in worker processes::

    from memcheck.mutation import mutate_contract
    report = mutate_contract("contract.toml", mutants=20, seed=1, workers=2)
    print(report.summary())
"""

from __future__ import annotations

from typing import TYPE_CHECKING, Any

from memcheck.mutation.explain import Reason, survivor_reason
from memcheck.mutation.operators import Mutant, Operator, find_mutants
from memcheck.mutation.plan import MutationPlan, mutation_files, plan_mutants, source_diff
from memcheck.mutation.results import MutantOutcome, MutantStatus, MutationReport, sample_mutants

if TYPE_CHECKING:
    from memcheck.sim.jobs.mutate import mutate_contract

__all__ = [
    "Mutant",
    "MutantOutcome",
    "MutantStatus",
    "MutationPlan",
    "MutationReport",
    "Operator",
    "Reason",
    "find_mutants",
    "mutate_contract",
    "mutation_files",
    "plan_mutants",
    "sample_mutants",
    "source_diff",
    "survivor_reason",
]


def __getattr__(name: str) -> Any:
    if name == "mutate_contract":
        from memcheck.sim.jobs.mutate import mutate_contract

        return mutate_contract
    raise AttributeError(f"module 'memcheck.mutation' has no attribute {name!r}")
