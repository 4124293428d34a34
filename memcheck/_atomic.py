"""Atomic file writes: a report, export or replay file is either complete or absent, never half-written."""

from __future__ import annotations

import contextlib
import os
import tempfile
from collections.abc import Iterator
from pathlib import Path
from typing import IO


@contextlib.contextmanager
def open_atomic(path: str | Path) -> Iterator[IO[bytes]]:
    """Stream into a temporary file beside ``path``; ``os.replace`` it over ``path`` on success.

    On any error the temporary file is removed and ``path`` is left as it was. The file gets the
    ordinary permissions a plain ``open`` would give (``mkstemp`` alone makes it 0600).
    """
    target = Path(path)
    target.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=target.parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            yield fh
            fh.flush()
            os.fsync(fh.fileno())
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)
        os.replace(tmp, target)
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        raise


def write_bytes_atomic(path: str | Path, data: bytes) -> Path:
    """Write ``data`` to ``path`` atomically."""
    with open_atomic(path) as fh:
        fh.write(data)
    return Path(path)


def write_text_atomic(path: str | Path, text: str) -> Path:
    """Text version of :func:`write_bytes_atomic` (UTF-8)."""
    return write_bytes_atomic(path, text.encode("utf-8"))
