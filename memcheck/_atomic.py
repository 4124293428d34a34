"""Atomic file writes: a report or replay file is either complete or absent, never half-written."""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path


def write_bytes_atomic(path: str | Path, data: bytes) -> Path:
    """Write ``data`` to ``path`` via a temporary file in the same folder and ``os.replace``."""
    target = Path(path)
    target.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=target.parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, target)
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        raise
    return target


def write_text_atomic(path: str | Path, text: str) -> Path:
    """Text version of :func:`write_bytes_atomic` (UTF-8)."""
    return write_bytes_atomic(path, text.encode("utf-8"))
