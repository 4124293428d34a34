"""Machine-readable reports: JSON with a top-level verdict, and JUnit XML for CI dashboards."""

from __future__ import annotations

import json
import xml.etree.ElementTree as ET
from pathlib import Path
from typing import Any

from memcheck import __version__
from memcheck._atomic import write_text_atomic
from memcheck.records import CheckResult, MarchRunResult, RunRecord
from memcheck.report.explain import explain
from memcheck.report.march_report import march_fields, render_march_report
from memcheck.report.text import DISCLAIMER, render_report


def _common(result: RunRecord[Any], job: str) -> dict[str, Any]:
    """The fields every job's JSON report has (docs/check.md, "JSON report")."""
    c = result.contract
    return {
        "verdict": str(result.verdict),
        "tool": "memcheck",
        "version": __version__,
        "job": job,
        "contract": None if result.contract_path is None else str(result.contract_path),
        "top": c.rtl.top if c.rtl else None,
        "seed": result.seed,
        "seconds": round(result.seconds, 3),
        "build_seconds": round(result.build_seconds, 3),
        "build_reused": result.build_reused,
        "phases": [p.to_json() for p in result.phases],
        "out_dir": None if result.out_dir is None else str(result.out_dir),
        "replay_file": None if result.replay_file is None else str(result.replay_file),
        "replay_command": result.replay_command,
        "waveform": None if result.waveform_file is None else str(result.waveform_file),
        "reproduced_by_replay": result.reproduced,
        "unchecked": result.unchecked,
        "unconnected_inputs": list(result.unconnected_inputs),
        "notes": list(result.notes),
        "error": None,
        "note": DISCLAIMER,
    }


def _minimal_trace(result: CheckResult) -> dict[str, Any] | None:
    f = result.failure
    if f is None:
        return None
    c = result.contract
    ex = explain(c, f.checked)
    return {
        "phase": f.phase,
        "cycles": len(f.trace),
        "first_mismatch": f.checked.first_mismatch,
        "start": {"preamble": list(f.preamble), "model": f.checked.start},
        "trace": f.trace.to_json(),
        "rows": [r.to_json() for r in f.checked.rows],
        "ports": [p.name for p in c.ports],
        "violated": None
        if ex is None
        else {"rule": ex.rule, "detail": ex.detail, "key": ex.key, "cycle": ex.cycle, "port": ex.port},
        "note": f.note,
        "timing_hint": f.timing_hint,
        "replay_file": None if result.replay_file is None else str(result.replay_file),
        "replay_command": result.replay_command,
        "waveform": None if result.waveform_file is None else str(result.waveform_file),
        "reproduced_by_replay": result.reproduced,
    }


def report_dict(result: CheckResult | MarchRunResult) -> dict[str, Any]:
    """The JSON report of a job: the common fields, then the job's own (a check's ``minimal_trace``;
    a March run's test, geometry, ports and ``first_failure``)."""
    if isinstance(result, MarchRunResult):
        out = _common(result, "march run")
        out.update(march_fields(result))
        out.update(operations=result.operations, cycles=result.cycles)
        return out
    out = _common(result, "check")
    out.update(
        operations=result.operations,
        cycles=result.cycles,
        minimal_trace=_minimal_trace(result),
        error=result.error,
        coverage=None if result.coverage is None else result.coverage.to_json(),
    )
    return out


def error_dict(
    contract: str | None, message: str, seed: int | None = None, *, job: str = "check", **fields: Any
) -> dict[str, Any]:
    """The JSON report when a job could not run (bad input or tool failure): the common fields that
    are known, ``error`` set, and the job's own result fields empty (``fields`` adds known ones)."""
    out: dict[str, Any] = {
        "verdict": "error",
        "tool": "memcheck",
        "version": __version__,
        "job": job,
        "contract": contract,
        "seed": seed,
        "phases": [],
        "operations": 0,
        "cycles": 0,
        "minimal_trace": None,
        "first_failure": None,
        "coverage": None,
        "error": message,
        "note": DISCLAIMER,
    }
    out.update(fields)
    return out


def write_json(path: str | Path, report: dict[str, Any]) -> Path:
    return write_text_atomic(path, json.dumps(report, indent=2) + "\n")


def junit_xml(report: dict[str, Any], details: str = "") -> str:
    """JUnit XML: one test case per phase (or one erroring case), failure text = the human report."""
    name = report.get("contract") or "contract"
    suite = ET.Element("testsuite", name=f"memcheck {name}")
    phases = report.get("phases") or []
    failures = errors = skipped = 0
    if report["verdict"] == "error":
        case = ET.SubElement(suite, "testcase", classname="memcheck", name="check", time="0")
        err = ET.SubElement(case, "error", message=str(report.get("error") or "error"))
        err.text = str(report.get("error") or "")
        errors = 1
    for p in phases:
        case = ET.SubElement(
            suite,
            "testcase",
            classname=f"memcheck.{Path(str(name)).stem}",
            name=p["name"],
            time=f"{p.get('seconds', 0):.3f}",
        )
        if p["verdict"] == "fail":
            fail = ET.SubElement(case, "failure", message=p.get("detail") or "read data differs from the contract")
            fail.text = details
            failures += 1
        elif p["verdict"] == "skipped":
            ET.SubElement(case, "skipped", message=p.get("detail") or "skipped")
            skipped += 1
    suite.set("tests", str(max(1, len(phases)) if report["verdict"] != "error" else len(phases) + 1))
    suite.set("failures", str(failures))
    suite.set("errors", str(errors))
    suite.set("skipped", str(skipped))
    suite.set("time", f"{report.get('seconds', 0) or 0:.3f}")
    props = ET.SubElement(suite, "properties")
    ET.SubElement(props, "property", name="seed", value=str(report.get("seed")))
    ET.SubElement(props, "property", name="note", value=DISCLAIMER)
    suites = ET.Element("testsuites")
    suites.append(suite)
    ET.indent(suites)
    return '<?xml version="1.0" encoding="utf-8"?>\n' + ET.tostring(suites, encoding="unicode") + "\n"


def write_junit(path: str | Path, report: dict[str, Any], details: str = "") -> Path:
    return write_text_atomic(path, junit_xml(report, details))


def write_reports(
    result: CheckResult | MarchRunResult,
    *,
    json_file: str | Path | None = None,
    junit_file: str | Path | None = None,
    text_file: str | Path | None = None,
) -> None:
    """Write the requested reports of a job, each atomically."""
    rep = report_dict(result)
    text = render_march_report(result) if isinstance(result, MarchRunResult) else render_report(result)
    if json_file is not None:
        write_json(json_file, rep)
    if junit_file is not None:
        write_junit(junit_file, rep, text)
    if text_file is not None:
        write_text_atomic(text_file, text + "\n")
