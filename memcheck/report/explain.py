"""Say in words which promise of the contract a mismatch breaks.

The explanation is worked out from the trace itself (which operation issued the read whose data
came out wrong, what was written there before, by whom, with which lanes), so it reads like a
reviewer's comment: "read-during-write should return the old data".
"""

from __future__ import annotations

from dataclasses import dataclass

from memcheck.contract import Contract
from memcheck.ops import OpKind
from memcheck.records import CheckedTrace, CycleRow

_RDW = {
    "old": "the old word (the contents before the write)",
    "new": "the new word (written lanes new, the rest old)",
    "keep": "what it showed before that cycle",
}


@dataclass(frozen=True)
class Explanation:
    """The first mismatch and the contract rule it violates."""

    cycle: int
    port: str
    rule: str
    detail: str
    key: str  # the contract key (or "read data") the rule comes from

    def text(self) -> str:
        return f"{self.rule} {self.detail}".strip()


def _lanes_text(contract: Contract, lanes: int | None) -> str:
    m = contract.memory
    if lanes is None or m.lanes == 0:
        return "all lanes"
    what = "bit" if m.bit_mask else "lane"
    on = [str(i) for i in range(m.lanes) if lanes >> i & 1]
    if not on:
        return f"no {what}s"
    return f"{what}{'s' if len(on) > 1 else ''} {', '.join(on)}"


