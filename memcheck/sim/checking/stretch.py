"""The failing stretch of a phase and the first candidates shrinking tries on it (numpy, no simulator).

A *stretch* is the phase's cycles up to and including the cycle where read data first differs (the
last row), as :class:`~memcheck.model_fast.Columns`. For a long phase (the sweep of a big memory)
the stretch keeps only the rows that matter to the first candidates: every row that acts on an
address the failing read touched, and the last rows before the difference (:func:`sweep_stretch`).

First candidates (:func:`first_candidates`), each a trace run on its own from the canonical state:

* *focus*: the rows acting on the failing read's addresses, wherever they are in the stretch (the
  writes that put the word there, possibly thousands of cycles earlier), plus the last k rows before
  the difference, for a few k;
* *windows*: the last w rows, w = 1, 2, 4, ... up to ``window_max``.
"""

from __future__ import annotations

from collections import deque

import numpy as np

from memcheck.contract import Contract
from memcheck.model_fast import READ, Columns
from memcheck.sim.checking.schedule import MarchSchedule
from memcheck.sim.checking.ticks import hyper_ticks

#: Rows before the difference added to the focus rows.
FOCUS_TAILS = (2, 4, 8, 16, 64, 256)


def _quiet_row(contract: Contract) -> Columns:
    return Columns.quiet(contract, 1)


def _rows(cols: Columns, mask: np.ndarray) -> Columns:
    """The rows of ``cols`` where ``mask`` holds."""
    return Columns(cols.kind[mask], cols.address[mask], cols.data[mask], cols.lanes[mask], cols.lanes_given[mask])


def acting(contract: Contract, cols: Columns) -> np.ndarray:
    """(T, P) bool: the port does something other than its quiet operation (kind or address)."""
    q = _quiet_row(contract)
    out: np.ndarray = (cols.kind != q.kind[0]) | (cols.address != q.address[0])
    return out


def failing_addresses(contract: Contract, cols: Columns, failing: int) -> set[int]:
    """Addresses the read data shown at row ``failing`` may come from: every acting operation of the
    last ``read_latency + 1`` rows, and each reading port's last read before them (held read data)."""
    lat = contract.memory.read_latency
    act = acting(contract, cols)
    lo = max(0, failing - lat - 1)
    near = cols.address[lo : failing + 1][act[lo : failing + 1]]
    out = {int(a) for a in near.tolist()}
    for p in range(cols.ports):
        reads = np.flatnonzero((cols.kind[: lo + 1, p] == READ) & act[: lo + 1, p])
        if len(reads):
            out.add(int(cols.address[reads[-1], p]))
    return out


def touching(contract: Contract, cols: Columns, addresses: set[int]) -> np.ndarray:
    """(T,) bool: rows where some port acts on one of ``addresses``."""
    if not addresses:
        return np.zeros(len(cols), dtype=bool)
    hit = np.isin(cols.address, np.array(sorted(addresses), dtype=np.int64)) & acting(contract, cols)
    out: np.ndarray = hit.any(axis=1)
    return out


def first_candidates(contract: Contract, stretch: Columns, failing: int, window_max: int) -> list[Columns]:
    """Focus candidates and windows ending at row ``failing`` (see the module docstring), distinct."""
    cols = stretch[: failing + 1]
    n = len(cols)
    hit = touching(contract, cols, failing_addresses(contract, cols, failing))
    out: list[Columns] = []
    seen: set[tuple[int, int]] = set()  # (rows kept, first tail row): candidates differ by these
    # Several clocks: rows are ticks of a fixed edge pattern, so only windows that start on the
    # pattern are tried (a subset of rows would shift every later tick's edges).
    hyper = hyper_ticks(contract)
    for k in FOCUS_TAILS if contract.lockstep else ():
        k = min(k, window_max, n)
        mask = hit.copy()
        mask[n - k :] = True
        key = (int(mask.sum()), n - k)
        if key not in seen:
            seen.add(key)
            out.append(_rows(cols, mask))
    w = 1
    while w <= min(n, window_max):
        out.append(cols[(n - w) // hyper * hyper :])
        if w == n:
            break
        w = min(2 * w, n)
    return out


def sweep_stretch(schedule: MarchSchedule, at: int, keep: int) -> Columns:
    """The stretch of a sweep failing at cycle ``at``: the last ``keep`` cycles up to ``at``, and before
    them only the cycles acting on the failing read's addresses (two passes over the schedule, one
    stream chunk at a time: memory stays bounded whatever the sweep's length)."""
    c = schedule.contract
    lo = max(0, at + 1 - keep)
    tail: deque[Columns] = deque()
    pos = 0
    for piece in schedule.pieces():
        cols = piece.cols
        if pos + len(cols) > lo:
            tail.append(cols[max(0, lo - pos) : max(0, at + 1 - pos)])
        pos += len(cols)
        if pos > at:
            break
    window = Columns.concat(list(tail)) if tail else Columns.quiet(c, 0)
    addresses = failing_addresses(c, window, len(window) - 1)
    before: list[Columns] = []
    pos = 0
    for piece in schedule.pieces():
        if pos >= lo:
            break
        cols = piece.cols[: max(0, lo - pos)]
        before.append(_rows(cols, touching(c, cols, addresses)))
        pos += len(piece.cols)
    return Columns.concat([*before, window])
