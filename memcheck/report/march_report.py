"""Reports of ``memcheck march run``: the text report and the job's own JSON fields.

The text names the first failing operation the way March tests are written and shows expected and
got bit by bit, then the last cycles as the check's failure table (:mod:`memcheck.report.text`).
"""

from __future__ import annotations

from typing import Any

from memcheck.records import MarchFailure, MarchRunResult
from memcheck.report.lookalike import bits_phrase
from memcheck.report.text import (
    DISCLAIMER,
    binary_known,
    hex_known,
    render_failure,
    render_notes,
    render_unconnected,
)


def _marks(diff: int, width: int) -> str:
    # binary_known groups by 8 with spaces; a 'known' pattern of the diff renders 1s where bits differ.
    return binary_known(diff, (1 << width) - 1, width).replace("0", " ").replace("1", "^").rstrip()


def _which_failed(f: MarchFailure) -> str | None:
    if f.failed_checks == ("contract model",):
        return (
            "The March expectation holds here; the contract model does not."
            if f.march_expected is not None
            else "Only the contract model judges this read data (it does not answer a March read of an "
            "address the test had already written)."
        )
    if f.failed_checks == ("March expectation",):
        return "The contract model accepts these bits (it does not promise them); the March expectation does not."
    return None


def value_lines(f: MarchFailure, width: int) -> str:
    """Expected and got, in hex and (up to 64 bits) in binary with the differing bits marked."""
    full = (1 << width) - 1
    rows: list[tuple[str, int, int]] = []
    if f.march_expected is not None:
        rows.append(("March expects", f.march_expected, full))
    rows.append(("model expects", f.model_expected.value, f.model_expected.known))
    rows.append(("got", f.got.value, f.got.defined))
    pad = max(len(label) for label, _, _ in rows)
    out = [f"  {label:<{pad}}  {hex_known(v, k, width)}" for label, v, k in rows]
    if width <= 64:
        out.append("")
        out += [f"  {label:<{pad}}  {binary_known(v, k, width)}" for label, v, k in rows]
        out.append(f"  {'differs':<{pad}}  {_marks(f.diff, width)}")
    else:
        out.append(f"  differing {bits_phrase(f.diff)}")
    note = _which_failed(f)
    return "\n".join(out + ([note] if note else []))


def render_march_report(result: MarchRunResult) -> str:
    """The whole text report of a March run."""
    parts = [result.summary(), *render_unconnected(result)]
    f = result.failure
    if f is not None:
        parts.append(value_lines(f, result.contract.memory.width))
        parts.append(render_failure(result.contract, f.window))
        files = []
        if result.replay_file is not None:
            files.append(
                f"replay file (the run up to cycle {f.cycle}): {result.replay_file}; "
                f"re-run with: memcheck replay {result.replay_file}"
            )
        if result.waveform_file is not None:
            files.append(f"waveform: {result.waveform_file}")
        if files:
            parts.append("\n".join(files))
    if result.notes:
        parts.append("\n".join(f"note: {n}" for n in result.notes))
    parts += render_notes(result)
    parts.append(DISCLAIMER)
    return "\n\n".join(parts)


def _hex(value: int, width: int) -> str:
    return f"{value:0{(width + 3) // 4}x}"


def march_failure_dict(f: MarchFailure, width: int) -> dict[str, Any]:
    """The ``first_failure`` object of the JSON report."""
    s = f.step
    return {
        "cycle": f.cycle,
        "issued_cycle": f.issued_cycle,
        "port": f.port,
        "activity": f.activity,
        "description": f.description,
        "element": None if s is None else s.element,
        "operation": None if s is None else s.step + 1,
        "operation_index": None if s is None else s.index,
        "address": None if s is None else s.op.address,
        "background": None if s is None else s.background,
        "failed": list(f.failed_checks),
        "march_expected": None if f.march_expected is None else _hex(f.march_expected, width),
        "model_expected": hex_known(f.model_expected.value, f.model_expected.known, width),
        "got": hex_known(f.got.value, f.got.defined, width),
        "differing_bits": [b for b in range(width) if f.diff >> b & 1],
        "march_diff": hex(f.march_diff),
        "model_diff": hex(f.model_diff),
    }


def march_fields(result: MarchRunResult) -> dict[str, Any]:
    """The fields a March run adds to the common JSON layout."""
    m = result.contract.memory
    t = result.test
    return {
        "test": {"name": result.test_name, "notation": t.to_unicode(), "ascii": t.to_ascii(), "length": t.length},
        "words": m.words,
        "width": m.width,
        "layout": None if result.layout is None else list(result.layout),
        "order": result.order,
        "any_order": result.any_order,
        "backgrounds": list(result.backgrounds),
        "write_port": result.writer,
        "read_port": result.reader,
        "pause_cycles": result.pause_cycles,
        "first_failure": None if result.failure is None else march_failure_dict(result.failure, m.width),
    }
