"""The harness's stimulus and capture files for every clock: one word layout per group of clocks.

Ports whose clocks have the same edges share a *group* (:class:`memcheck.sim.checking.ticks.ClockGroup`)
and one stimulus/capture word per edge of that group (:class:`~memcheck.sim.plumbing.layout.Layout`
restricted to its ports). A batch of ticks becomes one stimulus file per group (the rows of the ticks
at which the group has an edge) and, for a contract with several clocks and a reset or power pins, one
file of per-tick words with the delay before those pins change. For one clock this is exactly the
single stimulus and capture word of before (reset and power pins ride in it).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from memcheck.contract import Contract
from memcheck.model_fast import Columns, limbs_of
from memcheck.sim.checking.ticks import HarnessTiming, edges, harness_timing, hyper_ticks
from memcheck.sim.plumbing.layout import BATCH_CYCLES, Layout

#: Bits of the delay field of a per-tick word (harness time units).
DELAY_BITS = 48


def stim_file(group: int) -> str:
    """Stimulus file of one group (the first keeps the historical name)."""
    return "stim.hex" if group == 0 else f"stim{group}.hex"


def cap_file(group: int) -> str:
    return "cap.bin" if group == 0 else f"cap{group}.bin"


def late_file(group: int) -> str:
    """Replays: the read data of each row as it last changed after the sample point."""
    return f"late{group}.bin"


def after_file(group: int) -> str:
    """Replays: when (harness units after the sample point) that last change came."""
    return f"after{group}.hex"


TICK_FILE = "tick.hex"


@dataclass(frozen=True)
class HarnessLayout:
    """Word layouts of every group and of the per-tick pins, with the harness's timing."""

    contract: Contract
    timing: HarnessTiming
    words: tuple[Layout, ...]
    tick: Layout | None
    hyper: int  # ticks per repeating pattern; batches and segments are whole multiples of it

    @classmethod
    def build(cls, contract: Contract, widths: Mapping[str, int]) -> HarnessLayout:
        timing = harness_timing(contract)
        lockstep = timing.lockstep
        words = tuple(
            Layout.build(contract, widths, g.ports, tick=lockstep and k == 0) for k, g in enumerate(timing.groups)
        )
        tick = None
        if not lockstep and (contract.reset is not None or contract.power is not None):
            tick = Layout.build(contract, widths, (), tick=True, delay_bits=DELAY_BITS)
        return cls(contract, timing, words, tick, hyper_ticks(contract))

    @property
    def batch_limit(self) -> int:
        """Ticks per batch: a whole number of patterns."""
        return max(BATCH_CYCLES // self.hyper, 1) * self.hyper

    @property
    def ties(self) -> tuple[tuple[str, int, int], ...]:
        return self.words[0].ties

    def rows(self, n: int) -> list[np.ndarray]:
        """Per group, the ticks of a batch of ``n`` ticks (from a pattern start) at which it has an edge."""
        if self.timing.lockstep:
            return [np.arange(n)]
        mask = edges(self.contract, n)
        return [np.flatnonzero(mask[:, g.ports[0]]) for g in self.timing.groups]

    def stim(
        self, cols: Columns, reset: np.ndarray, power: np.ndarray | None = None
    ) -> tuple[list[bytes], bytes | None, list[np.ndarray]]:
        """One batch: per group its stimulus text, the per-tick text (or None), and per group its rows."""
        rows = self.rows(len(cols))
        if self.timing.lockstep:
            return [self.words[0].stim_bytes(cols, reset, power)], None, rows
        texts = [w.stim_bytes(_take(cols, r)) for w, r in zip(self.words, rows, strict=True)]
        tick = None
        if self.tick is not None:
            delay = np.array(self.timing.tick_apply_delays(0, len(cols)), dtype=np.uint64)
            tick = self.tick.stim_bytes(cols, reset, power, delay)
        return texts, tick, rows

    def decode(self, caps: Sequence[bytes], rows: Sequence[np.ndarray], n: int) -> tuple[np.ndarray, np.ndarray]:
        """Captured read data of every group back on the ticks: ``(value, defined)`` (n, ports, limbs)."""
        limbs = limbs_of(self.contract.memory.width)
        if self.timing.lockstep:
            return self.words[0].decode_arrays(caps[0], n)
        value = np.zeros((n, len(self.contract.ports), limbs), dtype=np.uint64)
        defined = np.zeros_like(value)
        for w, g, data, r in zip(self.words, self.timing.groups, caps, rows, strict=True):
            v, d = w.decode_arrays(data, len(r))
            ports = np.array(g.ports, dtype=np.int64)
            value[np.ix_(r, ports)] = v[:, ports]
            defined[np.ix_(r, ports)] = d[:, ports]
        return value, defined


def _take(cols: Columns, rows: np.ndarray) -> Columns:
    return Columns(cols.kind[rows], cols.address[rows], cols.data[rows], cols.lanes[rows], cols.lanes_given[rows])
