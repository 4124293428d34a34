"""Cover points of a contract: the behaviours a check should exercise, and whether it can check them.

A cover point is one behaviour of the memory the contract describes (a read, a write with one lane
enabled, port b reading the word port a writes in the same cycle, ...), with its scope (a port, an
ordered pair of ports, or the whole memory). Only points that can occur on this contract are listed:
a one-port memory has no collision points, a memory without lanes no lane points, a contract without
``[power]`` no power points.

Each point also says whether the contract makes its outcome *checkable*: ``"yes"`` (the read data it
leads to is promised), ``"partly"`` (some bits are promised, the rest are unknown) or ``"no"`` (the
point is exercised, but the contract leaves its result unknown, so nothing about it is compared).

Keys are ``SCOPE:WHAT``: ``a:op.read``, ``a:lanes.single``, ``a->b:collision.read_write.full`` (port
b reads the word port a writes), ``a+b:collision.write_write.partial``, ``memory:reset.mid_run``.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from memcheck.contract import Contract, PortSpec

Checkable = Literal["yes", "partly", "no"]

#: The scope of points about the whole memory (reset, power episodes).
MEMORY = "memory"


@dataclass(frozen=True)
class CoverPoint:
    """One behaviour to exercise: ``key`` (``SCOPE:WHAT``), its words, and what the contract promises."""

    key: str
    what: str
    checked: Checkable = "yes"
    note: str = ""

    @property
    def scope(self) -> str:
        return self.key.split(":", 1)[0]

    @property
    def kind(self) -> str:
        return self.key.split(":", 1)[1]


def _op_points(port: PortSpec) -> list[CoverPoint]:
    n = port.name
    out = []
    if port.can_read:
        out.append(CoverPoint(f"{n}:op.read", "a read"))
    if port.can_write:
        out.append(CoverPoint(f"{n}:op.write", "a write"))
    if port.can_idle:
        out.append(CoverPoint(f"{n}:op.idle", "an idle cycle (enable deasserted)"))
    return out


def _lane_points(c: Contract, port: PortSpec) -> list[CoverPoint]:
    lanes = c.memory.lanes
    if lanes == 0 or not port.can_write or port.lane_enable is None:
        return []
    n = port.name
    unit = "bit" if c.memory.bit_mask else "lane"
    out = [CoverPoint(f"{n}:lanes.all", f"a write with every {unit} enabled")]
    if not port.any_lane_write:
        out.append(CoverPoint(f"{n}:lanes.none", f"a write with no {unit} enabled (writes nothing)"))
    if lanes >= 2:
        out.append(CoverPoint(f"{n}:lanes.single", f"a write with exactly one {unit} enabled"))
    if lanes >= 3:
        out.append(CoverPoint(f"{n}:lanes.partial", f"a write with several {unit}s enabled, not all"))
    if lanes >= 2:
        out.append(CoverPoint(f"{n}:lanes.each", f"every {unit} enabled by some write"))
    return out


def _address_points(c: Contract, port: PortSpec) -> list[CoverPoint]:
    m = c.memory
    n = port.name
    out = []
    if m.words > 1:
        out.append(CoverPoint(f"{n}:address.bits", f"every one of the {m.address_bits} address bits at 0 and at 1"))
    out.append(CoverPoint(f"{n}:address.first", "an access to address 0"))
    if m.words > 1:
        out.append(CoverPoint(f"{n}:address.last", f"an access to the last word ({m.words - 1})"))
    if m.out_of_range != "unchecked":
        wrap = m.out_of_range == "wrap"
        if port.can_read:
            out.append(
                CoverPoint(
                    f"{n}:address.beyond.read",
                    f"a read of an address beyond the last word (out_of_range = {m.out_of_range!r})",
                    "yes" if wrap else "no",
                    "" if wrap else "the read data of an ignored address is unknown",
                )
            )
        if port.can_write:
            out.append(
                CoverPoint(
                    f"{n}:address.beyond.write",
                    f"a write to an address beyond the last word (out_of_range = {m.out_of_range!r})",
                )
            )
    return out


def _timing_points(c: Contract, port: PortSpec) -> list[CoverPoint]:
    m = c.memory
    n = port.name
    out = []
    if port.can_read and port.can_write and port.read_data is not None:
        rdw = m.read_during_write
        out.append(
            CoverPoint(
                f"{n}:read_during_write",
                f"a write whose read data shows the same address (read_during_write = {rdw!r})",
                "no" if rdw == "unknown" else "yes",
                "read_during_write is 'unknown'" if rdw == "unknown" else "",
            )
        )
        for d in range(1, m.read_latency + 2):
            out.append(CoverPoint(f"{n}:after_write.{d}", f"a read {d} cycle(s) after a write to the same word"))
    kinds = [k for k, ok in (("read", port.can_read), ("write", port.can_write)) if ok]
    for first in kinds:
        for second in kinds:
            out.append(CoverPoint(f"{n}:back_to_back.{first}_{second}", f"a {first} then a {second} on the next edge"))
    return out


def _power_points(c: Contract, port: PortSpec) -> list[CoverPoint]:
    if c.power is None:
        return []
    out = []
    for kind, ok in (("read", port.can_read), ("write", port.can_write)):
        if ok:
            out.append(
                CoverPoint(
                    f"{port.name}:wake.{kind}",
                    f"a {kind} on the first edge that accesses after a sleep or shutdown episode",
                )
            )
    return out


def port_points(c: Contract, port: PortSpec) -> list[CoverPoint]:
    """The points of one port."""
    return [
        *_op_points(port),
        *_lane_points(c, port),
        *_address_points(c, port),
        *_timing_points(c, port),
        *_power_points(c, port),
    ]


def _read_write_collisions(c: Contract, w: PortSpec, r: PortSpec) -> list[CoverPoint]:
    m = c.memory
    scope = f"{w.name}->{r.name}"
    known = m.collision != "unknown"
    out = [
        CoverPoint(
            f"{scope}:collision.read_write.full",
            f"port {r.name} reads the word port {w.name} writes (every lane) in the same cycle",
            "yes" if known else "no",
            "" if known else "collision is 'unknown'",
        )
    ]
    if m.lanes >= 2 and w.lane_enable is not None:
        out.append(
            CoverPoint(
                f"{scope}:collision.read_write.partial",
                f"port {r.name} reads the word port {w.name} writes (some lanes) in the same cycle",
                "yes" if known else "partly",
                "" if known else "collision is 'unknown': only the lanes the write leaves alone are promised",
            )
        )
    for d in range(1, m.read_latency + 2):
        out.append(
            CoverPoint(
                f"{scope}:after_write.{d}", f"port {r.name} reads a word {d} cycle(s) after port {w.name} wrote it"
            )
        )
    return out


def _write_write_collisions(c: Contract, a: PortSpec, b: PortSpec) -> list[CoverPoint]:
    m = c.memory
    scope = f"{a.name}+{b.name}"
    first = m.write_collision == "first"
    out = [
        CoverPoint(
            f"{scope}:collision.write_write.full",
            f"ports {a.name} and {b.name} write the same word (every lane) in the same cycle",
            "yes" if first else "no",
            "" if first else "write_collision is 'unknown'",
        )
    ]
    if m.lanes >= 2 and (a.lane_enable is not None or b.lane_enable is not None):
        out.append(
            CoverPoint(
                f"{scope}:collision.write_write.partial",
                f"ports {a.name} and {b.name} write the same word in the same cycle, not every lane",
                "yes" if first else "partly",
                "" if first else "write_collision is 'unknown': only the lanes neither write drives are promised",
            )
        )
    return out


def pair_points(c: Contract) -> list[CoverPoint]:
    """Points of ordered port pairs (read/write collisions and reads after another port's write) and of
    unordered pairs (write/write collisions). Listed for ports that share their clock edges only."""
    if not c.lockstep:
        return []
    out: list[CoverPoint] = []
    ports = c.ports
    for i, w in enumerate(ports):
        for j, r in enumerate(ports):
            if i != j and w.can_write and r.can_read:
                out += _read_write_collisions(c, w, r)
    for i, a in enumerate(ports):
        for b in ports[i + 1 :]:
            if a.can_write and b.can_write:
                out += _write_write_collisions(c, a, b)
    return out


def memory_points(c: Contract) -> list[CoverPoint]:
    """Points of the whole memory: reset in mid-run, power episodes."""
    out = []
    if c.reset is not None:
        out.append(
            CoverPoint(
                f"{MEMORY}:reset.mid_run",
                "a reset after earlier accesses, then accesses",
                "partly",
                "accesses after it are checked; the contents it leaves are compared only when the check starts "
                "from reset",
            )
        )
    p = c.power
    if p is not None and p.sleep is not None:
        keep = p.sleep_read_data != "unknown"
        out.append(
            CoverPoint(
                f"{MEMORY}:power.sleep",
                "a sleep episode",
                "yes" if keep else "partly",
                "" if keep else "contents kept are checked; read data during it is unknown (sleep_read_data)",
            )
        )
    if p is not None and p.shutdown is not None:
        out.append(
            CoverPoint(
                f"{MEMORY}:power.shutdown",
                "a shutdown episode",
                "no",
                "every word is unknown after it; only accesses after wake-up are checked",
            )
        )
    return out


def cover_points(contract: Contract) -> tuple[CoverPoint, ...]:
    """Every cover point reachable on ``contract``, ports in contract order, then pairs, then memory."""
    out: list[CoverPoint] = []
    for port in contract.ports:
        out += port_points(contract, port)
    out += pair_points(contract)
    out += memory_points(contract)
    return tuple(out)
