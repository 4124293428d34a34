"""Per-cycle operations and traces: the vocabulary shared by the model, stimulus, March code and simulator.

A *cycle* is one tuple of :class:`PortOp`, one per contract port in contract order: what each port's
pins carry during the clock cycle that ends with one rising edge. With several clocks a cycle is one
*tick* (see :func:`memcheck.contract.ticks`): an instant at which at least one clock has a rising
edge; a port whose clock has no edge at that tick has the operation :data:`NO_EDGE`. A single-clock
trace has exactly one tick per clock cycle, as before.

Power pins are sampled per tick too: a :class:`Trace` may carry one :class:`Power` state per tick.
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
    reports use the lower-case names ("idle", "read", "write", "no_edge").
    """

    IDLE = 0
    READ = 1
    WRITE = 2
    #: The port's clock has no rising edge at this tick (several clocks): no operation at all.
    NO_EDGE = 3

    @property
    def label(self) -> str:
        """The lower-case name used in JSON and reports."""
        return self.name.lower()

    @classmethod
    def parse(cls, text: str) -> OpKind:
        """The kind named ``text`` ("idle", "read", "write" or "no_edge"); ValueError otherwise."""
        for kind in cls:
            if text == kind.label:
                return kind
        raise ValueError(f"unknown operation {text!r}")


#: Kinds that access the memory (the others do nothing: disabled port, or no clock edge at the tick).
ACCESS_KINDS: tuple[OpKind, ...] = (OpKind.READ, OpKind.WRITE)


@dataclass(frozen=True, slots=True)
class PortOp:
    """What one port does on one edge.

    ``idle`` means the port's enable is deasserted; ``address``, ``data`` and ``lanes`` are then
    whatever the pins carry (garbage is allowed and must be ignored by the RTL). ``no_edge`` means
    the port's clock has no rising edge at this tick (several clocks only): nothing is sampled. ``lanes`` is the
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
        if self.kind == OpKind.NO_EDGE:
            return "no edge"
        return "idle"

    def to_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {"op": self.kind.label}
        if self.kind in ACCESS_KINDS or self.address or self.data or self.lanes is not None:
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
#: The operation of a port whose clock has no rising edge at a tick.
NO_EDGE = PortOp(OpKind.NO_EDGE)


def read(address: int) -> PortOp:
    return PortOp(OpKind.READ, address)


def write(address: int, data: int, lanes: int | None = None) -> PortOp:
    return PortOp(OpKind.WRITE, address, data, lanes)


def idle(address: int = 0, data: int = 0, lanes: int | None = None) -> PortOp:
    """An idle port whose pins carry the given (ignored) values."""
    return PortOp(OpKind.IDLE, address, data, lanes)


Cycle = tuple[PortOp, ...]


class Power(IntEnum):
    """The power pins as one rising edge samples them; shutdown dominates when both are asserted."""

    ON = 0
    SLEEP = 1
    SHUTDOWN = 2

    @classmethod
    def of(cls, sleep: bool, shutdown: bool) -> Power:
        """The state for asserted (True) / deasserted pins."""
        return cls.SHUTDOWN if shutdown else cls.SLEEP if sleep else cls.ON


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
    """A sequence of cycles (ticks) for a contract with ``ports`` ports (in contract order).

    ``power`` is empty (power pins deasserted throughout, or no power pins) or holds one
    :class:`Power` state per cycle: the power pins during that cycle, sampled by its closing edge.
    """

    cycles: tuple[Cycle, ...]
    power: tuple[Power, ...] = ()

    def __post_init__(self) -> None:
        if self.power and len(self.power) != len(self.cycles):
            raise ValueError(f"a trace of {len(self.cycles)} cycles needs as many power states, not {len(self.power)}")

    def __len__(self) -> int:
        return len(self.cycles)

    @classmethod
    def of(cls, cycles: Iterable[Sequence[PortOp]], power: Iterable[Power] = ()) -> Trace:
        return cls(tuple(tuple(c) for c in cycles), tuple(Power(p) for p in power))

    def power_at(self, k: int) -> Power:
        """The power state of cycle ``k``."""
        return self.power[k] if self.power else Power.ON

    def operation_count(self) -> int:
        """Number of port operations that access the memory (reads and writes) in the trace."""
        return sum(1 for c in self.cycles for op in c if op.kind in ACCESS_KINDS)

    def to_json(self) -> list[list[dict[str, Any]]] | dict[str, Any]:
        """A list of cycles; with power states, ``{"cycles": [...], "power": ["on", "sleep", ...]}``."""
        cycles = [[op.to_json() for op in c] for c in self.cycles]
        if not self.power:
            return cycles
        return {"cycles": cycles, "power": [p.name.lower() for p in self.power]}

    @classmethod
    def from_json(cls, data: Any) -> Trace:
        power: list[Power] = []
        if isinstance(data, dict):
            names = data.get("power", [])
            if not isinstance(names, list) or not all(
                isinstance(n, str) and n.upper() in Power.__members__ for n in names
            ):
                raise ValueError('a trace\'s "power" is a list of "on" | "sleep" | "shutdown"')
            power = [Power[n.upper()] for n in names]
            data = data.get("cycles")
        if not isinstance(data, list):
            raise ValueError("a trace is a list of cycles")
        return cls(tuple(tuple(PortOp.from_json(op) for op in c) for c in data), tuple(power))

    def dumps(self) -> str:
        return json.dumps(self.to_json())
