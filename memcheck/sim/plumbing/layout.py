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

from memcheck._limbs import bits_to_limbs, limbs_to_bits
from memcheck.contract import Contract, PortSpec
from memcheck.errors import InvalidOperation
from memcheck.model_fast import IDLE, READ, WRITE, Columns, limbs_of
from memcheck.ops import Cycle, OpKind, PortOp, Power
from memcheck.records import Observed

#: Cycles the harness holds per batch; longer runs are split into several batches.
BATCH_CYCLES = 8192


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
    #: The port's place in the contract (a word of the harness may carry only some ports).
    index: int = 0
    enable: Field | None = None
    write_enable: Field | None = None
    write_data: Field | None = None
    lane_enable: Field | None = None
    read_data: Field | None = None

    def inputs(self) -> tuple[Field, ...]:
        return tuple(
            f
            for f in (self.enable, self.write_enable, self.address, self.write_data, self.lane_enable)
            if f is not None
        )


@dataclass(frozen=True)
class Layout:
    """Stimulus/capture layout for one contract and the top module's actual pin widths."""

    contract: Contract
    ports: tuple[PortFields, ...]
    reset: Field | None
    stim_width: int
    cap_width: int
    #: ``[rtl] tie`` pins held at a constant by the harness: (pin, width, value).
    ties: tuple[tuple[str, int, int], ...] = ()
    #: ``[power]`` pins sampled per tick: sleep, then shutdown (None where the contract has none).
    sleep: Field | None = None
    shutdown: Field | None = None
    #: Delay (harness time units) before the word's pins change: only in the word of tick-sampled pins
    #: (reset, power) of a contract with several clocks.
    delay: Field | None = None

    @classmethod
    def build(
        cls,
        contract: Contract,
        widths: Mapping[str, int],
        ports: Sequence[int] | None = None,
        *,
        tick: bool = True,
        delay_bits: int = 0,
    ) -> Layout:
        """Lay out contract pins; ``widths`` are the top module's pin widths (see pins.py).

        ``ports`` (indices, default all) are the ports this word carries; with ``tick`` it also carries the
        pins sampled per tick (reset, power); ``delay_bits`` > 0 puts a delay field first (the word of the
        tick-sampled pins of a contract with several clocks)."""
        stim = 0
        cap = 0

        def take(pin: str | None, width: int, low: bool = False) -> Field | None:
            nonlocal stim
            if pin is None:
                return None
            f = Field(pin, stim, width, low)
            stim += width
            return f

        delay = take("mc_delay", delay_bits) if delay_bits else None
        reset = sleep = shutdown = None
        if tick and contract.reset is not None:
            reset = take(contract.reset.signal, 1, contract.reset.active_low)
        power = contract.power
        if tick and power is not None:
            sleep = take(power.sleep, 1, power.sleep in power.active_low)
            shutdown = take(power.shutdown, 1, power.shutdown in power.active_low)
        fields: list[PortFields] = []
        m = contract.memory
        for index in range(len(contract.ports)) if ports is None else ports:
            p = contract.ports[index]
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
            fields.append(PortFields(p, address, index, enable, we, wdata, lanes, rdata))
        tie = contract.rtl.tie if contract.rtl is not None else {}
        ties = tuple((pin, widths.get(pin, 1), value) for pin, value in tie.items())
        return cls(contract, tuple(fields), reset, max(stim, 1), max(cap, 1), ties, sleep, shutdown, delay)

    def tick_inputs(self) -> tuple[Field, ...]:
        """The pins of this word sampled per tick (reset, sleep, shutdown)."""
        return tuple(f for f in (self.reset, self.sleep, self.shutdown) if f is not None)

    def inputs(self) -> tuple[Field, ...]:
        """Every input pin this word drives."""
        return self.tick_inputs() + tuple(f for pf in self.ports for f in pf.inputs())

    # -- stimulus ------------------------------------------------------------------------

    def encode(self, cycle: Sequence[PortOp], reset: bool = False, power: Power = Power.ON) -> int:
        """The stimulus word for one cycle (active-low pins already inverted)."""
        word = 0
        tick = ((self.reset, reset), (self.sleep, power == Power.SLEEP), (self.shutdown, power == Power.SHUTDOWN))
        for f, on in tick:
            if f is not None:
                word |= (int(on) ^ int(f.active_low)) << f.offset
        n = len(self.contract.ports)
        if len(cycle) != n:
            raise InvalidOperation(f"a cycle needs one operation per port ({n}), got {len(cycle)}")
        for pf in self.ports:
            word |= self._encode_port(pf, cycle[pf.index])
        return word

    def _encode_port(self, pf: PortFields, op: PortOp) -> int:
        garbage = op.kind == OpKind.IDLE and (op.address or op.data or op.lanes is not None)
        clean_idle = op.kind == OpKind.IDLE and not garbage
        word = 0

        def put(f: Field | None, value: int) -> None:
            nonlocal word
            if f is None:
                return
            if f.active_low:
                value = ~value
            word |= (value & f.mask) << f.offset

        put(pf.enable, int(op.kind != OpKind.IDLE))
        # A disabled port with garbage on its pins also sees its write enable asserted: it must
        # ignore it (a wrapper that writes without its enable is a classic bug).
        put(pf.write_enable, int(op.kind == OpKind.WRITE or bool(garbage)))
        if op.address >> pf.address.width:
            raise InvalidOperation(
                f"port {pf.spec.name!r}: address {op.address:#x} does not fit the {pf.address.width}-bit "
                f"pin {pf.address.pin!r}"
            )
        put(pf.address, op.address)
        put(pf.write_data, op.data)
        if pf.lane_enable is not None:
            # Without write_enable, a port writes when any lane is enabled: its reads enable none.
            quiet = clean_idle or (op.kind == OpKind.READ and pf.spec.any_lane_write)
            put(pf.lane_enable, 0 if quiet else (pf.lane_enable.mask if op.lanes is None else op.lanes))
        return word

    def idle_word(self) -> int:
        """Stimulus with every port disabled and clean pins (reset deasserted)."""
        cycle = tuple(PortOp(OpKind.IDLE) if p.can_idle else PortOp(OpKind.READ, 0) for p in self.contract.ports)
        return self.encode(cycle)

    def stim_text(self, cycles: Sequence[Cycle], resets: Sequence[bool] | None = None) -> str:
        """``$readmemh`` text: one hex word per line."""
        if resets is None:
            return "".join(f"{self.encode(c):x}\n" for c in cycles)
        return "".join(f"{self.encode(c, r):x}\n" for c, r in zip(cycles, resets, strict=True))

    def stim_bytes(
        self,
        cols: Columns,
        reset: bool | np.ndarray = False,
        power: np.ndarray | None = None,
        delay: np.ndarray | None = None,
    ) -> bytes:
        """``$readmemh`` text for a whole trace at once (numpy): the same words as :meth:`encode`,
        written with leading zeros. ``power``: (n,) :class:`Power` codes; ``delay``: (n,) delays for
        the delay field."""
        n = len(cols)
        nib = (self.stim_width + 3) // 4
        narrow = self.stim_width <= 64
        word = np.zeros(n, dtype=np.uint64)
        bits = np.zeros((0 if narrow else n, nib * 4), dtype=np.uint8)

        def put(f: Field | None, value: np.ndarray) -> None:
            # value: (n,) bool/int or (n, limbs) uint64, least significant limb first
            nonlocal word
            if f is None:
                return
            if value.ndim == 1:
                value = value.astype(np.uint64)[:, None]
            if narrow:  # the whole stimulus word fits 64 bits: shift and or
                v = value[:, 0] & np.uint64(f.mask)
                if f.active_low:
                    v = v ^ np.uint64(f.mask)
                word |= v << np.uint64(f.offset)
                return
            b = limbs_to_bits(value, f.width)
            if f.active_low:
                b ^= 1
            bits[:, f.offset : f.offset + f.width] = b

        for f, values in self._tick_values(n, reset, power, delay):
            put(f, values)
        for pf in self.ports:
            i = pf.index
            kind = cols.kind[:, i]
            addr = cols.address[:, i]
            if n and (int(addr.min()) < 0 or (pf.address.width < 63 and int(addr.max()) >> pf.address.width)):
                k = int(np.argmax((addr < 0) | (addr >> min(pf.address.width, 62) > 0)))
                raise InvalidOperation(
                    f"port {pf.spec.name!r}: address {int(addr[k]):#x} does not fit the {pf.address.width}-bit "
                    f"pin {pf.address.pin!r}"
                )
            idle = kind == IDLE
            garbage = idle & ((addr != 0) | cols.data[:, i].any(axis=1) | cols.lanes_given[:, i])
            put(pf.enable, ~idle)
            put(pf.write_enable, (kind == WRITE) | garbage)
            put(pf.address, addr)
            put(pf.write_data, cols.data[:, i])
            if pf.lane_enable is not None:
                put(pf.lane_enable, _lane_pins(pf, kind, idle & ~garbage, cols.lanes[:, i]))
        if narrow:
            shifts = np.arange(4 * (nib - 1), -1, -4, dtype=np.uint64)
            nibbles = (word[:, None] >> shifts) & np.uint64(15)
        else:
            nibbles = (bits.reshape(n, nib, 4) @ np.array([1, 2, 4, 8], dtype=np.uint8))[:, ::-1]
        chars = np.empty((n, nib + 1), dtype=np.uint8)
        chars[:, :nib] = _HEX[nibbles]
        chars[:, nib] = ord("\n")
        return chars.tobytes()

    def _tick_values(
        self, n: int, reset: bool | np.ndarray, power: np.ndarray | None, delay: np.ndarray | None
    ) -> list[tuple[Field, np.ndarray]]:
        """The per-tick fields of this word with their values over ``n`` words."""
        state = np.zeros(n, dtype=np.int8) if power is None else np.asarray(power)
        out = [
            (self.reset, np.broadcast_to(np.asarray(reset, dtype=bool), (n,))),
            (self.sleep, state == Power.SLEEP),
            (self.shutdown, state == Power.SHUTDOWN),
            (self.delay, np.zeros(n, dtype=np.uint64) if delay is None else np.asarray(delay, dtype=np.uint64)),
        ]
        return [(f, v) for f, v in out if f is not None]

    # -- capture -------------------------------------------------------------------------

    def decode_arrays(self, data: bytes, count: int) -> tuple[np.ndarray, np.ndarray]:
        """Parse ``$writememb`` output into ``(value, defined)`` arrays of (count, ports, limbs) uint64;
        ``defined`` has a 1 for every bit that was 0 or 1. Ports without read data get zeros."""
        arr = self._capture_chars(data, count)
        limbs = limbs_of(self.contract.memory.width)
        value = np.zeros((count, len(self.contract.ports), limbs), dtype=np.uint64)
        defined = np.zeros_like(value)
        for pf in self.ports:
            i = pf.index
            f = pf.read_data
            if f is None or count == 0:
                continue
            hi = self.cap_width - f.offset
            cols = arr[:, hi - f.width : hi][:, ::-1]  # least significant bit first
            ones = cols == ord("1")
            value[:, i] = bits_to_limbs(ones, limbs)
            defined[:, i] = bits_to_limbs(ones | (cols == ord("0")), limbs)
        return value, defined

    def _capture_chars(self, data: bytes, count: int) -> np.ndarray:
        """(count, cap_width) characters of the data lines (comment lines dropped), MSB first."""
        arr = np.frombuffer(data, dtype=np.uint8)
        width = self.cap_width + 1
        # Icarus writes a "// 0x%08x" line before every 16 words: cut those out by reshaping.
        blocks, rest = divmod(count, 16)
        block = _ICARUS_COMMENT + 16 * width
        if count and blocks < 1 << 28 and arr.size == blocks * block + (rest and _ICARUS_COMMENT + rest * width):
            full = arr[: blocks * block].reshape(blocks, block)
            tail = arr[blocks * block :]
            rows = (
                np.concatenate(
                    [full[:, _ICARUS_COMMENT:].reshape(-1, width), tail[_ICARUS_COMMENT:].reshape(-1, width)]
                )
                if rest
                else full[:, _ICARUS_COMMENT:].reshape(-1, width)
            )
            heads = np.concatenate([full[:, 0], tail[:1]]) if rest else full[:, 0]
            if np.all(rows[:, -1] == ord("\n")) and np.all(heads == ord("/")):
                return rows[:, :-1]
        newline = arr == ord("\n")
        # the line of each byte (a newline ends its own line); int32: far quicker than int64 here
        line = np.cumsum(newline, dtype=np.int32) - newline
        starts = np.r_[0, np.flatnonzero(newline) + 1]
        starts = starts[starts < len(arr)]
        body = arr[~(arr[starts] == ord("/"))[line]] if len(arr) else arr
        if body.size == count * width:
            rows = body.reshape(count, width)
            if np.all(rows[:, -1] == ord("\n")):
                return rows[:, :-1]
        # Anything unusual (spaces, carriage returns): the slow, forgiving way.
        lines = _COMMENT.sub(b"", data).split()
        if len(lines) != count or any(len(x) != self.cap_width for x in lines):
            raise ValueError(f"capture file has {len(lines)} lines of the wrong shape; expected {count}")
        return np.frombuffer(b"".join(lines), dtype=np.uint8).reshape(count, self.cap_width)

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
            cols = arr[:, hi - f.width : hi]  # MSB first
            ones = _to_ints(cols == ord("1"))
            defined = _to_ints((cols == ord("0")) | (cols == ord("1")))
            per_port.append([Observed(v, d) for v, d in zip(ones, defined, strict=True)])
        return [tuple(None if col is None else col[i] for col in per_port) for i in range(count)]


def _lane_pins(pf: PortFields, kind: np.ndarray, clean_idle: np.ndarray, lanes: np.ndarray) -> np.ndarray:
    """Lane-enable pins of one port over a trace: none on clean idle cycles, nor on reads of a port
    without write_enable (it writes when any lane is enabled)."""
    quiet = clean_idle | (kind == READ) if pf.spec.any_lane_write else clean_idle
    return np.where(quiet[:, None], np.uint64(0), lanes)


_COMMENT = re.compile(rb"//[^\n]*")
_HEX = np.frombuffer(b"0123456789abcdef", dtype=np.uint8)
_ICARUS_COMMENT = len(b"// 0x00000000\n")


def _to_ints(bits: np.ndarray) -> list[int]:
    """Rows of MSB-first booleans to Python ints."""
    n, w = bits.shape
    pad = (-w) % 8
    if pad:
        bits = np.concatenate([np.zeros((n, pad), dtype=bool), bits], axis=1)
    packed = np.packbits(bits, axis=1)
    return [int.from_bytes(row.tobytes(), "big") for row in packed]
