"""Shared test settings: Hypothesis profiles (CI is derandomised and database-free)."""

from __future__ import annotations

import os
import shutil

import pytest
from hypothesis import HealthCheck, settings

settings.register_profile(
    "ci",
    derandomize=True,
    database=None,
    deadline=None,
    print_blob=True,
    suppress_health_check=[HealthCheck.too_slow],
)
settings.register_profile("dev", deadline=None, suppress_health_check=[HealthCheck.too_slow])
settings.load_profile("ci" if os.environ.get("CI") else "dev")


def pytest_collection_modifyitems(config: pytest.Config, items: list[pytest.Item]) -> None:
    """Tests marked ``icarus`` need iverilog/vvp; skip them with a reason when they are missing."""
    if shutil.which("iverilog") and shutil.which("vvp"):
        return
    skip = pytest.mark.skip(reason="Icarus Verilog (iverilog, vvp) is not installed")
    for item in items:
        if "icarus" in item.keywords:
            item.add_marker(skip)
