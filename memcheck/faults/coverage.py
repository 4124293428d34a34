"""Coverage of a March test over a fault universe, per fault class, with examples of escapes.

``coverage(test, setup, classes=..., universe=...)`` runs the fast engine over every class and
returns a :class:`CoverageReport`: instances, detected, partial ("detected only from some power-up
states") and escaped per class, broken down by fault model and (for coupling faults) by where the
aggressor sits, plus one example instance with its witness for every model and scope that has
escapes. Coverage counts guaranteed detections only. The verdicts cover the modelled fault models
only: they are an engineering aid, not sign-off.
"""

from __future__ import annotations

import time
from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import numpy.typing as npt

from memcheck.errors import FaultModelError
from memcheck.faults.counted import CountSource, count_source
from memcheck.faults.fast import (
    AF_RELATIONS,
    AF_VARIANTS,
    CELL_RELATIONS,
    combine_bits,
    run_af_classes,
    run_cell_classes,
)
from memcheck.faults.figures import interval, percent
from memcheck.faults.figures import wilson_interval as wilson_interval
from memcheck.faults.geometry import Arrangement, check_consistent
from memcheck.faults.instances import (
    Cell,
    CellFault,
    CouplingFault,
    DecoderFault,
    Detection,
    FaultInstance,
    FaultResult,
    StuckOpenFault,
)
from memcheck.faults.primitives import FaultModel, models_of
from memcheck.faults.sampled import NO_SCOPE, sample_groups
from memcheck.faults.sampled import af_label as af_label
from memcheck.faults.universe import (
    CLASSES,
    SCOPES,
    TWO_CELL_CLASSES,
    Universe,
    parse_classes,
    parse_universe,
    require_layout,
    word_pair_key,
)
from memcheck.march.backgrounds import resolve_backgrounds
from memcheck.march.library import resolve_test
from memcheck.march.notation import MarchTest

IntArray = npt.NDArray[np.int64]

DISCLAIMER = (
    "Verdicts cover the modelled fault models only (single faults, the fault primitives and read "
    "conventions in docs/faults.md); they are an engineering aid, not sign-off."
)
_DETECTIONS: tuple[Detection, ...] = ("detected", "partial", "escaped")


@dataclass(frozen=True)
class Breakdown:
    label: str
    faults: int
    detected: int
    partial: int

    @property
    def escaped(self) -> int:
        return self.faults - self.detected - self.partial


@dataclass(frozen=True)
class ClassCoverage:
    cls: str
    faults: int
    detected: int
    partial: int
    by_model: tuple[Breakdown, ...] = ()
    by_scope: tuple[Breakdown, ...] = ()
    ci95: tuple[float, float] | None = None

    @property
    def escaped(self) -> int:
        return self.faults - self.detected - self.partial

    @property
    def coverage(self) -> float:
        """Guaranteed detections / instances (0 for an empty class)."""
        return self.detected / self.faults if self.faults else 0.0


@dataclass(frozen=True)
class EscapeGroup:
    """Escapes of one fault model in one scope, with one example and its witness."""

    cls: str
    model: str
    scope: str
    escaped: int
    partial: int
    example: FaultResult | None


@dataclass(frozen=True)
class CoverageReport:
    test: MarchTest
    label: str
    setup: Arrangement
    backgrounds: tuple[str, ...]
    universe: Universe
    classes: tuple[ClassCoverage, ...]
    escapes: tuple[EscapeGroup, ...]
    seconds: float = 0.0

    def __getitem__(self, cls: str) -> ClassCoverage:
        for c in self.classes:
            if c.cls == cls:
                return c
        raise KeyError(cls)

    @property
    def notation(self) -> str:
        return self.test.to_unicode()

    def to_json(self) -> dict[str, Any]:
        """{"test", "words", "width", "universe", "classes": {CLASS: {"faults", "detected", "partial",
        "coverage", ...}}, ...}."""
        s = self.setup
        classes: dict[str, Any] = {}
        for c in self.classes:
            entry: dict[str, Any] = {
                "faults": c.faults,
                "detected": c.detected,
                "partial": c.partial,
                "coverage": c.coverage,
                "coverage_text": percent(c.detected, c.faults),
                "escaped": c.escaped,
            }
            if c.ci95 is not None:
                entry["ci95"] = list(c.ci95)
                entry["ci95_text"] = interval(*c.ci95)
            entry["by_model"] = {
                b.label: {"faults": b.faults, "detected": b.detected, "partial": b.partial} for b in c.by_model
            }
            if c.by_scope:
                entry["by_scope"] = {
                    b.label: {"faults": b.faults, "detected": b.detected, "partial": b.partial} for b in c.by_scope
                }
            classes[c.cls] = entry
        escapes = []
        for g in self.escapes:
            item: dict[str, Any] = {
                "class": g.cls,
                "model": g.model,
                "scope": g.scope,
                "escaped": g.escaped,
                "partial": g.partial,
            }
            if g.example is not None:
                item["example"] = g.example.fault.describe()
                item["verdict"] = g.example.verdict
                if g.example.witness is not None:
                    item["witness"] = g.example.witness.describe(self.test)
            escapes.append(item)
        return {
            "test": self.label,
            "words": s.words,
            "width": s.width,
            "universe": self.universe.label,
            "classes": classes,
            "notation": self.notation,
            "layout": None if s.layout is None else f"{s.layout[0]}x{s.layout[1]}",
            "order": s.order,
            "any_order": s.any_order,
            "backgrounds": list(self.backgrounds),
            "seed": self.universe.seed,
            "escapes": escapes,
            "note": DISCLAIMER,
        }


