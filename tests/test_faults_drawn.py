"""The array path of sampled universes (memcheck.faults.drawn and memcheck.faults.sampled) against the
instance-by-instance path it replaces: the same instances (instance_at, Python integers), the same
verdicts as the whole-memory fast engine (itself held to the reference engine in
tests/test_faults_engines.py), and the same report (counts and examples) as tallying the whole-memory
engine's results one by one, on the ``all`` and ``neighbours`` samples and several backgrounds."""

from __future__ import annotations

import random
from collections import Counter
from typing import Literal

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from memcheck.faults import Arrangement
from memcheck.faults.compose import cell_detection
from memcheck.faults.coverage import coverage
from memcheck.faults.drawn import Drawn, decode
from memcheck.faults.fast import AF_VARIANTS, CELL_RELATIONS, Plan, run_cell_classes, simulate
from memcheck.faults.instances import (
    Cell,
    CellFault,
    CouplingFault,
    DecoderFault,
    FaultInstance,
    FaultResult,
    StuckOpenFault,
)
from memcheck.faults.primitives import models_of
from memcheck.faults.sampled import NO_SCOPE, af_label, verdict_codes
from memcheck.faults.sampling import class_size, instance_at, sample_class, sample_numbers
from memcheck.faults.universe import CLASSES
from memcheck.march.library import resolve_test
from tests.test_faults_sparse import setups

DETECTIONS = ("detected", "partial", "escaped")


def built(d: Drawn, j: int) -> FaultInstance:
    """Instance ``j`` of ``d`` as an object, built from its fields alone."""
    m, w, b, ow, ob = (int(a[j]) for a in (d.model, d.word, d.bit, d.other_word, d.other_bit))
    if d.cls == "SOF":
        return StuckOpenFault(Cell(w, b))
    if d.cls == "AF":
        kind, wired = AF_VARIANTS[m]
        return DecoderFault(kind, w, None if ow < 0 else ow, wired)
    model = models_of(d.cls)[m]
    return CouplingFault(model, Cell(ow, ob), Cell(w, b)) if model.two_cell else CellFault(model, Cell(w, b))


@pytest.mark.parametrize(
    "setup",
    [
        Arrangement(16, 4, layout=(4, 4)),
        Arrangement(12, 1, layout=(3, 4)),
        Arrangement(2, 1, layout=(1, 2)),
        Arrangement(1 << 30, 64, layout=(1 << 15, 1 << 15)),  # two-cell numbers past 2^63
        Arrangement(1 << 40, 8, layout=(1 << 20, 1 << 20)),
    ],
)
@pytest.mark.parametrize("kind", ["all", "neighbours"])
def test_decoded_arrays_are_the_numbered_instances(setup: Arrangement, kind: str) -> None:
    for cls in CLASSES:
        numbers = sample_numbers(class_size(cls, setup, kind), 200, 3, CLASSES.index(cls))
        d = decode(cls, setup, numbers, kind)
        assert [built(d, j) for j in range(len(d))] == [instance_at(cls, setup, i, kind) for i in numbers]


@settings(max_examples=25, deadline=None)
@given(
    setup=setups(),
    name=st.sampled_from(["MATS+", "March C-", "March SS", "March G", "March RAW"]),
    kind=st.sampled_from(["all", "neighbours"]),
    seed=st.integers(0, 1000),
    chunk=st.sampled_from([3, 1 << 18]),
)
def test_array_verdicts_equal_the_whole_memory_engine(
    setup: Arrangement, name: str, kind: str, seed: int, chunk: int
) -> None:
    test = resolve_test(name)
    for cls in CLASSES:
        numbers = sample_numbers(class_size(cls, setup, kind), 12, seed, CLASSES.index(cls))
        codes = verdict_codes(test, setup, decode(cls, setup, numbers, kind), chunk=chunk)
        whole = simulate(test, [instance_at(cls, setup, i, kind) for i in numbers], setup)
        assert [DETECTIONS[c] for c in codes.tolist()] == [r.verdict for r in whole], cls


