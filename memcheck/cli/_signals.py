"""SIGTERM treated like Ctrl-C while a command writes a file, so atomic writers remove their
temporary file on either (``kill`` from a job scheduler included)."""

from __future__ import annotations

import signal
import threading
from collections.abc import Iterator
from contextlib import contextmanager
from types import FrameType


def _interrupt(signum: int, frame: FrameType | None) -> None:
    raise KeyboardInterrupt(f"signal {signum}")


@contextmanager
def terminate_as_interrupt() -> Iterator[None]:
    """Inside the block SIGTERM raises KeyboardInterrupt (main thread only; elsewhere a no-op)."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    previous = signal.signal(signal.SIGTERM, _interrupt)
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, previous)
