"""Diagnosis of a failing memory: from a fail log to failing cells, a bitmap and ranked single faults.

See docs/diagnose.md for the fail-log format. Verdicts cover the modelled fault models only.
"""

from memcheck.diagnose.bitmap import plot_bitmap
from memcheck.diagnose.candidates import candidates
from memcheck.diagnose.core import DISCLAIMER, Diagnosis, Group, diagnose, failing_cells
from memcheck.diagnose.faillog import FailRow, fail_log, parse_fail_log, read_fail_log, write_fail_log

__all__ = [
    "DISCLAIMER",
    "Diagnosis",
    "FailRow",
    "Group",
    "candidates",
    "diagnose",
    "fail_log",
    "failing_cells",
    "parse_fail_log",
    "plot_bitmap",
    "read_fail_log",
    "write_fail_log",
]
