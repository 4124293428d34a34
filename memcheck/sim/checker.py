"""Compare observed read data with the reference model, cycle by cycle and bit by bit.

A bit is a mismatch where the model knows it and the pin shows the other value or X/Z; where the
model says "unknown" anything is accepted.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any, Literal

from memcheck.contract import Contract
from memcheck.model import Model
from memcheck.ops import Cycle, Expected, PortOp, Trace
from memcheck.sim.layout import Observed

#: How the model starts before a checked trace: fresh at power-up, right after the reset
#: sequence, or with every stored bit and pending read unknown (an independent example).
ModelStart = Literal["power-up", "reset", "unknown"]
MODEL_STARTS: tuple[str, ...] = ("power-up", "reset", "unknown")


def start_model(contract: Contract, start: ModelStart) -> Model:
    m = Model(contract)
    if start == "reset":
        m.reset()
    elif start == "unknown":
        m.forget()
    return m


@dataclass(frozen=True)
class CycleRow:
    """One checked cycle: what each port did, what the model expects, what the pins showed."""

    cycle: int
    ops: tuple[PortOp, ...]
    expected: tuple[Expected, ...]
    observed: tuple[Observed | None, ...]
    diff: tuple[int, ...]

    @property
    def ok(self) -> bool:
        return not any(self.diff)

    def to_json(self) -> dict[str, Any]:
        return {
            "cycle": self.cycle,
            "ops": [op.to_json() for op in self.ops],
            "expected": [[hex(e.value), hex(e.known)] for e in self.expected],
            "observed": [None if o is None else [hex(o.value), hex(o.defined)] for o in self.observed],
            "diff": [hex(d) for d in self.diff],
        }

    @classmethod
    def from_json(cls, obj: dict[str, Any]) -> CycleRow:
        return cls(
            cycle=int(obj["cycle"]),
            ops=tuple(PortOp.from_json(o) for o in obj["ops"]),
            expected=tuple(Expected(int(v, 16), int(k, 16)) for v, k in obj["expected"]),
            observed=tuple(None if o is None else Observed(int(o[0], 16), int(o[1], 16)) for o in obj["observed"]),
            diff=tuple(int(d, 16) for d in obj["diff"]),
        )


@dataclass(frozen=True)
class CheckedTrace:
    """A trace with the model's expectations and the observations, compared."""

    start: ModelStart
    rows: tuple[CycleRow, ...]

    @property
    def ok(self) -> bool:
        return all(r.ok for r in self.rows)

    @property
    def first_mismatch(self) -> int | None:
        for r in self.rows:
            if not r.ok:
                return r.cycle
        return None

    @property
    def trace(self) -> Trace:
        return Trace(tuple(r.ops for r in self.rows))

    def mismatches(self) -> list[tuple[int, int, int]]:
        """(cycle, port index, differing bits) for every mismatch."""
        return [(r.cycle, i, d) for r in self.rows for i, d in enumerate(r.diff) if d]

    def signature(self) -> list[tuple[int, int, int, int, int]]:
        """What identifies the failure for replay: per mismatch, cycle, port, diff, observed value/defined."""
        out = []
        for r in self.rows:
            for i, d in enumerate(r.diff):
                if d:
                    o = r.observed[i]
                    assert o is not None
                    out.append((r.cycle, i, d, o.value & d, o.defined & d))
        return out

    def to_json(self) -> dict[str, Any]:
        return {"start": self.start, "rows": [r.to_json() for r in self.rows]}

    @classmethod
    def from_json(cls, obj: dict[str, Any]) -> CheckedTrace:
        start = obj.get("start", "unknown")
        if start not in MODEL_STARTS:
            raise ValueError(f"unknown model start {start!r}")
        return cls(start=start, rows=tuple(CycleRow.from_json(r) for r in obj["rows"]))


def compare(expected: Sequence[tuple[Expected, ...]], observed: Sequence[tuple[Observed | None, ...]],
            cycles: Sequence[Cycle], start: ModelStart) -> CheckedTrace:
    """Pair up expectations and observations of a trace."""
    rows = []
    for k, (ops, exp, obs) in enumerate(zip(cycles, expected, observed, strict=True)):
        diff = tuple(0 if o is None else e.mismatch(o.value, o.defined) for e, o in zip(exp, obs, strict=True))
        rows.append(CycleRow(k, tuple(ops), tuple(exp), tuple(obs), diff))
    return CheckedTrace(start, tuple(rows))


def check(contract: Contract, start: ModelStart, cycles: Sequence[Cycle],
          observed: Sequence[tuple[Observed | None, ...]]) -> CheckedTrace:
    """Run the model from ``start`` over ``cycles`` and compare with ``observed``."""
    model = start_model(contract, start)
    return compare(model.run(cycles), observed, cycles, start)
