"""A campaign's fail log: the first failing read of one instance, as the engine's first-fail outputs
report it, in the format ``memcheck diagnose`` reads (docs/diagnose.md, docs/bist.md).

A campaign runs every instance from every power-up state, each as its own faulty copy; one copy is
one run of the engine on one faulty memory. The log is that of one chosen instance (``instance``,
counted from 0 in plan order: class by class, as the campaign enumerates them; default the first
instance that failed) from the first of its power-up states in which it failed. A copy is compared
on its faulty data bit only, so the log's ``actual`` is the expected word with that bit flipped.
"""

from __future__ import annotations

from pathlib import Path

from memcheck.bist.campaign.report import CampaignReport, InstanceOutcome
from memcheck.bist.campaign.rtl import FailOp
from memcheck.diagnose.faillog import FailRow, write_fail_log
from memcheck.diagnose.from_runs import campaign_row, diagnose_command, faulty_bit, header_comments
from memcheck.errors import BistError


def chosen(report: CampaignReport, instance: int | None) -> tuple[int, InstanceOutcome]:
    """The instance whose log is written: ``instance`` (from 0), else the first that failed."""
    found = report.outcomes
    if instance is None:
        return next(((i, o) for i, o in enumerate(found) if any(o.failed)), (0, found[0]))
    if not 0 <= instance < len(found):
        raise BistError(f"--fail-log-instance {instance}: the campaign has instances 0..{len(found) - 1}")
    return instance, found[instance]


def campaign_rows(report: CampaignReport, outcome: InstanceOutcome) -> tuple[list[FailRow], str]:
    """The first-fail rows of ``outcome`` from its first power-up state that failed (none when no
    state failed) and that state's label. A decoder fault's copies (one per data bit, all bits in
    the same state) together are one run of the whole word."""
    assert report.test is not None and report.setup is not None
    by_state: dict[tuple[int, ...], list[tuple[FailOp, int]]] = {}
    for row, where in zip(outcome.rows, outcome.first, strict=True):
        if where is not None:
            by_state.setdefault(row.state, []).append((where, faulty_bit(outcome.fault, row.bit)))
    for row in outcome.rows:
        if row.state in by_state:
            label = ", ".join(f"{k}={v}" for k, v in zip(outcome.fault.power_up_labels(), row.state, strict=True))
            return [campaign_row(report.test, report.setup, by_state[row.state])], label
    return [], "no power-up state failed"


def write_campaign_log(
    report: CampaignReport, path: str | Path, test: str, instance: int | None = None, library: str | None = None
) -> tuple[int, InstanceOutcome, list[FailRow]]:
    """Write the fail log of one instance of ``report`` (see module doc); returns what was written."""
    if not report.outcomes or report.setup is None:
        raise BistError("the campaign has no instances: no fail log to write")
    index, outcome = chosen(report, instance)
    rows, state = campaign_rows(report, outcome)
    what = (
        f"memcheck bist campaign {test!r}: instance {index} [{outcome.cls}] {outcome.fault.describe()}, "
        f"power-up {state}; RTL {outcome.rtl}"
    )
    write_fail_log(rows, path, header_comments(what, diagnose_command(test, report.setup, str(path), library), rows))
    return index, outcome, rows
