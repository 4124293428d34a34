"""A Python stand-in for wrapper RTL, so the checking engine can be tested without a simulator.

``PyRam`` behaves like a single-port, read-latency-1 SRAM wrapper with lane enables, old data on a
read-during-write and read data that holds while idle; each ``bug`` switches on one realistic
wrapper mistake. It answers like the generated harness does: per cycle, the read data sampled just
before the rising edge, with X as undefined bits.
"""

from __future__ import annotations

from collections.abc import Sequence

from memcheck.contract import Contract
from memcheck.ops import OpKind
from memcheck.records import Observed
from memcheck.sim.checking.sequences import Segment

BUGS = ("none", "swap_lanes", "stale_bypass", "late_data", "no_lane_mask", "decay", "race", "posted_write")
#: Bugs that are not a fixed function of the inputs: "race" corrupts one read, once per PyRam, the way
#: a same-edge race in RTL shows under one process order and not under another.
ONE_OFF_BUGS = ("race",)


def contract(words: int = 16, width: int = 8, lane_width: int = 4) -> Contract:
    return Contract.simple(
        words, width, lane_width=lane_width, read_latency=1, read_during_write="old", idle_read_data="keep"
    )


class PyRam:
    """A tiny cycle-based wrapper model; ``bug`` picks a deliberate defect (see BUGS)."""

    batch_limit = 64  # small, so multi-batch paths get exercised

    def __init__(self, c: Contract, bug: str = "none") -> None:
        assert bug in BUGS
        self.c = c
        self.bug = bug
        m = c.memory
        self.mask = m.word_mask
        self.mem: dict[int, int] = {}
        self.rdata: tuple[int, int] = (0, 0)  # (value, defined)
        self.prev: tuple[int, int] = (0, 0)
        self.bypass: tuple[int, int] | None = None  # (address, data) of the last full write
        self.batches = 0
        self.now = 0
        self.written_at: dict[int, int] = {}  # "decay": a word not rewritten for 12 cycles loses bit 0
        # "posted_write": writes wait in a two-entry buffer (reads see through it); when a third write
        # arrives the oldest entry is committed with the address of the newest (a pointer off by one),
        # so a word shows its old contents once two more writes have followed the write to it.
        self.posted: list[tuple[int, int, int]] = []  # (address, data, bits), oldest first
        self.raced = False  # "race": the first read right after a lane write to its address, once, is wrong
        self.lane_write_at: dict[int, int] = {}

    def _bits(self, lanes: int | None) -> int:
        m = self.c.memory
        if lanes is None:
            return self.mask
        if self.bug == "swap_lanes" and m.lanes == 2:
            lanes = ((lanes & 1) << 1) | ((lanes >> 1) & 1)
        if self.bug == "no_lane_mask" and lanes:
            return self.mask
        return m.lane_bits(lanes)

    def _edge(self, op_kind: OpKind, address: int, data: int, lanes: int | None) -> None:
        m = self.c.memory
        new_rdata = self.rdata
        if op_kind != OpKind.IDLE:
            if address < m.words and address in self.mem:
                word = self._through_buffer(address)
                if self.bug == "stale_bypass" and self.bypass is not None and self.bypass[0] == address:
                    word = self.bypass[1]
                if self.bug == "decay" and self.now - self.written_at.get(address, self.now) > 12:
                    word ^= 1
                if self.bug == "race" and not self.raced and self.lane_write_at.get(address) == self.now - 1:
                    word ^= 1
                    self.raced = True
                new_rdata = (word, self.mask)
            else:
                new_rdata = (0, 0)
        if op_kind == OpKind.WRITE and address < m.words and self.bug == "posted_write":
            self._post(address, data, self._bits(lanes))
        elif op_kind == OpKind.WRITE and address < m.words:
            bits = self._bits(lanes)
            old = self.mem.get(address, 0)
            self.mem[address] = (old & ~bits) | (data & bits)
            self.written_at[address] = self.now
            if lanes is not None:
                self.lane_write_at[address] = self.now
            if bits == self.mask:
                self.bypass = (address, data)
        self.prev = self.rdata
        self.rdata = new_rdata

    def _through_buffer(self, address: int) -> int:
        word = self.mem[address]
        for a, d, bits in self.posted:
            if a == address:
                word = (word & ~bits) | (d & bits)
        return word

    def _post(self, address: int, data: int, bits: int) -> None:
        if len(self.posted) == 2:
            _, d, b = self.posted.pop(0)
            to = self.posted[-1][0]  # the bug: the newest entry's address
            self.mem[to] = (self.mem.get(to, 0) & ~b) | (d & b)
        self.mem.setdefault(address, 0)
        self.posted.append((address, data, bits))

    def run(self, segments: Sequence[Segment], *, dump: bool = False) -> list[tuple[Observed | None, ...]]:
        out: list[tuple[Observed | None, ...]] = []
        n = sum(len(s) for s in segments)
        self.batches += (n + self.batch_limit - 1) // self.batch_limit
        for s in segments:
            for cyc in s.cycles:
                shown = self.prev if self.bug == "late_data" else self.rdata
                out.append((Observed(shown[0], shown[1]),))
                op = cyc[0]
                self._edge(op.kind, op.address, op.data, op.lanes)
                self.now += 1
                if s.reset:
                    self.rdata = (0, 0)
        return out
