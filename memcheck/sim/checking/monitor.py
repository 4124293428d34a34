"""The scoreboard's simulator-free half: sampled pins become operations, the model is stepped,
read data is compared, and the last cycles are kept for the failure table.

:class:`memcheck.sim.plumbing.scoreboard.Scoreboard` samples a running design's pins at every
rising edge of the contract's clock (in a user's own cocotb test, whatever drives them) and hands
them here as text, one character per bit, MSB first (``"01xz"``, as the simulator shows them).

Timing: the pins are sampled as the rising edge finds them, before the edge's own updates: the
operation each port performs at that edge and the read data the model says a consumer samples
there (:meth:`memcheck.model.Model.step`).

A cycle the model cannot follow (an X/Z enable or write enable, an X/Z address of an access, an
address beyond the contract's address range, a ``[rtl] tie`` pin away from its value) makes the
model forget everything (contents and pending reads unknown): later reads are checked again once
the design writes known data. This happens typically before a testbench drives the pins at all.
X/Z bits of write data make those stored bits unknown.
"""

from __future__ import annotations

from collections import deque
from collections.abc import Mapping
from dataclasses import dataclass

from memcheck.contract import Contract, PortSpec
from memcheck.errors import NotYetSimulated
from memcheck.model import Model
from memcheck.ops import IDLE, UNKNOWN, Expected, OpKind, PortOp
from memcheck.records import CheckedTrace, CycleRow, ModelStart, Observed
from memcheck.sim.checking.compare import start_model

#: A sampled pin: (value bits, defined bits); a 1 in ``defined`` for every bit that was 0 or 1.
Sampled = tuple[int, int]


_VALUE = str.maketrans("01xzXZuwlhUWLH-", "010000000000000")
_DEFINED = str.maketrans("01xzXZuwlhUWLH-", "110000000000000")


def parse_bits(text: str) -> Sampled:
    """``"01xz"`` (MSB first, as simulators print a vector) -> (value, defined); only 0 and 1 are defined."""
    text = text.strip()
    if not text:
        return 0, 0
    return int(text.translate(_VALUE), 2), int(text.translate(_DEFINED), 2)


@dataclass(frozen=True)
class Decoded:
    """One port's operation at one edge, or why the model cannot follow it (``problem``)."""

    op: PortOp
    problem: str = ""
    #: Bits of the written word that were X/Z on the write-data pins.
    unknown_data: int = 0


def _full(width: int) -> int:
    return (1 << width) - 1


class _Pins:
    """The sampled pins of one port at one edge, with polarity applied to its controls."""

    def __init__(self, port: PortSpec, sampled: Mapping[str, Sampled], widths: Mapping[str, int]) -> None:
        self.port = port
        self.sampled = sampled
        self.widths = widths

    def control(self, pin: str | None) -> bool | None:
        """An asserted 1-bit control (True/False), None when X/Z; a missing pin counts as asserted."""
        if pin is None:
            return True
        value, defined = self.sampled[pin]
        if not defined & 1:
            return None
        return bool(value & 1) != (pin in self.port.active_low)

    def vector(self, pin: str | None) -> Sampled:
        if pin is None:
            return 0, 0
        value, defined = self.sampled[pin]
        full = _full(self.widths[pin])
        if pin in self.port.active_low:
            value = ~value & full
        return value & defined & full, defined & full


def decode_port(
    port: PortSpec, contract: Contract, sampled: Mapping[str, Sampled], widths: Mapping[str, int], address_limit: int
) -> Decoded:
    """The operation ``port`` performs at this edge, from its sampled pins."""
    pins = _Pins(port, sampled, widths)
    m = contract.memory
    enabled = pins.control(port.enable)
    addr, addr_ok = pins.vector(port.address)
    data, data_ok = pins.vector(port.write_data)
    if enabled is None:
        return Decoded(IDLE, f"enable {port.enable!r} is X/Z")
    if not enabled:
        return Decoded(PortOp(OpKind.IDLE, addr if addr < address_limit else 0, data & m.word_mask))
    lanes: int | None = None
    if port.lane_enable is not None:
        lanes, lanes_ok = pins.vector(port.lane_enable)
        lanes &= m.all_lanes
    kind = _kind(port, pins, lanes)
    if kind is None:
        return Decoded(IDLE, f"write enable {port.write_enable!r} is X/Z")
    if addr_ok != _full(widths[port.address]):
        return Decoded(IDLE, f"address {port.address!r} is X/Z on a {kind.label}")
    if addr >= address_limit:
        return Decoded(IDLE, f"address {addr:#x} on {port.address!r} is beyond the contract's address range")
    if kind == OpKind.READ:
        return Decoded(PortOp(OpKind.READ, addr))
    if lanes is not None and lanes_ok & m.all_lanes != m.all_lanes:
        return Decoded(IDLE, f"lane enable {port.lane_enable!r} is X/Z on a write")
    unknown = ~data_ok & m.word_mask
    return Decoded(PortOp(OpKind.WRITE, addr, data & m.word_mask, lanes), unknown_data=unknown)


def _kind(port: PortSpec, pins: _Pins, lanes: int | None) -> OpKind | None:
    """Read or write for an enabled port; None when the write enable is X/Z."""
    if port.role == "read":
        return OpKind.READ
    if port.role == "write":
        return OpKind.WRITE
    if port.write_enable is None:  # any active lane enable writes
        return OpKind.WRITE if lanes else OpKind.READ
    we = pins.control(port.write_enable)
    return None if we is None else OpKind.WRITE if we else OpKind.READ


