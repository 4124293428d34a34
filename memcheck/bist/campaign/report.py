"""Campaign results: per-class counts in the layout of ``memcheck coverage --json``, and the
instances where RTL and the fault simulator disagree."""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from memcheck.bist.campaign.plan import Row, state_label
from memcheck.bist.campaign.rtl import FailOp
from memcheck.faults import CouplingFault, DecoderFault, Detection, FaultInstance, FaultResult
from memcheck.faults.coverage import DISCLAIMER, af_label, wilson_interval
from memcheck.faults.geometry import Arrangement
from memcheck.march import MarchElement, MarchTest

if TYPE_CHECKING:
    from memcheck.bist.campaign.runner import Prepared

NOTE = "RTL coverage of the generated engine on the faulty memory model. " + DISCLAIMER


@dataclass(frozen=True)
class InstanceOutcome:
    cls: str
    fault: FaultInstance
    rtl: Detection
    simulator: FaultResult
    rows: tuple[Row, ...]
    failed: tuple[bool, ...]
    first: tuple[FailOp | None, ...]

    @property
    def agrees(self) -> bool:
        return self.rtl == self.simulator.verdict


def model_label(fault: FaultInstance) -> str:
    if isinstance(fault, DecoderFault):
        return af_label(fault.kind, fault.wired)
    return fault.name


def describe_op(test: MarchTest, where: FailOp | None) -> str:
    if where is None:
        return "-"
    bg, el, op, addr = where
    e = test.elements[el] if el < len(test.elements) else None
    text = f"{e.ops[op]} " if isinstance(e, MarchElement) and op < len(e.ops) else ""
    name = e.to_unicode() if e is not None else "?"
    return f"{text}at address {addr} (element {el} {name}, operation {op}, background {bg})"


def _disagreement(test: MarchTest, o: InstanceOutcome) -> dict[str, Any]:
    sim = o.simulator.verdict
    # the power-up states where RTL contradicts the simulator's verdict
    if sim == "detected":
        picked = [k for k, f in enumerate(o.failed) if not f]
    elif sim == "escaped":
        picked = [k for k, f in enumerate(o.failed) if f]
    else:
        picked = list(range(len(o.failed)))
    states = [f"{state_label(o.fault, o.rows[k])}: {'fail' if o.failed[k] else 'no fail'}" for k in picked]
    first = next((w for w in o.first if w is not None), None)
    return {
        "class": o.cls,
        "instance": o.fault.describe(),
        "power_up": states,
        "rtl": o.rtl,
        "simulator": sim,
        "first_failing_operation": describe_op(test, first),
    }


@dataclass(frozen=True)
class ClassRow:
    cls: str
    faults: int
    detected: int
    partial: int
    by_model: dict[str, list[int]]
    by_scope: dict[str, list[int]]

    @property
    def escaped(self) -> int:
        return self.faults - self.detected - self.partial

    @property
    def coverage(self) -> float:
        return self.detected / self.faults if self.faults else 0.0


@dataclass(frozen=True)
class CampaignReport:
    head: dict[str, Any]
    classes: tuple[ClassRow, ...]
    disagreements: tuple[dict[str, Any], ...]
    figures: dict[str, int]
    seconds: float
    sample: bool
    test: MarchTest | None = None
    setup: Arrangement | None = None
    outcomes: tuple[InstanceOutcome, ...] = ()  # in plan order (class by class), for fail logs
    simulator: str = "icarus"
    phases: tuple[tuple[str, float], ...] = ()  # (phase, seconds): plan, simulate, compare

    def to_json(self) -> dict[str, Any]:
        classes: dict[str, Any] = {}
        for c in self.classes:
            entry: dict[str, Any] = {
                "faults": c.faults,
                "detected": c.detected,
                "partial": c.partial,
                "coverage": c.coverage,
                "escaped": c.escaped,
            }
            if self.sample:
                entry["ci95"] = list(wilson_interval(c.detected, c.faults))
            entry["by_model"] = {k: _counts(v) for k, v in c.by_model.items()}
            if c.by_scope:
                entry["by_scope"] = {k: _counts(v) for k, v in c.by_scope.items()}
            classes[c.cls] = entry
        out = {**self.head, "classes": classes, "disagreements": list(self.disagreements)}
        rate = self.figures["instances"] / self.seconds if self.seconds > 0 else 0.0
        out["figures"] = dict(self.figures)
        out["timing"] = {
            "seconds": round(self.seconds, 3),
            "instances_per_second": round(rate, 1),
            "simulator": self.simulator,
            "phases": {k: round(v, 3) for k, v in self.phases},
        }
        out["note"] = NOTE
        return out

    @property
    def agree(self) -> bool:
        return not self.disagreements


