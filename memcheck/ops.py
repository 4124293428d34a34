"""Per-cycle operations and traces: the vocabulary shared by the model, stimulus, March code and simulator.

A *cycle* is one tuple of :class:`PortOp`, one per contract port in contract order: what each port's
pins carry during the clock cycle that ends with one rising edge.
"""

from __future__ import annotations

import json
from collections.abc import Iterable, Sequence
from dataclasses import dataclass
from enum import IntEnum
from typing import Any


class OpKind(IntEnum):
    """What a port does in a cycle: the one encoding of operation kinds.

    Integers so that numpy columns (:class:`memcheck.model_fast.Columns`), March streams
    (:mod:`memcheck.march.expand`) and Python objects (:class:`PortOp`) share one code; JSON and
    reports use the lower-case names ("idle", "read", "write").
    """

    IDLE = 0
    READ = 1
    WRITE = 2

    @property
    def label(self) -> str:
        """The lower-case name used in JSON and reports."""
        return self.name.lower()

    @classmethod
    def parse(cls, text: str) -> OpKind:
        """The kind named ``text`` ("idle", "read" or "write"); ValueError otherwise."""
        for kind in cls:
            if text == kind.label:
                return kind
        raise ValueError(f"unknown operation {text!r}")


@dataclass(frozen=True, slots=True)
class PortOp:
    """What one port does on one edge.

    ``idle`` means the port's enable is deasserted; ``address``, ``data`` and ``lanes`` are then
    whatever the pins carry (garbage is allowed and must be ignored by the RTL). ``lanes`` is the
    lane-enable value (one bit per lane or per data bit); ``None`` means every lane.
    """

    kind: OpKind = OpKind.IDLE
    address: int = 0
    data: int = 0
    lanes: int | None = None

    def describe(self) -> str:
        if self.kind == OpKind.READ:
            return f"read @{self.address:#x}"
        if self.kind == OpKind.WRITE:
            lanes = "" if self.lanes is None else f" lanes={self.lanes:#x}"
            return f"write @{self.address:#x} = {self.data:#x}{lanes}"
        return "idle"

    def to_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {"op": self.kind.label}
        if self.kind != OpKind.IDLE or self.address or self.data or self.lanes is not None:
            out["address"] = self.address
            out["data"] = hex(self.data)
            if self.lanes is not None:
                out["lanes"] = hex(self.lanes)
        return out

    @classmethod
    def from_json(cls, obj: dict[str, Any]) -> PortOp:
        kind = OpKind.parse(obj.get("op", "idle"))
        data = obj.get("data", 0)
        lanes = obj.get("lanes")
        return cls(
            kind=kind,
            address=int(obj.get("address", 0)),
            data=int(data, 0) if isinstance(data, str) else int(data),
            lanes=None if lanes is None else (int(lanes, 0) if isinstance(lanes, str) else int(lanes)),
        )


IDLE = PortOp()


def read(address: int) -> PortOp:
    return PortOp(OpKind.READ, address)


def write(address: int, data: int, lanes: int | None = None) -> PortOp:
    return PortOp(OpKind.WRITE, address, data, lanes)


def idle(address: int = 0, data: int = 0, lanes: int | None = None) -> PortOp:
    """An idle port whose pins carry the given (ignored) values."""
    return PortOp(OpKind.IDLE, address, data, lanes)


Cycle = tuple[PortOp, ...]


@dataclass(frozen=True, slots=True)
class Expected:
    """Read data a port is expected to show, with a per-bit mask of the bits that are known.

    Bits outside ``known`` may legitimately be anything (including X/Z).
    """

    value: int
    known: int

    def mismatch(self, actual: int, actual_defined: int) -> int:
        """Bits that differ: known bits whose actual value differs or is X/Z.

        ``actual_defined`` has a 1 for every actual bit that is a clean 0 or 1.
        """
        return self.known & ((self.value ^ actual) | ~actual_defined)

    def render(self, width: int) -> str:
        """Binary rendering, MSB first, with 'x' for unknown bits."""
        return "".join(
            ("1" if self.value >> b & 1 else "0") if self.known >> b & 1 else "x" for b in range(width - 1, -1, -1)
        )


UNKNOWN = Expected(0, 0)


@dataclass(frozen=True)
class Trace:
    """A sequence of cycles for a contract with ``ports`` ports (in contract order)."""

    cycles: tuple[Cycle, ...]

    def __len__(self) -> int:
        return len(self.cycles)

    @classmethod
    def of(cls, cycles: Iterable[Sequence[PortOp]]) -> Trace:
        return cls(tuple(tuple(c) for c in cycles))

    def operation_count(self) -> int:
        """Number of non-idle port operations in the trace."""
        return sum(1 for c in self.cycles for op in c if op.kind != OpKind.IDLE)

    def to_json(self) -> list[list[dict[str, Any]]]:
        return [[op.to_json() for op in c] for c in self.cycles]

    @classmethod
    def from_json(cls, data: Any) -> Trace:
        if not isinstance(data, list):
            raise ValueError("a trace is a list of cycles")
        return cls(tuple(tuple(PortOp.from_json(op) for op in c) for c in data))

    def dumps(self) -> str:
        return json.dumps(self.to_json())