# ---------------------------------------------------------------------------------------------------
# Tallies
# ---------------------------------------------------------------------------------------------------


@dataclass
class _Tally:
    """Counts per (class, model, scope) and one way to find an example per group and verdict."""

    counts: dict[tuple[str, str, str], list[int]] = field(default_factory=dict)
    locators: dict[tuple[str, str, str], tuple[Detection, tuple[Any, ...]]] = field(default_factory=dict)
    results: dict[tuple[str, str, str], FaultResult] = field(default_factory=dict)

    def add(
        self, group: tuple[str, str, str], verdict: int, count: int, locator: tuple[Any, ...] | None = None
    ) -> None:
        if count <= 0:
            return
        self.counts.setdefault(group, [0, 0, 0])[verdict] += count
        if locator is not None and verdict > 0:
            have = self.locators.get(group)
            if have is None or (have[0] == "partial" and verdict == 2):
                self.locators[group] = (_DETECTIONS[verdict], locator)


def _tally_table(
    tally: _Tally,
    cls_of: list[str],
    names: list[str],
    scope: IntArray | None,
    verdicts: npt.NDArray[Any],
    counts: IntArray,
    locate: Any,
) -> None:
    """Add (rows x models) verdicts with per-row counts; ``locate(row, model)`` gives a locator."""
    nrows, nm = verdicts.shape
    sc = np.zeros(nrows, np.int64) if scope is None else scope
    for m in range(nm):
        for s in np.unique(sc).tolist():
            in_scope = sc == s
            label = NO_SCOPE if scope is None else SCOPES[s]
            for v in (0, 1, 2):
                sel = in_scope & (verdicts[:, m] == v)
                if not sel.any():
                    continue
                first = int(np.flatnonzero(sel)[0])
                tally.add((cls_of[m], names[m], label), v, int(counts[sel].sum()), locate(first, m) if v else None)


def _single_cell(src: CountSource, classes: Sequence[str], tally: _Tally) -> None:
    models = [m for c in classes for m in models_of(c)]
    if not models:
        return
    ct = src.cell_table()
    run = run_cell_classes(src.plan, "single", np.zeros_like(ct.code), ct.code, models)
    _tally_table(
        tally,
        [m.cls for m in models],
        [m.name for m in models],
        None,
        run.verdicts(),
        ct.count,
        lambda r, m: ("cell", models[m], int(ct.code[r])),
    )


def _two_cell(src: CountSource, classes: Sequence[str], tally: _Tally) -> None:
    models = [m for c in classes for m in models_of(c)]
    plan = src.plan
    if not models or plan.setup.cells < 2:
        return
    pt = src.pair_table()
    ncode = 1 << plan.rs.nbg
    for ri in (1, 2, 3):
        sel = np.flatnonzero(pt.relation == ri)
        if sel.size == 0:
            continue
        keys, inv = np.unique(np.stack([pt.code_a[sel], pt.code_v[sel]], axis=1), axis=0, return_inverse=True)
        run = run_cell_classes(plan, CELL_RELATIONS[ri], keys[:, 0], keys[:, 1], models)
        verdicts = run.verdicts()[inv.reshape(-1)]
        scope, ca, cv = pt.scope[sel], pt.code_a[sel], pt.code_v[sel]

        def locate(
            r: int, m: int, scope: IntArray = scope, ca: IntArray = ca, cv: IntArray = cv, ri: int = ri
        ) -> tuple[Any, ...]:
            key = ((ri * 3 + int(scope[r])) * ncode + int(ca[r])) * ncode + int(cv[r])
            return ("pair", models[m], key)

        _tally_table(tally, [m.cls for m in models], [m.name for m in models], scope, verdicts, pt.count[sel], locate)


