"""Functional coverage of a check: cover points of a contract, counted on the traces a check drove.

Pure Python + numpy; never imports the simulator side. See docs/check.md, "What a check covered".
"""

from memcheck.cover.directed import directed_cycles
from memcheck.cover.measure import Counts, TraceArrays, arrays_of_cycles, measure
from memcheck.cover.points import MEMORY, Checkable, CoverPoint, cover_points
from memcheck.cover.result import Coverage, PointResult, coverage_of

__all__ = [
    "MEMORY",
    "Checkable",
    "Counts",
    "CoverPoint",
    "Coverage",
    "PointResult",
    "TraceArrays",
    "arrays_of_cycles",
    "cover_points",
    "coverage_of",
    "directed_cycles",
    "measure",
]
