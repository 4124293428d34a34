"""What a check covered: every cover point of the contract with its hit count, holes first.

:func:`coverage_of` turns the :class:`~memcheck.cover.measure.Counts` of a run into a
:class:`Coverage`, the record reports and the Python API show (``CheckResult.coverage``).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from memcheck.contract import Contract
from memcheck.cover.measure import Counts
from memcheck.cover.points import Checkable, CoverPoint, cover_points

#: Missing items named per aggregated point (address bits, lanes); the rest are counted.
_NAMED = 8


@dataclass(frozen=True)
class PointResult:
    """A cover point, its hit count, and for aggregated points (every address bit, every lane) what
    was never seen."""

    point: CoverPoint
    hits: int
    missing: tuple[str, ...] = ()

    @property
    def hole(self) -> bool:
        return self.hits == 0

    def to_json(self) -> dict[str, Any]:
        p = self.point
        return {
            "key": p.key,
            "scope": p.scope,
            "point": p.kind,
            "what": p.what,
            "hits": self.hits,
            "checked": p.checked,
            "note": p.note,
            "missing": list(self.missing),
        }

    @classmethod
    def from_json(cls, obj: dict[str, Any]) -> PointResult:
        checked: Checkable = obj.get("checked", "yes")
        point = CoverPoint(str(obj["key"]), str(obj["what"]), checked, str(obj.get("note", "")))
        return cls(point, int(obj["hits"]), tuple(str(m) for m in obj.get("missing", [])))


@dataclass(frozen=True)
class Coverage:
    """Every reachable cover point of a contract with its hit count, in contract order."""

    points: tuple[PointResult, ...]

    @property
    def total(self) -> int:
        return len(self.points)

    @property
    def hit(self) -> int:
        return sum(1 for p in self.points if not p.hole)

    @property
    def holes(self) -> tuple[PointResult, ...]:
        return tuple(p for p in self.points if p.hole)

    def ordered(self) -> tuple[PointResult, ...]:
        """Holes first, then the rest, each in contract order."""
        return self.holes + tuple(p for p in self.points if not p.hole)

    def summary(self) -> str:
        """``"N of M cover points hit"``."""
        return f"{self.hit} of {self.total} cover points hit"

    def hole_text(self) -> str:
        """The holes, one phrase each (for an exit message)."""
        return "; ".join(f"{p.point.key} ({p.point.what})" for p in self.holes)

    def to_json(self) -> dict[str, Any]:
        return {"hit": self.hit, "total": self.total, "points": [p.to_json() for p in self.ordered()]}

    @classmethod
    def from_json(cls, obj: dict[str, Any]) -> Coverage:
        return cls(tuple(PointResult.from_json(p) for p in obj.get("points", [])))


def _named(items: list[str]) -> tuple[str, ...]:
    if len(items) <= _NAMED:
        return tuple(items)
    return (*items[:_NAMED], f"... and {len(items) - _NAMED} more")


def _aggregate(contract: Contract, counts: Counts, point: CoverPoint) -> PointResult:
    p = [q.name for q in contract.ports].index(point.scope)
    if point.kind == "address.bits":
        table = counts.address_bits[p]
        missing = [f"bit {b} at {v}" for b in range(table.shape[0]) for v in (0, 1) if table[b, v] == 0]
        return PointResult(point, int(table.min()), _named(missing))
    n = max(contract.memory.lanes, 1)
    lanes = counts.lanes[p, :n]
    unit = "bit" if contract.memory.bit_mask else "lane"
    missing = [f"{unit} {k}" for k in np.flatnonzero(lanes == 0).tolist()]
    return PointResult(point, int(lanes.min()), _named(missing))


def coverage_of(contract: Contract, counts: Counts) -> Coverage:
    """The cover points of ``contract`` with the hits ``counts`` recorded."""
    out = []
    for point in cover_points(contract):
        if point.kind in ("address.bits", "lanes.each"):
            out.append(_aggregate(contract, counts, point))
        else:
            out.append(PointResult(point, int(counts.hits.get(point.key, 0))))
    return Coverage(tuple(out))