def _stuck_open(src: CountSource, tally: _Tally) -> None:
    width = src.plan.setup.width
    reps, counts = src.sof_contexts()
    words = np.repeat(reps, width)
    bits = np.tile(np.arange(width, dtype=np.int64), reps.size)
    d0, d1 = src.sof_detection(words, bits)
    verdict = np.where(d0 & d1, 0, np.where(d0 | d1, 1, 2))
    weight = np.repeat(counts, width)
    for v in (0, 1, 2):
        sel = np.flatnonzero(verdict == v)
        if sel.size:
            first = int(sel[np.argmin(words[sel] * width + bits[sel])])
            tally.add(
                ("SOF", "SOF", NO_SCOPE),
                v,
                int(weight[sel].sum()),
                ("sof", int(words[first]), int(bits[first])) if v else None,
            )


def _decoder(src: CountSource, tally: _Tally) -> None:
    plan, rs = src.plan, src.plan.rs
    codes = rs.class_codes()
    width = codes.shape[1]
    per_class = src.words_per_class()
    wt = src.word_pair_table()
    groups = [
        (0, list(AF_VARIANTS[:1]), np.flatnonzero(per_class).astype(np.int64), None, per_class[per_class > 0]),
    ]
    for ri in (1, 2):
        sel = wt.relation == ri
        if sel.any():
            groups.append((ri, list(AF_VARIANTS[1:]), wt.class_x[sel], wt.class_y[sel], wt.count[sel]))
    for ri, variants, cx, cy, counts in groups:
        cy_ = cx if cy is None else cy
        pairs = np.stack([codes[cx].reshape(-1), codes[cy_].reshape(-1)], axis=1)
        keys, inv = np.unique(pairs, axis=0, return_inverse=True)
        inv = inv.reshape(len(cx), width)
        run = run_af_classes(plan, AF_RELATIONS[ri], keys[:, 0], keys[:, 1], variants)
        states = np.array([0, 1, 4, 5]) if ri == 0 else np.arange(8)
        verdicts = np.zeros((len(cx), len(variants)), np.int8)
        for r in range(len(cx)):
            for m in range(len(variants)):
                verdicts[r, m] = combine_bits(run.detected[inv[r], m][:, states])[0]
        names = [af_label(k, w) for k, w in variants]

        def locate(
            r: int,
            m: int,
            ri: int = ri,
            cx: IntArray = cx,
            cy: IntArray | None = cy,
            variants: Sequence[tuple[str, str | None]] = variants,
        ) -> tuple[Any, ...]:
            if cy is None:
                return ("word", variants[m], int(cx[r]))
            return ("wordpair", variants[m], word_pair_key(rs, ri, int(cx[r]), int(cy[r])))

        _tally_table(tally, ["AF"] * len(variants), names, None, verdicts, counts, locate)


def _resolve_examples(src: CountSource, tally: _Tally) -> dict[tuple[str, str, str], FaultResult]:
    """Turn locators into instances (one batch search per kind) and simulate them for witnesses."""
    loc = {g: lc for g, (_, lc) in tally.locators.items()}
    cells = src.find_cells([loc_[2] for loc_ in loc.values() if loc_[0] == "cell"])
    pairs = src.find_pairs([loc_[2] for loc_ in loc.values() if loc_[0] == "pair"])
    wpairs = src.find_word_pairs([loc_[2] for loc_ in loc.values() if loc_[0] == "wordpair"])
    instances: dict[tuple[str, str, str], FaultInstance] = {}
    for g, loc_ in loc.items():
        if loc_[0] == "cell" and loc_[2] in cells:
            instances[g] = CellFault(loc_[1], cells[loc_[2]])
        elif loc_[0] == "pair" and loc_[2] in pairs:
            a, v = pairs[loc_[2]]
            instances[g] = CouplingFault(loc_[1], a, v)
        elif loc_[0] == "sof":
            instances[g] = StuckOpenFault(Cell(loc_[1], loc_[2]))
        elif loc_[0] == "word":
            instances[g] = DecoderFault(loc_[1][0], src.first_word_of_class(loc_[2]), None, loc_[1][1])
        elif loc_[0] == "wordpair" and loc_[2] in wpairs:
            x, y = wpairs[loc_[2]]
            instances[g] = DecoderFault(loc_[1][0], x, y, loc_[1][1])
    keys = list(instances)
    results = src.simulate([instances[k] for k in keys])
    return dict(zip(keys, results, strict=True))


def _model_order(cls: str) -> list[str]:
    if cls == "AF":
        return [af_label(k, w) for k, w in AF_VARIANTS]
    if cls == "SOF":
        return ["SOF"]
    return [m.name for m in models_of(cls)]


