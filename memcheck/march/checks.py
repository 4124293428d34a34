"""Warnings about a March test that is valid notation but cannot do its job.

A test that never writes leaves every word at its unknown power-up content, so no read is
compared and nothing can be detected; a test that never reads observes nothing. Both are legal
(the notation parses, a fault-free memory passes) but almost always a typing slip, so the commands
that measure or export a test print these as warnings.
"""

from __future__ import annotations

from memcheck.march.notation import MarchElement, MarchTest


def notation_warnings(test: MarchTest) -> list[str]:
    """One sentence per reason ``test`` cannot detect anything (empty when it can)."""
    ops = [op for el in test.elements if isinstance(el, MarchElement) for op in el.ops]
    name = test.name or test.to_unicode()
    out = []
    if not any(op.kind == "w" for op in ops):
        out.append(
            f"{name} never writes: every read sees the unknown power-up content, which is not compared, "
            "so it detects nothing (start it with a write element such as ⇕(w0))"
        )
    if not any(op.kind == "r" for op in ops):
        out.append(f"{name} never reads: no fault can be observed, so it detects nothing")
    return out
