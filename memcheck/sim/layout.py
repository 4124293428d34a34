"""Bit layout of the stimulus and capture words exchanged with the generated harness.

One stimulus word per clock cycle carries every input pin (reset, then each port's enable, write
enable, address, write data and lane enables, least significant first); one capture word per cycle
carries every read-data pin as sampled just before the rising edge. Python writes the stimulus
words as a ``$readmemh`` file and reads the capture words back from a ``$writememb`` file, so a
whole batch of cycles costs one round trip, and X/Z bits survive the trip (binary, one character
per bit).
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from memcheck.contract import Contract, PortSpec
from memcheck.errors import InvalidOperation
from memcheck.ops import Cycle, PortOp

#: Cycles the harness holds per batch; longer runs are split into several batches.
BATCH_CYCLES = 8192


@dataclass(frozen=True, slots=True)
class Observed:
    """Read data as sampled: ``value`` bits, and ``defined`` with a 1 for every bit that was 0 or 1."""

    value: int
    defined: int

    def render(self, width: int) -> str:
        """Binary, MSB first, with 'x' for X/Z bits."""
        return "".join(
            ("1" if self.value >> b & 1 else "0") if self.defined >> b & 1 else "x"
            for b in range(width - 1, -1, -1)
        )


@dataclass(frozen=True, slots=True)
class Field:
    """A pin's place in a stimulus or capture word."""

    pin: str
    offset: int
    width: int
    active_low: bool = False

    @property
    def mask(self) -> int:
        return (1 << self.width) - 1


@dataclass(frozen=True)
class PortFields:
    """Where one port's pins sit in the stimulus word (inputs) and the capture word (read data)."""

    spec: PortSpec
    address: Field
    enable: Field | None = None
    write_enable: Field | None = None
    write_data: Field | None = None
    lane_enable: Field | None = None
    read_data: Field | None = None

    def inputs(self) -> tuple[Field, ...]:
        return tuple(f for f in (self.enable, self.write_enable, self.address, self.write_data,
                                 self.lane_enable) if f is not None)


@dataclass(frozen=True)
class Layout:
    """Stimulus/capture layout for one contract and the top module's actual pin widths."""

    contract: Contract
    ports: tuple[PortFields, ...]
    reset: Field | None
    stim_width: int
    cap_width: int

    @classmethod
    def build(cls, contract: Contract, widths: Mapping[str, int]) -> Layout:
        """Lay out every contract pin; ``widths`` are the top module's pin widths (see pins.py)."""
        stim = 0
        cap = 0

        def take(pin: str | None, width: int, low: bool = False) -> Field | None:
            nonlocal stim
            if pin is None:
                return None
            f = Field(pin, stim, width, low)
            stim += width
            return f

        reset = None
        if contract.reset is not None:
            reset = take(contract.reset.signal, 1, contract.reset.active_low)
        ports: list[PortFields] = []
        m = contract.memory
        for p in contract.ports:
            enable = take(p.enable, 1, p.enable in p.active_low)
            we = take(p.write_enable, 1, p.write_enable in p.active_low)
            address = take(p.address, widths.get(p.address, m.address_bits))
            assert address is not None
            wdata = take(p.write_data, m.width)
            lanes = take(p.lane_enable, m.lanes, p.lane_enable in p.active_low)
            rdata = None
            if p.read_data is not None:
                rdata = Field(p.read_data, cap, m.width)
                cap += m.width
            ports.append(PortFields(p, address, enable, we, wdata, lanes, rdata))
        return cls(contract, tuple(ports), reset, max(stim, 1), max(cap, 1))

    # -- stimulus ------------------------------------------------------------------------

    def encode(self, cycle: Sequence[PortOp], reset: bool = False) -> int:
        """The stimulus word for one cycle (active-low pins already inverted)."""
        word = 0
        if self.reset is not None:
            word |= (int(reset) ^ int(self.reset.active_low)) << self.reset.offset
        if len(cycle) != len(self.ports):
            raise InvalidOperation(f"a cycle needs one operation per port ({len(self.ports)}), got {len(cycle)}")
        for pf, op in zip(self.ports, cycle, strict=True):
            word |= self._encode_port(pf, op)
        return word

    def _encode_port(self, pf: PortFields, op: PortOp) -> int:
        garbage = op.kind == "idle" and (op.address or op.data or op.lanes is not None)
        clean_idle = op.kind == "idle" and not garbage
        word = 0

        def put(f: Field | None, value: int) -> None:
            nonlocal word
            if f is None:
                return
            if f.active_low:
                value = ~value
            word |= (value & f.mask) << f.offset

        put(pf.enable, int(op.kind != "idle"))
        # A disabled port with garbage on its pins also sees its write enable asserted: it must
        # ignore it (a wrapper that writes without its enable is a classic bug).
        put(pf.write_enable, int(op.kind == "write" or bool(garbage)))
        if op.address >> pf.address.width:
            raise InvalidOperation(
                f"port {pf.spec.name!r}: address {op.address:#x} does not fit the {pf.address.width}-bit "
                f"pin {pf.address.pin!r}"
            )
        put(pf.address, op.address)
        put(pf.write_data, op.data)
        if pf.lane_enable is not None:
            put(pf.lane_enable, 0 if clean_idle else (pf.lane_enable.mask if op.lanes is None else op.lanes))
        return word

    def idle_word(self) -> int:
        """Stimulus with every port disabled and clean pins (reset deasserted)."""
        cycle = tuple(PortOp("idle") if p.spec.can_idle else PortOp("read", 0) for p in self.ports)
        return self.encode(cycle)

    def stim_text(self, cycles: Sequence[Cycle], resets: Sequence[bool] | None = None) -> str:
        """``$readmemh`` text: one hex word per line."""
        if resets is None:
            return "".join(f"{self.encode(c):x}\n" for c in cycles)
        return "".join(f"{self.encode(c, r):x}\n" for c, r in zip(cycles, resets, strict=True))

    # -- capture -------------------------------------------------------------------------

    def decode(self, data: bytes, count: int) -> list[tuple[Observed | None, ...]]:
        """Parse ``$writememb`` output: per cycle, per port, the observed read data (None: no read data)."""
        body = _COMMENT.sub(b"", data)
        lines = body.split()
        if len(lines) != count or any(len(x) != self.cap_width for x in lines):
            raise ValueError(f"capture file has {len(lines)} lines of the wrong shape; expected {count}")
        if count == 0:
            return []
        arr = np.frombuffer(b"".join(lines), dtype=np.uint8).reshape(count, self.cap_width)
        per_port: list[list[Observed] | None] = []
        for pf in self.ports:
            f = pf.read_data
            if f is None:
                per_port.append(None)
                continue
            hi = self.cap_width - f.offset
            cols = arr[:, hi - f.width:hi]  # MSB first
            ones = _to_ints(cols == ord("1"))
            defined = _to_ints((cols == ord("0")) | (cols == ord("1")))
            per_port.append([Observed(v, d) for v, d in zip(ones, defined, strict=True)])
        return [tuple(None if col is None else col[i] for col in per_port) for i in range(count)]


_COMMENT = re.compile(rb"//[^\n]*")


def _to_ints(bits: np.ndarray) -> list[int]:
    """Rows of MSB-first booleans to Python ints."""
    n, w = bits.shape
    pad = (-w) % 8
    if pad:
        bits = np.concatenate([np.zeros((n, pad), dtype=bool), bits], axis=1)
    packed = np.packbits(bits, axis=1)
    return [int.from_bytes(row.tobytes(), "big") for row in packed]
