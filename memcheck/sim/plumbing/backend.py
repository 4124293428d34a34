"""The backend that runs batches of cycles on the generated harness inside the simulator (cocotb).

Each batch crosses into the simulator once through ``cocotb.task.resume``: one stimulus file in,
one capture file out, no Python per cycle.
"""

from __future__ import annotations

import time
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np
from cocotb.task import resume

from memcheck.model_fast import Columns
from memcheck.sim.checking.runner import Observations, Runner, observations_from_arrays
from memcheck.sim.checking.sequences import Segment
from memcheck.sim.plumbing.harness import CAP_FILE, STIM_FILE
from memcheck.sim.plumbing.layout import BATCH_CYCLES, Layout


class HarnessBackend:
    """Runs batches on the generated harness: one stimulus file in, one capture file out."""

    batch_limit = BATCH_CYCLES

    def __init__(self, dut: Any, layout: Layout, workdir: Path) -> None:
        self.dut = dut
        self.layout = layout
        self.stim = workdir / STIM_FILE
        self.cap = workdir / CAP_FILE
        self.go = 0
        self.dumping = False
        self.runner: Runner | None = None
        self.sim_cycles = 0
        self.batches = 0
        self.batch_seconds = 0.0  # wall time of batches: files, the round trip and the simulator
        self.codec_seconds = 0.0  # building stimulus text and parsing captures
        self.record: Path | None = None  # bench/: keep every stimulus and capture file

    def run(self, segments: Sequence[Segment], *, dump: bool = False) -> Observations:
        segs = [s for s in segments if len(s)]
        if not segs:
            return []
        contract = self.layout.contract
        cols = Columns.concat([Columns.from_cycles(contract, s.cycles) for s in segs])
        reset = np.concatenate([np.full(len(s), s.reset) for s in segs])
        value, defined = self.run_columns(cols, reset=reset, dump=dump)
        return observations_from_arrays(contract, value, defined)

    def run_columns(
        self, cols: Columns, *, reset: bool | np.ndarray = False, dump: bool = False
    ) -> tuple[np.ndarray, np.ndarray]:
        """Run a trace given as columns; returns the captured ``(value, defined)`` arrays."""
        values: list[np.ndarray] = []
        defined: list[np.ndarray] = []
        n = len(cols)
        resets = np.broadcast_to(np.asarray(reset, dtype=bool), (n,))
        for lo in range(0, n, self.batch_limit):
            hi = min(n, lo + self.batch_limit)
            if self.runner is not None:
                self.runner.before_batch(hi - lo)
            t0 = time.perf_counter()
            text = self.layout.stim_bytes(cols[lo:hi], resets[lo:hi])
            t1 = time.perf_counter()
            self.stim.write_bytes(text)
            resume(self._batch)(hi - lo, dump)
            captured = self.cap.read_bytes()
            t2 = time.perf_counter()
            v, d = self.layout.decode_arrays(captured, hi - lo)
            self.batch_seconds += t2 - t1
            self.codec_seconds += t1 - t0 + time.perf_counter() - t2
            values.append(v)
            defined.append(d)
            self.sim_cycles += hi - lo
            self.batches += 1
            if self.record is not None:
                with (self.record / "stim.hex").open("ab") as fb:
                    fb.write(text)
                with (self.record / "cap.bin").open("ab") as fb:
                    fb.write(captured)
        if not values:
            limbs = cols.data.shape[2]
            empty = np.zeros((0, cols.ports, limbs), dtype=np.uint64)
            return empty, empty.copy()
        return np.concatenate(values), np.concatenate(defined)

    async def _batch(self, count: int, dump: bool) -> None:
        if dump and not self.dumping:
            self.dut.mc_dump.value = 1
            self.dumping = True
        self.dut.mc_count.value = count
        self.go ^= 1
        self.dut.mc_go.value = self.go
        await self.dut.mc_done.value_change