def _stand_in(port: PortSpec) -> PortOp:
    """An operation the model accepts for a port whose real one it cannot follow."""
    return IDLE if port.can_idle else PortOp(OpKind.READ, 0)


def refuse_unsupported(contract: Contract) -> None:
    """The scoreboard follows one clock pin and no power pins; refuse other contracts clearly."""
    if len(contract.clock_names) > 1:
        raise NotYetSimulated(
            f"the scoreboard follows one clock, but this contract's ports use {', '.join(contract.clock_names)}; "
            "monitor each clock's ports with a contract of their own, or check the contract with `memcheck check`."
        )
    if contract.power is not None:
        raise NotYetSimulated(
            "the scoreboard does not follow [power] pins yet; hold the memory awake in your test and monitor it "
            "with a copy of the contract without [power]."
        )


class Monitor:
    """Steps the model on sampled pins, one rising edge at a time, keeping the last ``window`` cycles.

    ``widths`` gives each contract pin's width on the design (address pins may be wider than the
    contract needs). ``start`` is what the model knows at the first edge.
    """

    def __init__(
        self, contract: Contract, widths: Mapping[str, int], *, window: int = 16, start: ModelStart = "power-up"
    ) -> None:
        refuse_unsupported(contract)
        self.contract = contract
        self.widths = dict(widths)
        self.start = start
        self.model: Model = start_model(contract, start)
        self.rows: deque[CycleRow] = deque(maxlen=max(1, window))
        self.cycle = 0
        self.reads_checked = 0
        self.unfollowed = 0
        self.resets = 0
        self.notes: list[str] = []
        self._in_reset = False

    def _reset_asserted(self, sampled: Mapping[str, Sampled]) -> bool:
        r = self.contract.reset
        if r is None:
            return False
        value, defined = sampled[r.signal]
        return not defined & 1 or bool(value & 1) != r.active_low

    def step(self, sampled: Mapping[str, Sampled]) -> CycleRow | None:
        """One rising edge: the compared row, or None for an edge inside the reset (not checked)."""
        k = self.cycle
        self.cycle += 1
        if self._reset_asserted(sampled):
            self._in_reset = True
            return None
        if self._in_reset:
            self._in_reset = False
            self.resets += 1
            self.model.reset()
        ports = self.contract.ports
        limit = self.contract.memory.address_limit
        decoded = [decode_port(p, self.contract, sampled, self.widths, limit) for p in ports]
        problems = [f"port {p.name!r}: {d.problem}" for p, d in zip(ports, decoded, strict=True) if d.problem]
        problems += self._ties_off(sampled)
        ops = tuple(_stand_in(p) if d.problem else d.op for p, d in zip(ports, decoded, strict=True))
        expected = self.model.step(ops)
        if problems:
            self._unfollowed(k, problems)
            if self.contract.memory.read_latency == 0:
                expected = (UNKNOWN,) * len(ports)
        else:
            self._blur_unknown_writes(decoded)
        row = self._compare(k, ops, expected, sampled)
        self.rows.append(row)
        return row

    def _ties_off(self, sampled: Mapping[str, Sampled]) -> list[str]:
        """``[rtl] tie`` pins away from their value: the contract does not describe that state."""
        rtl = self.contract.rtl
        if rtl is None:
            return []
        out = []
        for pin, want in rtl.tie.items():
            value, defined = sampled[pin]
            full = _full(self.widths[pin])
            if defined & full != full or value & full != want:
                out.append(f"pin {pin!r} is not at its [rtl] tie value {want}")
        return out

    def _unfollowed(self, k: int, problems: list[str]) -> None:
        self.model.forget()
        self.unfollowed += 1
        if len(self.notes) < 5:
            self.notes.append(f"cycle {k}: {'; '.join(problems)}: the model forgot all contents and pending reads")

    def _blur_unknown_writes(self, decoded: list[Decoded]) -> None:
        m = self.contract.memory
        for d in decoded:
            word = m.word_of(d.op.address) if d.op.kind == OpKind.WRITE else None
            if d.unknown_data and word is not None:
                bits = m.lane_bits(d.op.lanes) if d.op.lanes is not None else m.word_mask
                stored = self.model.peek(word)
                self.model.poke(word, stored.value, stored.known & ~(d.unknown_data & bits))

    def _compare(
        self, k: int, ops: tuple[PortOp, ...], expected: tuple[Expected, ...], sampled: Mapping[str, Sampled]
    ) -> CycleRow:
        observed: list[Observed | None] = []
        diff: list[int] = []
        for p, e in zip(self.contract.ports, expected, strict=True):
            if p.read_data is None:
                observed.append(None)
                diff.append(0)
                continue
            value, defined = sampled[p.read_data]
            o = Observed(value & defined, defined)
            observed.append(o)
            diff.append(e.mismatch(o.value, o.defined))
            self.reads_checked += e.known != 0
        return CycleRow(k, ops, expected, tuple(observed), tuple(diff))

    def window(self) -> CheckedTrace:
        """The cycles kept, as a checked trace (the failure table renders it)."""
        return CheckedTrace(self.start, tuple(self.rows))

    def summary(self) -> str:
        parts = [f"{self.cycle} rising edges monitored, {self.reads_checked} read results compared"]
        if self.resets:
            parts.append(f"{self.resets} reset(s) followed")
        if self.unfollowed:
            parts.append(f"{self.unfollowed} cycle(s) the model could not follow (it forgot everything there)")
        return "; ".join(parts)
