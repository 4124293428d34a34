"""Reports of every job on RTL (records of memcheck.records): a text table a human reads at a glance, JSON, JUnit XML.

Every report says that verdicts cover the modelled behaviour only, not sign-off.
"""

from memcheck.report.explain import Explanation, explain
from memcheck.report.json_report import error_dict, junit_xml, report_dict, write_json, write_junit, write_reports
from memcheck.report.march_report import march_failure_dict, render_march_report
from memcheck.report.text import DISCLAIMER, render_failure, render_report, render_table

__all__ = [
    "DISCLAIMER",
    "Explanation",
    "error_dict",
    "explain",
    "junit_xml",
    "march_failure_dict",
    "render_failure",
    "render_march_report",
    "render_report",
    "render_table",
    "report_dict",
    "write_json",
    "write_junit",
    "write_reports",
]
