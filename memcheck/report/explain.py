"""Say in words which promise of the contract a mismatch breaks.

The explanation is worked out from the trace itself (which operation issued the read whose data
came out wrong, what was written there before, by whom, with which lanes), so it reads like a
reviewer's comment: "read-during-write should return the old data".
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

from memcheck.contract import Contract
from memcheck.ops import OpKind, PortOp
from memcheck.records import CheckedTrace, CycleRow
from memcheck.report.lookalike import bits_phrase, issue_row

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


@dataclass(frozen=True)
class _Seen:
    """The first mismatch and what the explanation needs about it."""

    contract: Contract
    checked: CheckedTrace
    row: CycleRow
    port: int
    prefix: str  # what the pins showed, in words
    timing: str  # a latency hint, or ""

    @functools.cached_property
    def issue_cycle(self) -> int:
        """The row of the operation whose read data is due here: ``read_latency`` of the port's own
        edges earlier (with one clock, that many cycles earlier)."""
        issued = issue_row(self.checked, self.row, self.port, self.contract.memory.read_latency)
        return self.row.cycle - self.contract.memory.read_latency if issued is None else issued.cycle

    @property
    def when(self) -> str:
        lat = self.contract.memory.read_latency
        return "in the same cycle" if lat == 0 else f"{lat} cycle{'s' if lat > 1 else ''} earlier"

    @property
    def name(self) -> str:
        return self.contract.ports[self.port].name

    def says(self, rule: str, detail: str, key: str) -> Explanation:
        return Explanation(self.row.cycle, self.name, self.prefix + rule, f"{detail} {self.timing}".strip(), key)


def explain(contract: Contract, checked: CheckedTrace) -> Explanation | None:
    """Explain the first mismatch of ``checked`` (None when it has none)."""
    first = next((r for r in checked.rows if not r.ok), None)
    if first is None:
        return None
    p = next(i for i, d in enumerate(first.diff) if d)
    diff, obs = first.diff[p], first.observed[p]
    xz = obs is not None and (diff & ~obs.defined) != 0
    bits = bits_phrase(diff)
    name = contract.ports[p].name
    prefix = (
        f"Port {name} showed X/Z on {bits} where the contract promises known data. "
        if xz
        else f"Port {name} read data differs in {bits}. "
    )
    seen = _Seen(contract, checked, first, p, prefix, _timing_hint(checked, first, p))
    issued = next((r for r in checked.rows if r.cycle == seen.issue_cycle), None)
    if issued is None:
        return seen.says("Read data should follow the model here.", "", "read data")
    op = issued.ops[p]
    if op.kind == OpKind.WRITE:
        m = contract.memory
        rule = (
            f'read_during_write = "{m.read_during_write}": in a cycle that writes, the port\'s read data '
            f"should be {_RDW.get(m.read_during_write, 'unknown')}."
        )
        detail = f"The write was issued at cycle {seen.issue_cycle} ({op.describe()}), {seen.when}."
        return seen.says(rule, detail, "read_during_write")
    if op.kind == OpKind.IDLE:
        rule = 'idle_read_data = "keep": while a port issues no read, its read data should hold the last read result.'
        return seen.says(rule, f"Port {seen.name} was idle at cycle {seen.issue_cycle}, {seen.when}.", "idle_read_data")
    return _explain_read(seen, issued, op.address)


def _explain_read(seen: _Seen, issued: CycleRow, addr: int) -> Explanation:
    """The mismatch answers a read of ``addr``: a collision, a word never written, or the last write."""
    c, m = seen.contract, seen.contract.memory
    others = [
        (q, o) for q, o in enumerate(issued.ops) if q != seen.port and o.kind == OpKind.WRITE and o.address == addr
    ]
    if others and m.collision in ("old", "new"):
        q, o = others[0]
        word = "old data (before the write)" if m.collision == "old" else "new data (after the write)"
        rule = (
            f'collision = "{m.collision}": a read while another port writes the same address on the '
            f"same edge should return the {word}."
        )
        detail = (
            f"At cycle {seen.issue_cycle} port {c.ports[q].name} did {o.describe()} while port {seen.name} read it."
        )
        return seen.says(rule, detail, "collision")
    last = None
    for r in seen.checked.rows:
        if r.cycle >= seen.issue_cycle:
            break
        for q, o in enumerate(r.ops):
            if o.kind == OpKind.WRITE and o.address == addr:
                last = (r.cycle, q, o)
    if last is None:
        detail = f"The read of address {addr:#x} was issued at cycle {seen.issue_cycle}."
        if m.initial == "zero" and seen.checked.start in ("reset", "power-up"):
            where = "after the reset sequence" if c.reset is not None else "at power-up"
            return seen.says(f'initial = "zero": a word never written should read as zero {where}.', detail, "initial")
        return seen.says("A read should return the data last written to its address.", detail, "read data")
    return (
        _disabled_port(seen, addr, last[0]) or _write_collision(seen, addr, last[0]) or _last_write(seen, addr, *last)
    )


def _disabled_port(seen: _Seen, addr: int, wc: int) -> Explanation | None:
    """A disabled port with this address on its pins between the last write and the read."""
    c = seen.contract
    obs = seen.row.observed[seen.port]
    diff = seen.row.diff[seen.port]
    stop = seen.issue_cycle + (1 if c.memory.read_latency == 0 else 0)
    for r in seen.checked.rows:
        if not wc < r.cycle < stop:
            continue
        for q2, o in enumerate(r.ops):
            garbage = o.address or o.data or o.lanes is not None
            if (
                o.kind == OpKind.IDLE
                and o.address == addr
                and c.ports[q2].can_write
                and garbage
                and obs is not None
                and not (obs.value ^ o.data) & diff
            ):
                rule = (
                    "Enables: with its enable deasserted a port must do nothing, whatever its other pins "
                    "carry; the read returns the data that was on a disabled port's pins."
                )
                detail = (
                    f"At cycle {r.cycle} port {c.ports[q2].name} was disabled with address "
                    f"{o.address:#x} and data {o.data:#x} on its pins (write enable asserted); "
                    f"address {addr:#x} was last written at cycle {wc}."
                )
                return seen.says(rule, detail, "enable")
    return None


def _write_collision(seen: _Seen, addr: int, wc: int) -> Explanation | None:
    c = seen.contract
    at = next(r for r in seen.checked.rows if r.cycle == wc)
    same_edge = [(q2, o) for q2, o in enumerate(at.ops) if o.kind == OpKind.WRITE and o.address == addr]
    if len(same_edge) < 2 or c.memory.write_collision != "first":
        return None
    names = " and ".join(f"port {c.ports[x].name} ({o.describe()})" for x, o in same_edge)
    rule = (
        'write_collision = "first": when two ports write one address on the same edge, the '
        "earlier-listed port's data should win."
    )
    detail = (
        f"At cycle {wc} {names} both wrote address {addr:#x}; port {c.ports[same_edge[0][0]].name} is listed first."
    )
    return seen.says(rule, detail, "write_collision")


def _last_write(seen: _Seen, addr: int, wc: int, q: int, w: PortOp) -> Explanation:
    """The read should return what the last write left: lane enables, or the data itself."""
    c, m = seen.contract, seen.contract.memory
    diff = seen.row.diff[seen.port]
    written = m.word_mask if w.lanes is None else m.lane_bits(w.lanes)
    src = f"port {c.ports[q].name} at cycle {wc} ({w.describe()})"
    if diff & ~written and not diff & written:
        rule = (
            f"Lane enables: a write with {_lanes_text(c, w.lanes)} enabled should leave the other "
            "bits of the word unchanged."
        )
        key = "lane_enable"
    elif w.lanes is not None and m.lanes and diff & written:
        rule = f"Lane enables: a write with {_lanes_text(c, w.lanes)} enabled should update those bits."
        key = "lane_enable"
    else:
        rule = "A read should return the data last written to its address."
        key = "read data"
    lat = m.read_latency
    detail = f"Address {addr:#x} was last written by {src}; the read was issued at cycle {seen.issue_cycle}."
    if lat:
        detail = (
            f"Address {addr:#x} was last written by {src}; the read was issued at cycle {seen.issue_cycle}, "
            f"its data due at cycle {seen.row.cycle} (read_latency = {lat})."
        )
    if seen.row.expected[seen.port].known != m.word_mask:
        detail += " Bits the model does not know are not compared."
    return seen.says(rule, detail, key)


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
