"""Reports of several contracts checked in one command (``memcheck check A.toml B.toml ...``).

Each contract keeps the per-job JSON layout of :func:`memcheck.report.report_dict` (or
:func:`memcheck.report.error_dict`); the JSON report wraps them in one object with the worst
verdict, and the JUnit XML has one test case per contract, its failure text the human report.
"""

from __future__ import annotations

import xml.etree.ElementTree as ET
from collections.abc import Sequence
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from memcheck import __version__
from memcheck._atomic import write_text_atomic
from memcheck._outdirs import contract_name
from memcheck.report.text import DISCLAIMER

#: Exit codes of the check command by verdict; several contracts exit with the worst.
EXIT_BY_VERDICT = {"pass": 0, "fail": 1, "error": 2}


@dataclass(frozen=True)
class ContractOutcome:
    """One contract's result in a many-contract run, as plain data (it crosses process boundaries).

    ``report`` is the per-job JSON report, ``text`` the human report (or the error paragraph),
    ``trace_cycles`` the length of the minimal failing trace (None without a failure)."""

    contract: str
    verdict: str
    seconds: float
    trace_cycles: int | None
    report: dict[str, Any]
    text: str

    @property
    def exit_code(self) -> int:
        return EXIT_BY_VERDICT[self.verdict]


def worst_verdict(outcomes: Sequence[ContractOutcome]) -> str:
    """ "error" over "fail" over "pass" ("pass" for no contract at all)."""
    return max((o.verdict for o in outcomes), key=EXIT_BY_VERDICT.__getitem__, default="pass")


def many_report_dict(outcomes: Sequence[ContractOutcome], seed: int, seconds: float) -> dict[str, Any]:
    """The JSON report of a many-contract run: the worst verdict, the seed, and ``contracts``, one
    per-job report each, in the order the contracts were named."""
    return {
        "verdict": worst_verdict(outcomes),
        "tool": "memcheck",
        "version": __version__,
        "job": "check",
        "seed": seed,
        "seconds": round(seconds, 3),
        "counts": {v: sum(o.verdict == v for o in outcomes) for v in EXIT_BY_VERDICT},
        "contracts": [o.report for o in outcomes],
        "note": DISCLAIMER,
    }


def many_junit_xml(outcomes: Sequence[ContractOutcome], seed: int, seconds: float) -> str:
    """JUnit XML with one test case per contract (name: the contract path as given)."""
    suite = ET.Element("testsuite", name="memcheck check")
    for o in outcomes:
        case = ET.SubElement(
            suite,
            "testcase",
            classname=f"memcheck.{contract_name(Path(o.contract))}",
            name=o.contract,
            time=f"{o.seconds:.3f}",
        )
        first = o.text.strip().splitlines()[0] if o.text.strip() else o.verdict
        if o.verdict == "fail":
            ET.SubElement(case, "failure", message=first).text = o.text
        elif o.verdict == "error":
            ET.SubElement(case, "error", message=first).text = o.text
    suite.set("tests", str(len(outcomes)))
    suite.set("failures", str(sum(o.verdict == "fail" for o in outcomes)))
    suite.set("errors", str(sum(o.verdict == "error" for o in outcomes)))
    suite.set("skipped", "0")
    suite.set("time", f"{seconds:.3f}")
    props = ET.SubElement(suite, "properties")
    ET.SubElement(props, "property", name="seed", value=str(seed))
    ET.SubElement(props, "property", name="note", value=DISCLAIMER)
    suites = ET.Element("testsuites")
    suites.append(suite)
    ET.indent(suites)
    return '<?xml version="1.0" encoding="utf-8"?>\n' + ET.tostring(suites, encoding="unicode") + "\n"


def write_many_reports(
    outcomes: Sequence[ContractOutcome],
    seed: int,
    seconds: float,
    *,
    json_file: str | Path | None = None,
    junit_file: str | Path | None = None,
) -> None:
    """Write the requested reports of a many-contract run, each atomically."""
    import json

    if json_file is not None:
        write_text_atomic(json_file, json.dumps(many_report_dict(outcomes, seed, seconds), indent=2) + "\n")
    if junit_file is not None:
        write_text_atomic(junit_file, many_junit_xml(outcomes, seed, seconds))