def _group(r: FaultResult) -> tuple[str, str, str]:
    f = r.fault
    if isinstance(f, DecoderFault):
        return "AF", af_label(f.kind, f.wired), NO_SCOPE
    if isinstance(f, CouplingFault):
        return f.cls, f.name, f.scope
    return f.cls, f.name, NO_SCOPE


@settings(max_examples=12, deadline=None)
@given(
    setup=setups(),
    name=st.sampled_from(["MATS+", "March C-", "March SS"]),
    kind=st.sampled_from(["all", "neighbours"]),
    seed=st.integers(0, 1000),
)
def test_sampled_report_equals_tallying_the_whole_memory_engine(
    setup: Arrangement, name: str, kind: str, seed: int
) -> None:
    """Counts per group and the example shown (the first escaped instance, else the first partial one,
    witness included) as the instance-by-instance tally gave them."""
    test = resolve_test(name)
    rep = coverage(test, setup, universe=f"sample:9{':neighbours' if kind == 'neighbours' else ''}", seed=seed)
    for cls in CLASSES:
        results = simulate(test, sample_class(cls, setup, 9, seed, kind), setup)
        counts = Counter((_group(r), r.verdict) for r in results)
        row = rep[cls]
        assert (row.faults, row.detected, row.partial) == (
            len(results),
            sum(r.verdict == "detected" for r in results),
            sum(r.verdict == "partial" for r in results),
        )
        for g in rep.escapes:
            if g.cls != cls:
                continue
            key = (cls, g.model, g.scope)
            assert (g.escaped, g.partial) == (counts[key, "escaped"], counts[key, "partial"])
            mine = [r for r in results if _group(r) == key and r.verdict != "detected"]
            first = next((r for r in mine if r.verdict == "escaped"), mine[0])
            assert g.example == first


@settings(max_examples=30, deadline=None)
@given(
    name=st.sampled_from(["MATS+", "March C-", "March SS", "March G", "March RAW", "March AB", "March LR"]),
    bgs=st.sampled_from(["solid", "solid,checkerboard", "standard", "standard,row-stripe,col-stripe"]),
    width=st.sampled_from([4, 8]),
    cls=st.sampled_from([c for c in CLASSES if c not in ("SOF", "AF")]),
    any_order=st.sampled_from(["up", "down"]),
)
def test_background_by_background_detection_equals_the_whole_stream(
    name: str, bgs: str, width: int, cls: str, any_order: Literal["up", "down"]
) -> None:
    """Every signature pair, model and power-up state: chaining per-background transfer tables gives
    the detection of running the whole stream (memcheck.faults.compose against fast_cells)."""
    setup = Arrangement(16, width, layout=(4, 4), backgrounds=bgs, any_order=any_order)
    plan = Plan.build(resolve_test(name), setup)
    models = models_of(cls)
    codes = np.arange(1 << plan.rs.nbg, dtype=np.int64)
    ca, cv = (x.reshape(-1) for x in np.meshgrid(codes, codes))
    for relation in CELL_RELATIONS if models[0].two_cell else ("single",):
        whole = run_cell_classes(plan, relation, ca, cv, models).detected
        assert np.array_equal(cell_detection(plan, relation, ca, cv, models), whole), relation


@pytest.mark.parametrize("total", [(1 << 72) * 3 + 5, (1 << 62) + 1, 10**25])
def test_big_samples_are_the_draws_of_randrange(total: int) -> None:
    """Past 2^62 a sample is Python's random.randrange(total) repeated until K distinct numbers
    (uniform over subsets by rejection); sample_numbers draws the same bits faster."""
    big = random.Random("memcheck-sample:7:4")
    picks: set[int] = set()
    while len(picks) < 3000:
        picks.add(big.randrange(total))
    assert sample_numbers(total, 3000, 7, 4) == sorted(picks)