def _tally_sample(t: MarchTest, setup: Arrangement, cls_list: Sequence[str], uni: Universe) -> _Tally:
    """Simulate a random sample of each class as arrays, on the compact memory of the words the
    sample touches (:mod:`memcheck.faults.sampled`); keep one example per group."""
    assert uni.size is not None
    tally = _Tally()
    for cls in cls_list:
        for g, example in sample_groups(t, setup, cls, uni.size, uni.seed, uni.base):
            for v, count in enumerate(g.counts):
                tally.add(g.group, v, count)
            if example is not None:
                tally.results[g.group] = example
    return tally


def _tally_counted(src: CountSource, cls_list: Sequence[str]) -> _Tally:
    """Count whole classes by relation and signature (``all`` or ``neighbours`` universes)."""
    tally = _Tally()
    _single_cell(src, [c for c in cls_list if models_of(c) and not models_of(c)[0].two_cell], tally)
    _two_cell(src, [c for c in cls_list if c in TWO_CELL_CLASSES], tally)
    if "SOF" in cls_list:
        _stuck_open(src, tally)
    if "AF" in cls_list and src.plan.setup.words >= 1:
        _decoder(src, tally)
    return tally


def _breakdowns(
    cls: str, counts: dict[tuple[str, str, str], list[int]], examples: dict[tuple[str, str, str], FaultResult]
) -> tuple[list[Breakdown], list[Breakdown], list[EscapeGroup]]:
    """Per-model and per-scope breakdowns of one class, and its escaping groups with an example each."""
    groups = {g: c for g, c in counts.items() if g[0] == cls}
    by_model, escapes = [], []
    for name in _model_order(cls):
        cs = [c for g, c in groups.items() if g[1] == name]
        if cs:
            by_model.append(Breakdown(name, sum(map(sum, cs)), sum(c[0] for c in cs), sum(c[1] for c in cs)))
        for scope in (*SCOPES, NO_SCOPE):
            c = groups.get((cls, name, scope))
            if c is not None and (c[1] or c[2]):
                escapes.append(EscapeGroup(cls, name, scope, c[2], c[1], examples.get((cls, name, scope))))
    by_scope = []
    for scope in SCOPES if cls in TWO_CELL_CLASSES else ():
        cs = [c for g, c in groups.items() if g[2] == scope]
        if cs:
            by_scope.append(Breakdown(scope, sum(map(sum, cs)), sum(c[0] for c in cs), sum(c[1] for c in cs)))
    return by_model, by_scope, escapes


def coverage(
    test: MarchTest | str,
    setup: Arrangement,
    *,
    classes: str | Sequence[str] | None = None,
    universe: str | Universe = "all",
    seed: int | None = None,
) -> CoverageReport:
    """Coverage of ``test`` (a MarchTest, library name or notation) on the memory ``setup`` describes."""
    t0 = time.perf_counter()
    t = resolve_test(test) if isinstance(test, str) else test
    label = t.name or (test if isinstance(test, str) else t.to_unicode())
    cls_list = parse_classes(classes if classes is None or isinstance(classes, str) else tuple(classes))
    uni = parse_universe(universe, seed)
    bgs = resolve_backgrounds(setup.background_spec, setup.width, setup.layout)
    check_consistent(t, len(bgs))
    if uni.kind == "sample":
        tally = _tally_sample(t, setup, cls_list, uni)
        examples = tally.results
    else:
        if uni.kind == "neighbours":
            require_layout(setup)
        src = count_source(t, setup, uni.kind)
        tally = _tally_counted(src, cls_list)
        examples = _resolve_examples(src, tally)
    class_rows: list[ClassCoverage] = []
    escape_rows: list[EscapeGroup] = []
    for cls in cls_list:
        total = [sum(c[i] for g, c in tally.counts.items() if g[0] == cls) for i in range(3)]
        by_model, by_scope, escapes = _breakdowns(cls, tally.counts, examples)
        escape_rows.extend(escapes)
        ci = wilson_interval(total[0], sum(total)) if uni.kind == "sample" else None
        class_rows.append(ClassCoverage(cls, sum(total), total[0], total[1], tuple(by_model), tuple(by_scope), ci))
    return CoverageReport(
        t,
        label,
        setup,
        tuple(bg.name for bg in bgs),
        uni,
        tuple(class_rows),
        tuple(escape_rows),
        time.perf_counter() - t0,
    )


def fault_models(cls: str) -> tuple[FaultModel, ...]:
    """The FP-based models of one class (empty for SOF and AF)."""
    if cls not in CLASSES:
        raise FaultModelError(f"unknown fault class {cls!r}; choose from {', '.join(CLASSES)}")
    return models_of(cls)