def _counts(v: list[int]) -> dict[str, int]:
    return {"faults": sum(v), "detected": v[0], "partial": v[1]}


_INDEX = {"detected": 0, "partial": 1, "escaped": 2}


def build_report(
    prepared: Prepared, found: list[InstanceOutcome], seconds: float, phases: tuple[tuple[str, float], ...] = ()
) -> CampaignReport:
    spec = prepared.spec
    rows = []
    for cls, _ in prepared.instances:
        mine = [o for o in found if o.cls == cls]
        by_model: dict[str, list[int]] = {}
        by_scope: dict[str, list[int]] = {}
        for o in mine:
            by_model.setdefault(model_label(o.fault), [0, 0, 0])[_INDEX[o.rtl]] += 1
            if isinstance(o.fault, CouplingFault):
                by_scope.setdefault(o.fault.scope, [0, 0, 0])[_INDEX[o.rtl]] += 1
        det = sum(o.rtl == "detected" for o in mine)
        par = sum(o.rtl == "partial" for o in mine)
        rows.append(ClassRow(cls, len(mine), det, par, by_model, by_scope))
    s = prepared.setup
    head = {
        "test": prepared.label,
        "words": s.words,
        "width": s.width,
        "universe": spec.universe,
        "notation": prepared.test.to_unicode(),
        "layout": None if s.layout is None else f"{s.layout[0]}x{s.layout[1]}",
        "order": s.order,
        "any_order": s.any_order,
        "backgrounds": list(prepared.backgrounds),
        "seed": spec.seed,
        "pause_cycles": spec.pause_cycles,
        "read_latency": spec.read_latency,
    }
    figures = {
        "instances": len(found),
        "simulated_copies": len(prepared.rows),
        "copies_per_simulation": prepared.harness.copies,
        "simulations": len(prepared.jobs),
        "cycles_per_simulation": prepared.harness.cycles,
    }
    bad = tuple(_disagreement(prepared.test, o) for o in found if not o.agrees)
    sample = spec.universe.startswith("sample")
    sim = prepared.harness.simulator
    return CampaignReport(head, tuple(rows), bad, figures, seconds, sample, prepared.test, s, tuple(found), sim, phases)


def render(report: CampaignReport, max_disagreements: int = 20) -> str:
    """The per-class table (as ``memcheck coverage`` prints it) and the disagreements."""
    lines = [f"{'class':<7} {'instances':>9} {'detected':>9} {'partial':>8} {'escaped':>8} {'coverage':>9}"]
    for c in report.classes:
        lines.append(
            f"{c.cls:<7} {c.faults:>9} {c.detected:>9} {c.partial:>8} {c.escaped:>8} {100 * c.coverage:>8.1f}%"
        )
    f = report.figures
    lines.append(
        f"{f['instances']} instances, {f['simulated_copies']} faulty copies in {f['simulations']} simulations of "
        f"{f['copies_per_simulation']} copies, {f['cycles_per_simulation']} cycles each ({report.simulator}), "
        f"{report.seconds:.1f} s"
    )
    if report.agree:
        lines.append("agreement: every instance has the fault simulator's verdict on RTL")
    else:
        lines.append(f"DISAGREEMENT with the fault simulator on {len(report.disagreements)} instances:")
        for d in report.disagreements[:max_disagreements]:
            lines.append(
                f"  [{d['class']}] {d['instance']}: RTL {d['rtl']}, simulator {d['simulator']}; "
                f"first failing operation {d['first_failing_operation']}; power-up {'; '.join(d['power_up'])}"
            )
        if len(report.disagreements) > max_disagreements:
            lines.append(f"  ... and {len(report.disagreements) - max_disagreements} more (all in the JSON report)")
    lines.append(NOTE)
    return "\n".join(lines)
