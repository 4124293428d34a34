"""Fail logs: the failing reads of one March test run on one memory, in stream order.

File format (CSV, UTF-8; documented in docs/diagnose.md)::

    element,op,address,background,expected,actual
    1,0,5,0,0x0,0x1

``element`` is the element's index in the test (from 0, delay elements counted), ``op`` the
operation's index inside the element (from 0), ``address`` the word address, ``background`` the data
background's index (from 0, in the order the test ran them), ``expected`` the word a good memory
returns and ``actual`` the word read. Integers may be written in decimal or with ``0x``; the writer
uses decimal for the first four fields and ``0x`` hex for the words. Blank lines and lines starting
with ``#`` are ignored. A BIST engine's first-fail outputs are the same six fields in one row.

:func:`fail_log` is the oracle: the log a single fault instance causes, from the faulty memories of
:mod:`memcheck.faults.replay` (the reference engine's) run over the whole operation stream.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from pathlib import Path

from memcheck._atomic import write_text_atomic
from memcheck.errors import FailLogError
from memcheck.faults.geometry import Arrangement, check_consistent
from memcheck.faults.instances import FaultInstance
from memcheck.faults.replay import back_to_back, event_stream, power_up
from memcheck.march.notation import MarchElement, MarchTest

HEADER = ("element", "op", "address", "background", "expected", "actual")


@dataclass(frozen=True, slots=True, order=True)
class FailRow:
    """One failing read; ``line`` is where it came from in a file (0 otherwise, not compared)."""

    background: int
    element: int
    op: int
    address: int
    expected: int
    actual: int
    line: int = field(default=0, compare=False)

    @property
    def diff(self) -> int:
        """The failing bits: ``expected XOR actual``."""
        return self.expected ^ self.actual

    def csv(self) -> str:
        return f"{self.element},{self.op},{self.address},{self.background},{self.expected:#x},{self.actual:#x}"

    def describe(self, test: MarchTest | None = None) -> str:
        where = f"element {self.element} operation {self.op + 1}"
        el = test.elements[self.element] if test is not None and self.element < len(test.elements) else None
        if isinstance(el, MarchElement) and self.op < len(el.ops):
            where = f"{el.ops[self.op]} of element {self.element} {el.to_unicode()}"
        return (
            f"{where} at address {self.address}, background {self.background}: "
            f"expected {self.expected:#x}, read {self.actual:#x}"
        )


def _field(text: str, name: str, line: int) -> int:
    try:
        value = int(text.strip(), 0)
    except ValueError:
        raise FailLogError(
            f"fail log line {line}: {name} {text.strip()!r} is not an integer (decimal or 0x hex)"
        ) from None
    if value < 0:
        raise FailLogError(f"fail log line {line}: {name} must not be negative, not {value}")
    return value


def parse_fail_log(text: str, source: str = "fail log") -> list[FailRow]:
    """Rows of a fail log's text (see module doc); raises FailLogError naming the line."""
    rows: list[FailRow] = []
    header_seen = False
    for n, raw in enumerate(text.splitlines(), 1):
        line = raw.strip()
        if not line or line.startswith("#"):
            continue
        cells = [c.strip() for c in line.split(",")]
        if not header_seen:
            if tuple(c.lower() for c in cells) != HEADER:
                raise FailLogError(
                    f"{source} line {n}: the first line must be the header {','.join(HEADER)}, not {line!r}"
                )
            header_seen = True
            continue
        if len(cells) != len(HEADER):
            raise FailLogError(f"{source} line {n}: {len(cells)} fields, expected {len(HEADER)} ({','.join(HEADER)})")
        el, op, addr, bg, exp, act = (_field(c, h, n) for c, h in zip(cells, HEADER, strict=True))
        rows.append(FailRow(bg, el, op, addr, exp, act, line=n))
    if not header_seen:
        raise FailLogError(f"{source}: empty; a fail log starts with the header {','.join(HEADER)}")
    return rows


def read_fail_log(path: str | Path) -> list[FailRow]:
    """Read a fail log file (FailLogError for a missing, unreadable or malformed file)."""
    try:
        text = Path(path).read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise FailLogError(f"cannot read fail log {path}: {exc}") from None
    return parse_fail_log(text, str(path))


def format_fail_log(rows: Iterable[FailRow], comments: Sequence[str] = ()) -> str:
    """The fail log's text: ``# `` comment lines, the header, one line per row."""
    notes = [f"# {line}" for c in comments for line in c.splitlines()]
    return "\n".join([*notes, ",".join(HEADER), *(r.csv() for r in rows)]) + "\n"


def write_fail_log(rows: Iterable[FailRow], path: str | Path, comments: Sequence[str] = ()) -> Path:
    """Write ``rows`` as a fail log file (``comments`` as ``#`` lines first), atomically."""
    return write_text_atomic(path, format_fail_log(rows, comments))


def fail_log(
    test: MarchTest, fault: FaultInstance, setup: Arrangement, state: Sequence[int] | None = None
) -> list[FailRow]:
    """The reads that fail when ``test`` runs on a memory with ``fault``, from power-up ``state``
    (one value per :meth:`power_up_labels` entry; default all 0), in stream order.

    This is the reference engine's faulty memory run over the whole stream, compared read by read
    with a good memory from the same power-up state (never-written words are not compared).
    """
    check_consistent(test, len(setup.resolve().backgrounds))
    events = event_stream(test, setup)
    values = tuple(state) if state is not None else (0,) * len(fault.power_up_labels())
    bad, good, _ = power_up(fault, values, setup)
    written = [False] * setup.words
    out: list[FailRow] = []
    for i, ev in enumerate(events):
        bad.chained = i > 0 and back_to_back(events[i - 1], ev)
        if ev.kind == "w":
            bad.write(ev.word, ev.data)
            good[ev.word] = ev.data
            written[ev.word] = True
        elif ev.kind == "r":
            got = bad.read(ev.word)
            if written[ev.word] and got != good[ev.word]:
                r = ev.ref
                out.append(FailRow(r.background, r.element, r.op, r.word, good[ev.word], got))
        else:
            bad.pause()
    return out
