"""The backend that runs batches of cycles on the generated harness inside the simulator (cocotb).

Each batch crosses into the simulator once through ``cocotb.task.resume``: one stimulus file per
group of clocks in (and one of per-tick pins with several clocks), one capture file per group out, no
Python per cycle.
"""

from __future__ import annotations

import time
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np
from cocotb.task import resume

from memcheck.model_fast import Columns, limbs_to_ints
from memcheck.records import Settled
from memcheck.sim.checking.runner import Observations, Runner, observations_from_arrays
from memcheck.sim.checking.sequences import Segment
from memcheck.sim.checking.ticks import padding
from memcheck.sim.plumbing.words import TICK_FILE, HarnessLayout, after_file, cap_file, late_file, stim_file

STIM_FILE = stim_file(0)
CAP_FILE = cap_file(0)


class HarnessBackend:
    """Runs batches on the generated harness: stimulus files in, capture files out.

    Every segment starts at tick 0 of the tick timeline: a segment that is not a whole number of
    tick patterns is followed by quiet ticks (not observed) up to one (:func:`~memcheck.sim.checking.ticks.padding`).
    """

    def __init__(self, dut: Any, layout: HarnessLayout, workdir: Path) -> None:
        self.dut = dut
        self.layout = layout
        self.workdir = workdir
        self.batch_limit = layout.batch_limit
        self.go = 0
        self.dumping = False
        self.runner: Runner | None = None
        self.sim_cycles = 0
        self.sim_units = 0  # simulated time in harness units (for progress records)
        self.batches = 0
        self.batch_seconds = 0.0  # wall time of batches: files, the round trip and the simulator
        self.codec_seconds = 0.0  # building stimulus text and parsing captures
        self.record: Path | None = None  # bench/: keep every stimulus and capture file
        #: Replays: also record how the read data settled after each sample point (see harness.py);
        #: :attr:`settled` then holds, per observed row of the last :meth:`run`, per port, a Settled.
        self.watching = False
        self.settled: list[tuple[Settled | None, ...]] = []
        self._late: list[tuple[np.ndarray, np.ndarray, np.ndarray]] = []

    @property
    def sim_ns(self) -> float:
        return float(self.sim_units * self.layout.timing.unit_ns)

    def run(self, segments: Sequence[Segment], *, dump: bool = False) -> Observations:
        segs = [s for s in segments if len(s)]
        if not segs:
            return []
        contract = self.layout.contract
        parts: list[Columns] = []
        resets: list[np.ndarray] = []
        powers: list[np.ndarray] = []
        keep: list[np.ndarray] = []
        at = 0
        for s in segs:
            cycles = list(s.cycles) + padding(contract, len(s))
            parts.append(Columns.from_cycles(contract, cycles))
            resets.append(np.full(len(cycles), s.reset))
            state = np.zeros(len(cycles), dtype=np.int8)
            if s.power:
                state[: len(s)] = np.array([int(p) for p in s.power], dtype=np.int8)
            powers.append(state)
            keep.append(np.arange(at, at + len(s)))
            at += len(cycles)
        self._late = []
        value, defined = self.run_columns(
            Columns.concat(parts), reset=np.concatenate(resets), power=np.concatenate(powers), dump=dump
        )
        rows = np.concatenate(keep)
        if self.watching and self._late:
            self.settled = self._settled_rows(rows)
        return observations_from_arrays(contract, value[rows], defined[rows])

    def _settled_rows(self, rows: np.ndarray) -> list[tuple[Settled | None, ...]]:
        late_v = np.concatenate([v for v, _, _ in self._late])[rows]
        late_d = np.concatenate([d for _, d, _ in self._late])[rows]
        after = np.concatenate([a for _, _, a in self._late])[rows]
        unit = float(self.layout.timing.unit_ns)
        out: list[tuple[Settled | None, ...]] = []
        readable = [p.read_data is not None for p in self.layout.contract.ports]
        for k in range(len(rows)):
            row: list[Settled | None] = []
            for i, ok in enumerate(readable):
                if not ok:
                    row.append(None)
                    continue
                v = limbs_to_ints(late_v[k : k + 1, i])[0]
                d = limbs_to_ints(late_d[k : k + 1, i])[0]
                row.append(Settled(v, d, float(after[k, i]) * unit))
            out.append(tuple(row))
        return out

    def run_columns(
        self,
        cols: Columns,
        *,
        reset: bool | np.ndarray = False,
        power: np.ndarray | None = None,
        dump: bool = False,
    ) -> tuple[np.ndarray, np.ndarray]:
        """Run a trace given as columns from tick 0; returns the captured ``(value, defined)`` arrays."""
        n = len(cols)
        pad = padding(self.layout.contract, n)
        if pad:  # whole tick patterns only (several clocks)
            cols = Columns.concat([cols, Columns.from_cycles(self.layout.contract, pad)])
        total = len(cols)
        resets = np.zeros(total, dtype=bool)
        resets[:n] = np.broadcast_to(np.asarray(reset, dtype=bool), (n,))
        states = np.zeros(total, dtype=np.int8)
        if power is not None:
            states[:n] = power
        values: list[np.ndarray] = []
        defined: list[np.ndarray] = []
        for lo in range(0, total, self.batch_limit):
            hi = min(total, lo + self.batch_limit)
            v, d = self._run_batch(cols[lo:hi], resets[lo:hi], states[lo:hi], dump)
            values.append(v)
            defined.append(d)
        if not values:
            limbs = cols.data.shape[2]
            empty = np.zeros((0, cols.ports, limbs), dtype=np.uint64)
            return empty, empty.copy()
        return np.concatenate(values)[:n], np.concatenate(defined)[:n]

    def _run_batch(
        self, cols: Columns, resets: np.ndarray, states: np.ndarray, dump: bool
    ) -> tuple[np.ndarray, np.ndarray]:
        n = len(cols)
        if self.runner is not None:
            self.runner.before_batch(n)
        t0 = time.perf_counter()
        texts, tick, rows = self.layout.stim(cols, resets, states if states.any() else None)
        t1 = time.perf_counter()
        for g, text in enumerate(texts):
            (self.workdir / stim_file(g)).write_bytes(text)
        if tick is not None:
            (self.workdir / TICK_FILE).write_bytes(tick)
        resume(self._batch)([len(r) for r in rows], n if tick is not None else 0, dump)
        caps = [(self.workdir / cap_file(g)).read_bytes() for g in range(len(texts))]
        t2 = time.perf_counter()
        v, d = self.layout.decode(caps, rows, n)
        if self.watching:
            self._late.append(self._read_late(rows, n))
        self.batch_seconds += t2 - t1
        self.codec_seconds += t1 - t0 + time.perf_counter() - t2
        self.sim_cycles += n
        self.sim_units += self.layout.timing.lead + self.layout.timing.hyper * (n // self.layout.hyper)
        self.batches += 1
        if self.record is not None:
            with (self.record / STIM_FILE).open("ab") as fb:
                fb.write(texts[0])
            with (self.record / CAP_FILE).open("ab") as fb:
                fb.write(caps[0])
        return v, d

    def _read_late(self, rows: list[np.ndarray], n: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Replays: the settled read data and when it settled, per tick and port."""
        lates = [(self.workdir / late_file(g)).read_bytes() for g in range(len(rows))]
        lv, ld = self.layout.decode(lates, rows, n)
        after = np.zeros((n, len(self.layout.contract.ports)), dtype=np.int64)
        for g, (grp, r) in enumerate(zip(self.layout.timing.groups, rows, strict=True)):
            text = (self.workdir / after_file(g)).read_text(encoding="ascii")
            units = [int(x, 16) for x in text.split() if not x.startswith("//") and "x" not in x.lower()]
            if len(units) == len(r):
                for i in grp.ports:
                    after[r, i] = units
        return lv, ld, after

    async def _batch(self, counts: list[int], ticks: int, dump: bool) -> None:
        self.dut.mc_watch.value = int(self.watching)
        if dump and not self.dumping:
            self.dut.mc_dump.value = 1
            self.dumping = True
        for g, count in enumerate(counts):
            getattr(self.dut, f"mc_count_{g}").value = count
        if self.layout.tick is not None:
            self.dut.mc_tcount.value = ticks
        self.go ^= 1
        self.dut.mc_go.value = self.go
        await self.dut.mc_done.value_change
