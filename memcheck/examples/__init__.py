"""The example wrappers shipped with memcheck: invented SRAM wrappers with their contracts.

``index.toml`` lists each example with its contract and expected verdict (see README.md here).
They ship inside the package, so ``memcheck demo`` works from a wheel install as well as from a
source checkout.
"""

from __future__ import annotations

from importlib.resources import files
from pathlib import Path

from memcheck.errors import MemcheckError


def examples_dir() -> Path:
    """The folder holding the example wrappers and their ``index.toml``.

    Raises
    ------
    MemcheckError
        When the installed package lacks its examples (a broken or stripped install).
    """
    root = Path(str(files(__name__)))
    if not (root / "index.toml").is_file():
        raise MemcheckError(
            f"the example wrappers are missing from this memcheck install ({root}/index.toml); reinstall memcheck"
        )
    return root