def explain(contract: Contract, checked: CheckedTrace) -> Explanation | None:
    """Explain the first mismatch of ``checked`` (None when it has none)."""
    rows = checked.rows
    first = next((r for r in rows if not r.ok), None)
    if first is None:
        return None
    p = next(i for i, d in enumerate(first.diff) if d)
    port = contract.ports[p]
    diff = first.diff[p]
    obs = first.observed[p]
    exp = first.expected[p]
    m = contract.memory
    lat = m.read_latency
    issue_cycle = first.cycle - lat
    by_cycle = {r.cycle: r for r in rows}
    issued: CycleRow | None = by_cycle.get(issue_cycle)
    xz = obs is not None and (diff & ~obs.defined) != 0
    bits = f"bit{'s' if bin(diff).count('1') > 1 else ''} {_bit_list(diff)}"
    prefix = (
        f"Port {port.name} showed X/Z on {bits} where the contract promises known data. "
        if xz
        else f"Port {port.name} read data differs in {bits}. "
    )
    when = "in the same cycle" if lat == 0 else f"{lat} cycle{'s' if lat > 1 else ''} earlier"

    timing = _timing_hint(checked, first, p)
    if issued is None:
        return Explanation(
            first.cycle, port.name, prefix + "Read data should follow the model here.", timing, "read data"
        )
    op = issued.ops[p]
    if op.kind == OpKind.WRITE:
        rule = (
            f'read_during_write = "{m.read_during_write}": in a cycle that writes, the port\'s read data '
            f"should be {_RDW.get(m.read_during_write, 'unknown')}."
        )
        return Explanation(
            first.cycle,
            port.name,
            prefix + rule,
            f"The write was issued at cycle {issue_cycle} ({op.describe()}), {when}. {timing}".strip(),
            "read_during_write",
        )
    if op.kind == OpKind.IDLE:
        rule = 'idle_read_data = "keep": while a port issues no read, its read data should hold the last read result.'
        return Explanation(
            first.cycle,
            port.name,
            prefix + rule,
            f"Port {port.name} was idle at cycle {issue_cycle}, {when}. {timing}".strip(),
            "idle_read_data",
        )
    # A read.
    addr = op.address
    others = [(q, o) for q, o in enumerate(issued.ops) if q != p and o.kind == OpKind.WRITE and o.address == addr]
    if others and m.collision in ("old", "new"):
        q, o = others[0]
        word = "old data (before the write)" if m.collision == "old" else "new data (after the write)"
        rule = (
            f'collision = "{m.collision}": a read while another port writes the same address on the '
            f"same edge should return the {word}."
        )
        return Explanation(
            first.cycle,
            port.name,
            prefix + rule,
            f"At cycle {issue_cycle} port {contract.ports[q].name} did {o.describe()} while port "
            f"{port.name} read it. {timing}".strip(),
            "collision",
        )
    last = None
    for r in rows:
        if r.cycle >= issue_cycle:
            break
        for q, o in enumerate(r.ops):
            if o.kind == OpKind.WRITE and o.address == addr:
                last = (r.cycle, q, o)
    if last is None:
        if m.initial == "zero" and checked.start in ("reset", "power-up"):
            where = "after the reset sequence" if contract.reset is not None else "at power-up"
            rule = f'initial = "zero": a word never written should read as zero {where}.'
            return Explanation(
                first.cycle,
                port.name,
                prefix + rule,
                f"The read of address {addr:#x} was issued at cycle {issue_cycle}. {timing}".strip(),
                "initial",
            )
        rule = "A read should return the data last written to its address."
        return Explanation(
            first.cycle,
            port.name,
            prefix + rule,
            f"The read of address {addr:#x} was issued at cycle {issue_cycle}. {timing}".strip(),
            "read data",
        )
    wc, q, w = last
    # A disabled port with this address on its pins in between: it must not have written.
    for r in rows:
        if not wc < r.cycle < issue_cycle + (1 if lat == 0 else 0):
            continue
        for q2, o in enumerate(r.ops):
            if (
                o.kind == OpKind.IDLE
                and o.address == addr
                and contract.ports[q2].can_write
                and (o.address or o.data or o.lanes is not None)
                and obs is not None
                and not (obs.value ^ o.data) & diff
            ):
                rule = (
                    "Enables: with its enable deasserted a port must do nothing, whatever its other pins "
                    "carry; the read returns the data that was on a disabled port's pins."
                )
                return Explanation(
                    first.cycle,
                    port.name,
                    prefix + rule,
                    f"At cycle {r.cycle} port {contract.ports[q2].name} was disabled with address "
                    f"{o.address:#x} and data {o.data:#x} on its pins (write enable asserted); "
                    f"address {addr:#x} was last written at cycle {wc}. {timing}".strip(),
                    "enable",
                )
    same_edge = [(q2, o) for q2, o in enumerate(by_cycle[wc].ops) if o.kind == OpKind.WRITE and o.address == addr]
    if len(same_edge) > 1 and m.write_collision == "first":
        q1 = same_edge[0][0]
        names = " and ".join(f"port {contract.ports[x].name} ({o.describe()})" for x, o in same_edge)
        rule = (
            'write_collision = "first": when two ports write one address on the same edge, the '
            "earlier-listed port's data should win."
        )
        return Explanation(
            first.cycle,
            port.name,
            prefix + rule,
            f"At cycle {wc} {names} both wrote address {addr:#x}; port "
            f"{contract.ports[q1].name} is listed first. {timing}".strip(),
            "write_collision",
        )
    written = m.word_mask if w.lanes is None else m.lane_bits(w.lanes)
    src = f"port {contract.ports[q].name} at cycle {wc} ({w.describe()})"
    if diff & ~written and not diff & written:
        rule = (
            f"Lane enables: a write with {_lanes_text(contract, w.lanes)} enabled should leave the other "
            "bits of the word unchanged."
        )
        key = "lane_enable"
    elif w.lanes is not None and m.lanes and diff & written:
        rule = f"Lane enables: a write with {_lanes_text(contract, w.lanes)} enabled should update those bits."
        key = "lane_enable"
    else:
        rule = "A read should return the data last written to its address."
        key = "read data"
    detail = f"Address {addr:#x} was last written by {src}; the read was issued at cycle {issue_cycle}."
    if lat:
        detail = (
            f"Address {addr:#x} was last written by {src}; the read was issued at cycle {issue_cycle}, "
            f"its data due at cycle {first.cycle} (read_latency = {lat})."
        )
    if exp.known != m.word_mask:
        detail += " Bits the model does not know are not compared."
    return Explanation(first.cycle, port.name, prefix + rule, f"{detail} {timing}".strip(), key)


def _bit_list(mask: int) -> str:
    bits = [b for b in range(mask.bit_length()) if mask >> b & 1]
    if len(bits) > 8:
        return f"{bits[0]}..{bits[-1]} ({len(bits)} bits)"
    return ", ".join(str(b) for b in reversed(bits))


def _timing_hint(checked: CheckedTrace, row: CycleRow, p: int) -> str:
    """Notice read data that arrives one cycle early or late: a latency mistake."""
    obs = row.observed[p]
    if obs is None:
        return ""
    by_cycle = {r.cycle: r for r in checked.rows}
    for delta, word in ((1, "early"), (-1, "late")):
        other = by_cycle.get(row.cycle + delta)
        if other is None:
            continue
        e = other.expected[p]
        if (
            e.known
            and e.known & row.diff[p]
            and not e.mismatch(obs.value, obs.defined)
            and e.value & e.known != row.expected[p].value & e.known
        ):
            return (
                f"The data shown is what the contract expects at cycle {other.cycle}: it arrives one cycle "
                f"{word} (check read_latency)."
            )
    return ""
