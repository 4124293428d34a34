"""The text report of ``memcheck mutate``: totals, killed mutants in one line each, and every
survivor as a source diff with the reason it may be equivalent or a hole in the check."""

from __future__ import annotations

from memcheck.mutation.results import MutantOutcome, MutantStatus, MutationReport

_NOTE = "Verdicts cover the modelled behaviour and these mutation operators only, not sign-off."


def _line(o: MutantOutcome) -> str:
    m = o.mutant
    where = f"{m.file.name}:{m.line}"
    if o.status == MutantStatus.KILLED:
        how = o.how + (f", {o.cycles}-cycle trace" if o.cycles is not None else "")
        return f"  {o.ident} killed ({how})  {where}  {m.operator.label}: {m.description}"
    if o.status == MutantStatus.NOT_COMPILED:
        return f"  {o.ident} not compiled  {where}  {m.description}: {o.how}"
    label = o.reason.label if o.reason is not None else "survived"
    return f"  {o.ident} survived, {label}  {where}  {m.operator.label}: {m.description}"


def render_outcome(o: MutantOutcome) -> str:
    """One mutant's one-line summary (progress output)."""
    return _line(o).strip()


def render_mutation_report(report: MutationReport) -> str:
    """The whole text report."""
    files = ", ".join(str(f) for f in report.files)
    lines = [
        f"mutated: {files}",
        f"seed {report.seed}; {report.workers} worker(s); {report.seconds:.1f} s",
        report.summary(),
        "",
    ]
    order = (MutantStatus.SURVIVED, MutantStatus.KILLED, MutantStatus.NOT_COMPILED)
    lines += [_line(o) for status in order for o in report.outcomes if o.status == status]
    survivors = [o for o in report.outcomes if o.status == MutantStatus.SURVIVED]
    for o in survivors:
        lines += ["", f"{o.ident} survived ({o.reason.label if o.reason else 'no reason'}):"]
        lines += [o.diff.rstrip("\n")]
        if o.reason is not None:
            lines += [f"  why: {o.reason.text}"]
    lines += ["", _NOTE]
    return "\n".join(lines)


__all__ = ["render_mutation_report", "render_outcome"]
