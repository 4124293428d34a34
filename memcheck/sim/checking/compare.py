"""Compare observed read data with the reference model, cycle by cycle and bit by bit.

A bit is a mismatch where the model knows it and the pin shows the other value or X/Z; where the
model says "unknown" anything is accepted.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from memcheck.contract import Contract
from memcheck.model import Model
from memcheck.model_fast import (
    Columns,
    Contents,
    expected,
    expected_rows,
    ints_to_limbs,
    limbs_of,
    limbs_to_ints,
    mismatch,
    unsupported,
)
from memcheck.ops import Cycle, Expected, Power
from memcheck.records import CheckedTrace, CycleRow, ModelStart, Observed


def start_model(contract: Contract, start: ModelStart) -> Model:
    m = Model(contract)
    if start == "reset":
        m.reset()
    elif start == "unknown":
        m.forget()
    return m


def compare(
    expected: Sequence[tuple[Expected, ...]],
    observed: Sequence[tuple[Observed | None, ...]],
    cycles: Sequence[Cycle],
    start: ModelStart,
    power: Sequence[Power] = (),
) -> CheckedTrace:
    """Pair up expectations and observations of a trace (with its power states, if any)."""
    rows = []
    for k, (ops, exp, obs) in enumerate(zip(cycles, expected, observed, strict=True)):
        diff = tuple(0 if o is None else e.mismatch(o.value, o.defined) for e, o in zip(exp, obs, strict=True))
        rows.append(CycleRow(k, tuple(ops), tuple(exp), tuple(obs), diff, power[k] if power else Power.ON))
    return CheckedTrace(start, tuple(rows))


#: Traces at least this long are checked with the vectorised model (same answers, numpy speed).
FAST_MODEL_CYCLES = 32


def start_contents(contract: Contract, start: ModelStart) -> Contents:
    """What the stored contents are at ``start`` (read pipelines always start unknown)."""
    zero = contract.memory.initial == "zero"
    if start == "reset":
        return "zero" if zero else "unknown"
    if start == "power-up":
        return "zero" if zero and contract.reset is None else "unknown"
    return "unknown"


def expected_for(
    contract: Contract, start: ModelStart, cycles: Sequence[Cycle], power: Sequence[Power] = ()
) -> list[tuple[Expected, ...]]:
    """The model's expectations for ``cycles`` (with their power states, if any) from ``start``: the
    vectorised model for long traces where it applies, the reference model otherwise."""
    if len(cycles) >= FAST_MODEL_CYCLES and unsupported(contract) is None:
        value, known = expected(contract, Columns.from_cycles(contract, cycles), start_contents(contract, start))
        return expected_rows(value, known)
    return start_model(contract, start).run(cycles, power)


def check(
    contract: Contract,
    start: ModelStart,
    cycles: Sequence[Cycle],
    observed: Sequence[tuple[Observed | None, ...]],
    power: Sequence[Power] = (),
) -> CheckedTrace:
    """Run the model from ``start`` over ``cycles`` and compare with ``observed``."""
    return compare(expected_for(contract, start, cycles, power), observed, cycles, start, power)


def expected_arrays(contract: Contract, cols: Columns, start: ModelStart = "unknown") -> tuple[np.ndarray, np.ndarray]:
    """The model's ``(value, known)`` for ``cols`` from ``start``: the vectorised model where it applies
    (:func:`memcheck.model_fast.unsupported`), else the reference :class:`~memcheck.model.Model` (slower,
    same answers)."""
    if unsupported(contract) is None:
        return expected(contract, cols, start_contents(contract, start))
    rows = start_model(contract, start).run(cols.to_cycles())
    return rows_to_arrays(contract, rows)


def rows_to_arrays(contract: Contract, rows: Sequence[tuple[Expected, ...]]) -> tuple[np.ndarray, np.ndarray]:
    """Per-tick expectations as ``(value, known)`` arrays of (ticks, ports, limbs) uint64."""
    limbs = limbs_of(contract.memory.width)
    n, p = len(rows), len(contract.ports)
    flat = [e for r in rows for e in r]
    value = ints_to_limbs([e.value for e in flat], limbs).reshape(n, p, limbs)
    known = ints_to_limbs([e.known for e in flat], limbs).reshape(n, p, limbs)
    return value, known


@dataclass(frozen=True, eq=False)
class ArrayCheck:
    """A trace checked column-wise (no per-cycle objects): arrays of (cycles, ports, limbs) uint64."""

    contract: Contract
    cols: Columns
    exp_value: np.ndarray
    exp_known: np.ndarray
    value: np.ndarray
    defined: np.ndarray
    diff: np.ndarray
    start: ModelStart = "unknown"

    @property
    def ok(self) -> bool:
        return not self.diff.any()

    @property
    def first_mismatch(self) -> int | None:
        bad = self.diff.reshape(len(self.cols), -1).any(axis=1)
        return int(np.argmax(bad)) if bad.any() else None

    def checked(self, stop: int | None = None) -> CheckedTrace:
        """The rows of cycles ``0 .. stop - 1`` (all by default) as a :class:`CheckedTrace`."""
        n = len(self.cols) if stop is None else min(stop, len(self.cols))
        p = self.cols.ports
        cycles = self.cols[:n].to_cycles()
        exp = expected_rows(self.exp_value[:n], self.exp_known[:n])
        readable = [port.read_data is not None for port in self.contract.ports]

        def ints(a: np.ndarray) -> list[int]:
            return limbs_to_ints(a[:n].reshape(n * p, -1)) if n else []

        val, dfd, dif = ints(self.value), ints(self.defined), ints(self.diff)
        rows = []
        for k in range(n):
            obs = tuple(Observed(val[k * p + i], dfd[k * p + i]) if readable[i] else None for i in range(p))
            diff = tuple(dif[k * p + i] if readable[i] else 0 for i in range(p))
            rows.append(CycleRow(k, cycles[k], exp[k], obs, diff))
        return CheckedTrace(self.start, tuple(rows))


def check_arrays(
    contract: Contract,
    cols: Columns,
    value: np.ndarray,
    defined: np.ndarray,
    start: ModelStart = "unknown",
    model: tuple[np.ndarray, np.ndarray] | None = None,
) -> ArrayCheck:
    """Compare captured read data (arrays, as :meth:`Layout.decode_arrays`) with the vectorised model;
    ``model`` is its ``(value, known)`` when already computed (see :func:`expected_arrays`)."""
    ev, ek = model if model is not None else expected_arrays(contract, cols, start)
    diff = mismatch(ev, ek, value, defined)
    for i, port in enumerate(contract.ports):
        if port.read_data is None:
            diff[:, i] = 0
    return ArrayCheck(contract, cols, ev, ek, value, defined, diff, start)
