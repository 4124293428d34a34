"""Wrong read data that equals data written elsewhere in the trace, and bit lists in words.

A wrong word is rarely random: a wrapper that ignores an address bit returns the word written to
the aliasing address, one that swaps lane slices returns another lane's data, one that drops a
write returns the word written before it. :func:`lookalike` looks for such a write in the failing
trace itself (a pure function of the compared trace, nothing else) and says so in one sentence:
"actual equals the write to 0x20 at cycle 1: address bit 5 ignored?".

:func:`bit_ranges` writes a set of bit positions MSB first, as ranges only where they are
contiguous ("35:33, 31:30, 28"), in the ``msb:lsb`` order of Verilog part-selects (IEEE 1364-2005
§5.2.1); :func:`verilog_width` writes a pin width the way its declaration does ("[3:0]").
"""

from __future__ import annotations

from dataclasses import dataclass

from memcheck.contract import Contract
from memcheck.ops import OpKind, PortOp
from memcheck.records import CheckedTrace, CycleRow

#: Words narrower than this are not compared with other writes (too many coincidences).
MIN_WIDTH = 4


def bit_ranges(mask: int) -> str:
    """The set bits of ``mask``, MSB first, contiguous runs as ``hi:lo`` ("35:33, 31:30, 28")."""
    runs: list[tuple[int, int]] = []
    b = mask.bit_length() - 1
    while b >= 0:
        if mask >> b & 1:
            hi = b
            while b > 0 and mask >> (b - 1) & 1:
                b -= 1
            runs.append((hi, b))
        b -= 1
    return ", ".join(str(hi) if hi == lo else f"{hi}:{lo}" for hi, lo in runs)


def bits_phrase(mask: int) -> str:
    """``bit 3`` / ``bits 35:27, 4`` for a report sentence."""
    return ("bits " if mask & (mask - 1) else "bit ") + bit_ranges(mask)


def verilog_width(width: int) -> str:
    """A pin width as its declaration writes it: 4 -> ``[3:0]``; 1 -> ``1 bit``."""
    return "1 bit" if width == 1 else f"[{width - 1}:0]"


@dataclass(frozen=True)
class _Write:
    cycle: int
    port: int
    op: PortOp
    bits: int  # the bits the write drives


def _writes(contract: Contract, rows: list[CycleRow]) -> list[_Write]:
    m = contract.memory
    return [
        _Write(r.cycle, q, o, m.word_mask if o.lanes is None else m.lane_bits(o.lanes))
        for r in rows
        for q, o in enumerate(r.ops)
        if o.kind == OpKind.WRITE
    ]


def issue_row(checked: CheckedTrace, row: CycleRow, port: int, latency: int) -> CycleRow | None:
    """The row whose operation on ``port`` produced the read data due at ``row``: ``latency`` of the
    port's own edges earlier (rows where the port has no clock edge do not count)."""
    seen = 0
    for r in reversed(checked.rows):  # backwards from ``row``: linear in the latency, not the trace
        if r.cycle > row.cycle or r.ops[port].kind == OpKind.NO_EDGE:
            continue
        if seen == latency:
            return r
        seen += 1
    return None


def _address_guess(read: int, other: int) -> str:
    flip = read ^ other
    bits = [b for b in range(flip.bit_length()) if flip >> b & 1]
    if len(bits) == 1:
        return f": address bit {bits[0]} ignored?"
    if len(bits) <= 3:
        return f": address bits {', '.join(map(str, reversed(bits)))} ignored?"
    return ""


def _lane_span(contract: Contract, lane: int) -> int:
    widths = contract.memory.lane_widths
    lo = sum(widths[:lane])
    return ((1 << widths[lane]) - 1) << lo


def _lane_word(contract: Contract, lane: int) -> str:
    w = contract.memory.lane_widths[lane]
    return "byte" if w == 8 else f"{w}-bit lane data"


def _lane_match(contract: Contract, writes: list[_Write], value: int, defined: int, diff: int, addr: int) -> str | None:
    """A lane whose wrong bits equal, in full, another lane's slice of a write (same address first)."""
    m = contract.memory
    if m.lanes < 2 or m.bit_mask:
        return None
    widths = m.lane_widths
    ordered = sorted(writes, key=lambda w: (w.op.address != addr, -w.cycle))
    for lane in range(m.lanes):
        span = _lane_span(contract, lane)
        if not diff & span or defined & span != span:
            continue
        got = (value & span) >> (span & -span).bit_length() - 1
        for w in ordered:
            for src in range(m.lanes):
                src_span = _lane_span(contract, src)
                if src == lane or widths[src] != widths[lane] or w.bits & src_span != src_span:
                    continue
                if (w.op.data & src_span) >> (src_span & -src_span).bit_length() - 1 == got:
                    at = "" if w.op.address == addr else f" (to {w.op.address:#x})"
                    return (
                        f"lane {lane} holds the {_lane_word(contract, src)} written to lane {src} at cycle "
                        f"{w.cycle}{at}: lane slices swapped or miswired?"
                    )
    return None


def lookalike(contract: Contract, checked: CheckedTrace) -> str | None:
    """One sentence when the first mismatch's actual data equals data written elsewhere in the trace.

    Looks, in order, for a write to another address whose data the read returned on every bit that
    write drives (an ignored or swapped address bit), a lane whose wrong bits equal another lane's
    slice of a write (miswired lanes), and an earlier write to the same address whose data the
    read returned, issued on or after the read's edge (data forwarded too early), and an earlier write to
    the same address whose data the read returned (a later write that did not take effect). Only
    clean 0/1 actual bits count.

    Returns
    -------
    str or None
        The sentence, or None when nothing in the trace looks like the actual data.
    """
    m = contract.memory
    first = next((r for r in checked.rows if not r.ok), None)
    if first is None or m.width < MIN_WIDTH:
        return None
    p = next(i for i, d in enumerate(first.diff) if d)
    obs, diff = first.observed[p], first.diff[p]
    if obs is None or diff & ~obs.defined:
        return None
    issued = issue_row(checked, first, p, m.read_latency)
    if issued is None or issued.ops[p].kind not in (OpKind.READ, OpKind.WRITE):
        return None
    addr = issued.ops[p].address
    earlier = [r for r in checked.rows if r.cycle <= first.cycle]
    writes = _writes(contract, earlier)

    def same(w: _Write) -> bool:
        return diff & ~w.bits == 0 and (obs.value ^ w.op.data) & w.bits & obs.defined == 0

    other = next((w for w in reversed(writes) if w.op.address != addr and same(w)), None)
    if other is not None:
        return (
            f"actual equals the write to {other.op.address:#x} at cycle {other.cycle}"
            f"{_address_guess(addr, other.op.address)}"
        )
    lanes = _lane_match(contract, writes, obs.value, obs.defined, diff, addr)
    if lanes is not None:
        return lanes
    late = next((w for w in writes if w.op.address == addr and w.cycle >= issued.cycle and same(w)), None)
    if late is not None:
        when = (
            "on the access's own edge"
            if late.cycle == issued.cycle
            else f"after the read was issued at cycle {issued.cycle}: write data forwarded too early?"
        )
        return f"actual equals the write to {addr:#x} at cycle {late.cycle}, {when}"
    to_addr = [w for w in writes if w.op.address == addr and w.cycle < issued.cycle]
    old_write = next((w for w in reversed(to_addr[:-1]) if same(w)), None)
    if old_write is not None:
        return (
            f"actual equals the earlier write to {addr:#x} at cycle {old_write.cycle}: the write at cycle "
            f"{to_addr[-1].cycle} did not take effect?"
        )
    return None
