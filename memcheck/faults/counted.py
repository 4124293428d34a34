"""Where the counted universes get their tables: one interface, two sources.

:func:`memcheck.faults.coverage.coverage` counts the ``all`` and ``neighbours`` universes from a few
tables (single cells by signature code, cell pairs and word pairs by relation and signatures,
stuck-open contexts), then finds one instance per escaping group and simulates it for its witness.
:class:`WholeCounts` takes them from the fully resolved memory (:mod:`memcheck.faults.universe`);
:class:`memcheck.faults.neighbours.NeighbourCounts` computes the neighbours universe's from the
layout's structure without per-word arrays. Both give the same tables and examples.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Protocol

import numpy as np
import numpy.typing as npt

from memcheck.faults.fast import simulate, sof_detection
from memcheck.faults.fast_stream import Plan
from memcheck.faults.geometry import Arrangement
from memcheck.faults.instances import Cell, FaultInstance, FaultResult
from memcheck.faults.neighbours import NeighbourCounts
from memcheck.faults.universe import (
    CellTable,
    PairTable,
    WordPairTable,
    cell_table,
    find_cells,
    find_pairs,
    find_word_pairs,
    pair_table_all,
    pair_table_neighbours,
    sof_contexts,
    word_pair_table,
)
from memcheck.march.notation import MarchTest

IntArray = npt.NDArray[np.int64]
BoolArray = npt.NDArray[np.bool_]


class CountSource(Protocol):
    """The tables and example search of one counted universe."""

    @property
    def plan(self) -> Plan: ...

    def words_per_class(self) -> IntArray: ...

    def cell_table(self) -> CellTable: ...

    def pair_table(self) -> PairTable: ...

    def word_pair_table(self) -> WordPairTable: ...

    def sof_contexts(self) -> tuple[IntArray, IntArray]: ...

    def sof_detection(self, words: IntArray, bits: IntArray) -> tuple[BoolArray, BoolArray]: ...

    def first_word_of_class(self, c: int) -> int: ...

    def find_cells(self, codes_wanted: list[int]) -> dict[int, Cell]: ...

    def find_pairs(self, keys: list[int]) -> dict[int, tuple[Cell, Cell]]: ...

    def find_word_pairs(self, keys: list[int]) -> dict[int, tuple[int, int]]: ...

    def simulate(self, faults: Sequence[FaultInstance]) -> list[FaultResult]: ...


@dataclass(eq=False)
class WholeCounts:
    """Tables of the ``all`` universe (or ``neighbours``, the earlier way) from the resolved memory."""

    plan: Plan
    kind: str = "all"

    def words_per_class(self) -> IntArray:
        out: IntArray = np.bincount(self.plan.rs.wclass, minlength=self.plan.rs.wpar.shape[0]).astype(np.int64)
        return out

    def cell_table(self) -> CellTable:
        return cell_table(self.plan.rs)

    def pair_table(self) -> PairTable:
        return pair_table_all(self.plan.rs) if self.kind == "all" else pair_table_neighbours(self.plan.rs)

    def word_pair_table(self) -> WordPairTable:
        return word_pair_table(self.plan.rs, self.kind)

    def sof_contexts(self) -> tuple[IntArray, IntArray]:
        return sof_contexts(self.plan.rs)

    def sof_detection(self, words: IntArray, bits: IntArray) -> tuple[BoolArray, BoolArray]:
        return sof_detection(self.plan, words, bits)

    def first_word_of_class(self, c: int) -> int:
        return int(np.flatnonzero(self.plan.rs.wclass == c)[0])

    def find_cells(self, codes_wanted: list[int]) -> dict[int, Cell]:
        return find_cells(self.plan.rs, codes_wanted)

    def find_pairs(self, keys: list[int]) -> dict[int, tuple[Cell, Cell]]:
        return find_pairs(self.plan.rs, self.kind, keys)

    def find_word_pairs(self, keys: list[int]) -> dict[int, tuple[int, int]]:
        return find_word_pairs(self.plan.rs, self.kind, keys)

    def simulate(self, faults: Sequence[FaultInstance]) -> list[FaultResult]:
        return simulate(self.plan.test, faults, self.plan.setup, self.plan)


def count_source(test: MarchTest, setup: Arrangement, kind: str) -> CountSource:
    """The source of ``kind`` (``all`` or ``neighbours``) for ``test`` on ``setup``."""
    if kind == "neighbours":
        return NeighbourCounts.build(test, setup)
    return WholeCounts(Plan.build(test, setup), kind)
