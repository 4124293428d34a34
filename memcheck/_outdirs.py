"""One output folder per contract when several run at once (``memcheck check A B``, the pytest plugin).

Two contracts never share a folder, so their builds, replay files and waveforms never collide,
whether they run in worker processes of one command or in pytest-xdist workers. Pure functions:
no file is touched here.
"""

from __future__ import annotations

from collections.abc import Sequence
from pathlib import Path, PurePath


def contract_name(path: PurePath) -> str:
    """The name ``memcheck check`` gives a contract's output folder: the file stem, or the folder
    name for a file called ``contract.toml``."""
    return path.stem if path.stem != "contract" else (path.parent.name or "contract")


def path_folder(path: Path, root: Path, base: Path) -> Path:
    """``base`` + the contract's path below ``root`` (``rtl/fifo/contract.toml`` -> ``base/rtl/fifo``,
    ``rtl/fifo.toml`` -> ``base/rtl/fifo``): distinct for distinct files. A contract outside ``root``
    keeps only its own name under ``base/_outside``."""
    try:
        rel = path.resolve().relative_to(root.resolve())
    except ValueError:
        return base / "_outside" / contract_name(path)
    folder = rel.parent if rel.stem == "contract" else rel.with_suffix("")
    return base / folder if folder.parts else base / contract_name(path.resolve())


def distinct_out_dirs(paths: Sequence[Path], base: Path) -> list[Path]:
    """An output folder per contract, in the order given: ``base/<name>`` as for one contract; a name
    several files share gets more of each of those files' path, from the end, until the folders differ.

    Raises
    ------
    ValueError
        When the same file is named twice.
    """
    resolved = [p.resolve() for p in paths]
    if len(set(resolved)) != len(resolved):
        raise ValueError("the same contract file is named twice")
    names = [_tail(p, 1) for p in resolved]
    for depth in range(2, max((len(p.parts) for p in resolved), default=0) + 2):
        clashing = [i for i, n in enumerate(names) if names.count(n) > 1]
        if not clashing:
            break
        for i in clashing:
            names[i] = _tail(resolved[i], depth)
    return [base / n for n in names]


def _tail(path: Path, depth: int) -> str:
    """The contract's name, preceded by up to ``depth - 1`` folders above it, joined with ``-``."""
    name = contract_name(path)
    above = path.parent.parent.parts if path.stem == "contract" else path.parent.parts
    keep = [part for part in above[max(0, len(above) - depth + 1) :] if part != path.anchor] if depth > 1 else []
    return "-".join([*keep, name])
