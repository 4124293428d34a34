"""Fail logs from runs: what ``memcheck march run --fail-log`` and ``memcheck bist campaign --fail-log``
write, in the format :func:`memcheck.diagnose.read_fail_log` reads (docs/diagnose.md).

A ``march run`` with ``--fail-log`` runs on past its first failure and lists every failing March
read, up to ``--fail-log-limit`` rows (:data:`FAIL_LOG_LIMIT` by default; a cut log is read back with
``--first-reads N``). A campaign copy reports only its first failing read, so a campaign log is a
*first-fail* log (``--first-fail``). The comment lines name the run and the one ``memcheck
diagnose`` command that reads the log back with the same memory options.
"""

from __future__ import annotations

import shlex
from collections.abc import Sequence
from pathlib import Path

from memcheck.diagnose.faillog import FailRow, write_fail_log
from memcheck.diagnose.predict import collect
from memcheck.errors import UsageError
from memcheck.faults.geometry import Arrangement
from memcheck.faults.instances import CellFault, CouplingFault, DecoderFault, FaultInstance, StuckOpenFault
from memcheck.march.notation import MarchTest
from memcheck.records import MarchFailure, MarchRunResult

#: (background, element, operation inside the element, address) of a failing read
FailOp = tuple[int, int, int, int]

#: Rows a ``march run`` fail log holds at most by default (``--fail-log-limit``).
FAIL_LOG_LIMIT = 1000


def march_failure_row(failure: MarchFailure | None, width: int) -> list[FailRow]:
    """The first-fail log of a ``march run``: one row for a failing March read, else none.

    A failure that is not a March read (read data during a write, a quiet cycle, a read of a word
    never written: only the contract model judges those) has no place in a fail log: no row. Bits
    read as X or Z count as failing: ``actual`` holds the complement of the expected bit there.
    """
    if failure is None or failure.step is None or failure.activity != "read" or failure.march_expected is None:
        return []
    mask = (1 << width) - 1
    exp = failure.march_expected
    got = failure.got
    actual = (got.value & got.defined) | (~exp & ~got.defined & mask)
    if actual == exp:  # only the contract model saw a difference
        return []
    s = failure.step
    return [FailRow(s.background, s.element, s.step, s.op.address, exp, actual)]


def march_run_rows(result: MarchRunResult, width: int) -> tuple[list[FailRow], int]:
    """The failing March reads a run listed (``run_march(..., fail_reads=N)``: up to N, in stream
    order) and how many failed in all; a run that did not list them: its first failing read only."""
    listed = result.extra.get("failing_reads")
    if not isinstance(listed, list):
        rows = march_failure_row(result.failure, width)
        return rows, len(rows)
    rows = [FailRow(*(int(x) for x in r)) for r in listed]
    return rows, int(str(result.extra.get("failing_reads_total", len(rows))))


def march_run_setup(result: MarchRunResult) -> Arrangement:
    """The memory options of a ``march run`` as diagnosis takes them."""
    m = result.contract.memory
    return Arrangement(
        m.words,
        m.width,
        layout=result.layout,
        order=result.order,
        backgrounds=",".join(result.backgrounds),
        seed=result.seed,
        any_order="down" if result.any_order == "down" else "up",
    )


def write_march_run_log(
    result: MarchRunResult, path: str | Path, test: str, library: str | None = None
) -> list[FailRow]:
    """Write the fail log of a ``march run`` (``test``: how the command named the test): every failing
    March read it listed (see :func:`march_run_rows`), saying when the list was cut."""
    setup = march_run_setup(result)
    rows, total = march_run_rows(result, setup.width)
    listed = "failing_reads" in result.extra
    first = None if listed and total == len(rows) else (len(rows) if listed else 1)
    where = str(result.contract_path) if result.contract_path else "contract"
    what = f"memcheck march run {where} {test!r}: seed {result.seed}, verdict {result.verdict}"
    scope = "first-fail log: at most the first failing read"
    if listed:
        scope = (
            f"every failing March read ({total})"
            if first is None
            else f"the first {len(rows)} of {total} failing March reads (--fail-log-limit)"
        )
    command = diagnose_command(test, setup, str(path), library, first=first if rows else None)
    write_fail_log(rows, path, header_comments(what, command, rows, scope))
    return rows


def faulty_bit(fault: FaultInstance, row_bit: int) -> int:
    """The data bit a campaign copy of ``fault`` is compared on (a decoder fault runs bit by bit)."""
    if isinstance(fault, CellFault | StuckOpenFault):
        return fault.cell.bit
    if isinstance(fault, CouplingFault):
        return fault.victim.bit
    assert isinstance(fault, DecoderFault)
    return row_bit


def campaign_row(test: MarchTest, setup: Arrangement, hits: Sequence[tuple[FailOp, int]]) -> FailRow:
    """The first-fail row of one run from campaign copies: ``hits`` holds each copy's first failing read
    and the data bit it is compared on (one copy per bit for a decoder fault, else one copy).

    A copy is compared on its own faulty bit only (docs/bist.md). The run's first failing read is the
    earliest of them in the stream; ``actual`` is the expected word (the test's own at that read)
    with the bits of every copy that first failed there flipped."""
    events = collect(test, setup, sorted({w[3] for w, _ in hits}))
    place = {
        (e.background, e.element, e.op, e.word): (e.seq, e.data)
        for evs in events.by_word.values()
        for e in evs
        if e.kind == "r"
    }
    for where, _ in hits:
        if where not in place:
            raise UsageError(f"the campaign reported a failing read the test does not have: {where}")
    first = min((w for w, _ in hits), key=lambda w: place[w][0])
    exp = place[first][1]
    flipped = sum({1 << bit for w, bit in hits if w == first})
    bg, el, op, addr = first
    return FailRow(bg, el, op, addr, exp, exp ^ flipped)


def diagnose_command(test: str, setup: Arrangement, log: str, library: str | None = None, first: int | None = 1) -> str:
    """The ``memcheck diagnose`` command that reads ``log`` back with the memory options of ``setup``
    (``first``: the log holds only the first that many failing reads; 1 is ``--first-fail``, None a
    whole log)."""
    bgs = setup.background_spec
    parts = ["memcheck", "diagnose", test, log, "--words", str(setup.words), "--width", str(setup.width)]
    if setup.layout is not None:
        parts += ["--layout", f"{setup.layout[0]}x{setup.layout[1]}"]
    parts += ["--order", setup.order, "--any-order", setup.any_order]
    parts += ["--backgrounds", bgs if isinstance(bgs, str) else ",".join(bgs)]
    if setup.seed is not None:
        parts += ["--seed", str(setup.seed)]
    if library is not None:
        parts += ["--library", library]
    if first is not None:
        parts += ["--first-fail"] if first == 1 else ["--first-reads", str(first)]
    return shlex.join(parts)


def header_comments(
    what: str, command: str, rows: Sequence[FailRow], scope: str = "first-fail log: at most the first failing read"
) -> list[str]:
    """Comment lines of a run's fail log: what produced it, what it holds and how to read it back."""
    return [what, scope + ("" if rows else "; this run had no failing March read"), f"read it back: {command}"]
