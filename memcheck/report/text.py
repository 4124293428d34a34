"""Plain-text reports: the failing trace as a table with differing bits marked, and a summary.

Plain text on purpose: it reads the same on a terminal, in a CI log and in a file.
"""

from __future__ import annotations

from typing import Any

from memcheck.contract import Contract
from memcheck.ops import Expected, OpKind, PortOp
from memcheck.records import CheckedTrace, CheckResult, Observed, RunRecord
from memcheck.report.coverage_text import render_coverage
from memcheck.report.explain import explain
from memcheck.report.lookalike import bits_phrase, lookalike

DISCLAIMER = (
    "Verdicts cover the behaviour modelled by the contract only (behaviours it leaves unknown "
    "are not checked); this is a verification aid, not sign-off."
)
_BINARY_MAX = 64
_TABLE_MAX_ROWS = 40


def hex_known(value: int, known: int, width: int) -> str:
    """Hex, one character per nibble: the digit if known, 'x' if unknown, '?' if partly known."""
    out = []
    for n in range((width + 3) // 4 - 1, -1, -1):
        bits = min(4, width - 4 * n)
        nib_mask = ((1 << bits) - 1) << (4 * n)
        k = known & nib_mask
        if k == nib_mask:
            out.append(f"{(value >> (4 * n)) & 0xF:x}")
        elif k == 0:
            out.append("x")
        else:
            out.append("?")
    return "".join(out)


def binary_known(value: int, known: int, width: int) -> str:
    """Binary, MSB first, 'x' for unknown bits, a space every 8 bits."""
    chars = [("1" if value >> b & 1 else "0") if known >> b & 1 else "x" for b in range(width - 1, -1, -1)]
    return _group(chars)


def _group(chars: list[str]) -> str:
    n = len(chars)
    out = []
    for i, ch in enumerate(chars):
        if i and (n - i) % 8 == 0:
            out.append(" ")
        out.append(ch)
    return "".join(out)


def _marks(diff: int, width: int) -> str:
    return _group(["^" if diff >> b & 1 else " " for b in range(width - 1, -1, -1)]).rstrip()


def _op_cells(contract: Contract, op: PortOp) -> tuple[str, str, str, str]:
    m = contract.memory
    hexw = (m.width + 3) // 4
    lanes = "" if m.lanes == 0 or op.lanes is None else f"{op.lanes:0{max(1, (m.lanes + 3) // 4)}x}"
    if op.kind == OpKind.WRITE:
        return op.kind.label, f"{op.address:#x}", f"{op.data:0{hexw}x}", lanes or ("all" if m.lanes else "")
    if op.kind == OpKind.READ:
        return op.kind.label, f"{op.address:#x}", "", ""
    if op.address or op.data or op.lanes is not None:
        return "idle*", f"{op.address:#x}", f"{op.data:0{hexw}x}", lanes
    return "idle", "", "", ""


def _bits_text(diff: int) -> str:
    text = bits_phrase(diff)
    return text if len(text) <= 28 else f"{diff.bit_count()} bits"


def render_table(contract: Contract, checked: CheckedTrace) -> str:
    """The trace as a table: one line per port per cycle, differing bits marked below."""
    m = contract.memory
    width = m.width
    rows = list(checked.rows)
    skipped = 0
    if len(rows) > _TABLE_MAX_ROWS:
        first = checked.first_mismatch
        end = next((i for i, r in enumerate(rows) if r.cycle == first), len(rows) - 1) + 1
        start = max(0, end - _TABLE_MAX_ROWS)
        skipped = start
        rows = rows[start:end]
    header = ("cycle", "port", "op", "address", "write data", "lanes", "expected", "actual", "differs")
    lines: list[tuple[str, ...]] = []
    details: list[str] = []
    for r in rows:
        for p, (spec, op) in enumerate(zip(contract.ports, r.ops, strict=True)):
            kind, addr, data, lanes = _op_cells(contract, op)
            exp: Expected = r.expected[p]
            obs: Observed | None = r.observed[p]
            if obs is None:
                e_txt = a_txt = ""
            else:
                e_txt = hex_known(exp.value, exp.known, width)
                a_txt = hex_known(obs.value, obs.defined, width)
            d = r.diff[p]
            lines.append(
                (str(r.cycle), spec.name, kind, addr, data, lanes, e_txt, a_txt, f"<< {_bits_text(d)}" if d else "")
            )
            if d and obs is not None and len(details) < 4:
                if width <= _BINARY_MAX:
                    pad = " " * len(f"cycle {r.cycle} port {spec.name}: ")
                    details.append(
                        f"cycle {r.cycle} port {spec.name}: expected {binary_known(exp.value, exp.known, width)}\n"
                        f"{pad}actual   {binary_known(obs.value, obs.defined, width)}\n"
                        f"{pad}differs  {_marks(d, width)}"
                    )
                else:
                    details.append(f"cycle {r.cycle} port {spec.name}: differing {bits_phrase(d)}")
    widths = [max(len(h), *(len(x[i]) for x in lines)) if lines else len(h) for i, h in enumerate(header)]

    def fmt(cells: tuple[str, ...]) -> str:
        return "  ".join(c.ljust(w) for c, w in zip(cells, widths, strict=True)).rstrip()

    out = [fmt(header), fmt(tuple("-" * w for w in widths))]
    if skipped:
        out.append(f"... {skipped} earlier cycles not shown ...")
    out += [fmt(x) for x in lines]
    legend = [
        "expected/actual in hex: x = unknown (model) or X/Z (pins), ? = partly unknown nibble; "
        "idle* = port disabled with other values on its pins."
    ]
    if m.read_latency:
        legend.append(f"Read data is shown in the cycle it is due (read_latency = {m.read_latency}).")
    return "\n".join(out + [""] + details + ([""] if details else []) + legend)


def render_failure(contract: Contract, checked: CheckedTrace, *, start_text: str = "") -> str:
    """Table plus the violated rule in words."""
    parts = []
    if start_text:
        parts.append(start_text)
    parts.append(render_table(contract, checked))
    ex = explain(contract, checked)
    if ex is not None:
        parts.append(f"Violated: {ex.rule}")
        if ex.detail:
            parts.append(ex.detail)
    hint = lookalike(contract, checked)
    if hint is not None:
        parts.append(f"Hint: {hint}" + ("" if hint.endswith("?") else "."))
    return "\n\n".join(parts)


def start_description(preamble: tuple[str, ...], start: str, contract: Contract | None = None) -> str:
    """How the trace starts, in words."""
    has_reset = contract is None or contract.reset is not None
    if tuple(preamble) == ("reset", "fill", "flush"):
        first = (
            "the reset sequence, then "
            if has_reset and contract is not None
            else ("the reset sequence (if any), then " if contract is None else "")
        )
        return (
            f"Starts from: {first}every address written with a fixed pattern and a short flush (not "
            "checked); the model knows nothing at the start, so only what the trace itself writes is checked."
        )
    names = {
        "reset": "the reset sequence",
        "fill": "every address written with a fixed pattern",
        "flush": "a short flush",
        "smoke": "the smoke sequence",
    }
    steps = [
        names.get(s, f"sweep {s.split(':', 1)[1]}" if s.startswith("sweep:") else s)
        for s in preamble
        if s != "reset" or has_reset
    ]
    model = {
        "power-up": "the model at power-up",
        "reset": "the model right after reset",
        "unknown": "a model that knows nothing",
    }[start]
    return (
        f"Starts from: {', then '.join(steps) or 'power-up'} (not checked), then the trace below is checked "
        f"against {model}."
    )


def render_unconnected(result: RunRecord[Any]) -> list[str]:
    """The inputs of the top that nothing drives, as the likely cause: printed right after the summary,
    before any failure, because an undriven enable, clock or power pin explains every difference."""
    if not result.unconnected_inputs:
        return []
    pins = ", ".join(result.unconnected_inputs)
    lead = (
        "Likely cause of the difference below"
        if result.failure is not None
        else "Check these first, the verdict depends on them"
    )
    return [
        f"{lead}: inputs of the top module that no contract key names and no [rtl] tie holds: {pins}. "
        "The check does not drive them (they stay X or Z), so the RTL may do what the contract never "
        "describes, or an X condition may read as false and hide behaviour. Name each in a port, "
        "[[clock]], [reset] or [power] key, or hold it at a constant with [rtl] tie = { pin = value }."
    ]


def render_report(result: CheckResult) -> str:
    """The whole human report of a check."""
    parts = [result.summary(), *render_unconnected(result)]
    if result.failure is not None:
        f = result.failure
        parts.append(
            render_failure(
                result.contract, f.checked, start_text=start_description(f.preamble, f.checked.start, result.contract)
            )
        )
        if f.timing_hint:
            parts.append(f"Timing: {f.timing_hint}")
        files = []
        if result.replay_file:
            files.append(f"replay file: {result.replay_file}")
        if result.waveform_file:
            files.append(f"waveform of the trace alone: {result.waveform_file}")
        if result.reproduced is False:
            files.append(
                "note: a fresh replay showed a different mismatch than the check run (the RTL keeps "
                "state the canonical start does not reset, or its result depends on the order of the "
                "processes one clock edge wakes: a likely race); the replay file records the check run."
            )
        if files:
            parts.append("\n".join(files))
    if result.coverage is not None:
        parts.append(render_coverage(result.coverage))
    if result.notes:
        parts.append("\n".join(f"note: {n}" for n in result.notes))
    parts += render_notes(result)
    parts.append(DISCLAIMER)
    return "\n\n".join(parts)


def render_notes(result: RunRecord[Any]) -> list[str]:
    """What every job's report ends with: behaviours not checked (inputs nothing drives come first,
    see :func:`render_unconnected`)."""
    parts = []
    if result.unchecked:
        parts.append(
            "Not checked, because the contract leaves them unknown:\n" + "\n".join(f"  - {u}" for u in result.unchecked)
        )
    return parts
