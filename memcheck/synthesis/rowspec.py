"""The row description every fault-class builder of the synthesis search returns (see
:mod:`memcheck.synthesis.rows`): a row's power-up state and its step functions."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

StepFn = Callable[[int, str, int], tuple[int, bool]]  # (state, kind, logical value) -> (state, detected)


@dataclass(frozen=True)
class RowSpec:
    """One row: its power-up state and how an operation on its first / second word changes it."""

    init: int
    first: StepFn
    second: StepFn | None
    pause: Callable[[int], int] | None = None


Built = list[tuple[str, list[list[RowSpec]]]]  # (label, alternatives of row lists) per case


def flip_bit(code: int, bg: int) -> int:
    """Bit ``bg`` of a signature code: whether the cell is complemented in background ``bg``."""
    return (code >> bg) & 1
