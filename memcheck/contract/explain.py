"""A contract in words: what each key promises for this memory, and what it leaves unchecked."""

from __future__ import annotations

from collections.abc import Mapping

from memcheck.contract.spec import Contract


def unchecked_behaviours(c: Contract, pin_widths: Mapping[str, int] | None = None) -> list[str]:
    """Behaviours the contract leaves unknown (never checked), for behaviours this memory can have.

    ``pin_widths`` (pin -> width, as the RTL declares them; None when not known) drops what the
    RTL cannot have: the undriven upper address bits of address pins exactly as wide as ``words``
    needs.
    """
    return _single_clock_unchecked(c, pin_widths) + _clock_unchecked(c) + _power_unchecked(c)


def _wider_address_pins(c: Contract, pin_widths: Mapping[str, int] | None) -> bool:
    """Whether some address pin has bits above the ones ``words`` needs (unknown widths: assume so)."""
    if pin_widths is None:
        return True
    bits = c.memory.address_bits
    return any(pin_widths.get(p.address, bits + 1) > bits for p in c.ports)


def _single_clock_unchecked(c: Contract, pin_widths: Mapping[str, int] | None = None) -> list[str]:
    m = c.memory
    out: list[str] = []
    writers = [p for p in c.ports if p.can_write]
    readers = [p for p in c.ports if p.can_read]
    if any(p.role == "readwrite" for p in c.ports) and m.read_during_write == "unknown":
        out.append("read data of a readwrite port in a cycle that writes (read_during_write)")
    if m.collision == "unknown" and any(r is not w for r in readers for w in writers):
        out.append("read data when another port writes the same address on the same edge (collision)")
    if m.write_collision == "unknown" and len(writers) > 1:
        out.append("contents after two ports write the same address on the same edge (write_collision)")
    if m.initial == "unknown":
        out.append("contents of words never written (initial)")
    if m.idle_read_data == "unknown" and any(p.can_read and p.can_idle for p in c.ports):
        out.append("read data after an edge that issued no read (idle_read_data)")
    if m.out_of_range == "unchecked":
        if m.words < (1 << m.address_bits):
            out.append(
                f"read data of addresses {m.words}..{(1 << m.address_bits) - 1} (beyond words; writes there "
                "must still change nothing)"
            )
        if _wider_address_pins(c, pin_widths):
            out.append(f"address pin bits above bit {m.address_bits - 1}: held at 0, never driven (out_of_range)")
    elif m.out_of_range == "ignore":
        out.append('read data of addresses at or beyond words (out_of_range = "ignore")')
    return out


def _clock_unchecked(c: Contract) -> list[str]:
    m = c.memory
    sample = c.timing.sample
    out: list[str] = []
    if sample is not None and any(p.can_read for p in c.ports):
        out.append(
            f"read data from the edge to {sample} ns after it, and after that ([timing] sample): only the "
            "value at the sample point is compared"
        )
    if c.lockstep:
        return out
    writers = [p for p in c.ports if p.can_write]
    cross = [(r, w) for r in c.ports if r.can_read for w in writers if w.clock != r.clock]
    if cross and m.read_latency == 0:
        out.append("a combinational read while a port on another clock writes the same address inside the read's cycle")
    if cross and m.collision_window > 0:
        out.append(
            f"read data when a port on another clock writes the same address less than {m.collision_window} ns "
            "away (collision_window)"
        )
    if m.collision_window > 0 and len({w.clock for w in writers}) > 1:
        out.append(
            f"contents after ports on different clocks write one address less than {m.collision_window} ns "
            "apart (collision_window)"
        )
    return out


def _power_unchecked(c: Contract) -> list[str]:
    pw = c.power
    if pw is None:
        return []
    out: list[str] = []
    if pw.sleep_read_data == "unknown":
        out.append("read data while asleep or shut down (sleep_read_data)")
    if pw.wake_cycles:
        out.append(f"accesses and read data on the first {pw.wake_cycles} edge(s) after wake-up (wake_cycles)")
    out.append("read data after wake-up until the first read after it completes")
    if pw.shutdown is not None:
        out.append("contents after a shutdown (every word unknown until written)")
    if pw.effect == "immediate":
        out.append('read data in a cycle in which a power pin changes (effect = "immediate")')
    return out


def key_explanations(c: Contract) -> list[tuple[str, str]]:
    """(key, meaning for this memory) for the keys beyond a plain single-clock memory."""
    out: list[tuple[str, str]] = []
    out += _clock_lines(c)
    out += _memory_lines(c)
    out += _power_lines(c)
    if c.rtl is not None and c.rtl.tie:
        ties = ", ".join(f"{k} = {v}" for k, v in c.rtl.tie.items())
        out.append(("[rtl] tie", f"held constant for the whole run: {ties}"))
    return out


def _clock_lines(c: Contract) -> list[tuple[str, str]]:
    out: list[tuple[str, str]] = []
    for clock in c.port_clocks:
        users = [p.name for p in c.ports if p.clock == clock.name]
        who = f"port {users[0]} steps" if len(users) == 1 else f"ports {', '.join(users)} step"
        out.append(
            (f"clock {clock.name}", f"rising edges at {clock.phase} + k x {clock.period} ns; {who} on these edges")
        )
    if not c.lockstep:
        out.append(
            (
                "clocks",
                "ports step on their own clock's edges; read latency counts the port's own edges; edges of "
                "different clocks at the same instant are simultaneous (collision rules apply)",
            )
        )
    t = c.timing
    when = (
        f"{t.sample} ns after the rising edge that begins the cycle in which it is due"
        if t.sample is not None
        else "just before the port clock's next rising edge"
    )
    out.append(("[timing] sample", f"read data is sampled {when}; what it shows before or after that is not checked"))
    out.append(("[timing] timescale", f"{t.timescale} for RTL files without a `timescale directive"))
    return out


def _memory_lines(c: Contract) -> list[tuple[str, str]]:
    m = c.memory
    out: list[tuple[str, str]] = []
    if m.lane_map is not None:
        spans = []
        lo = 0
        for i, w in enumerate(m.lane_map):
            spans.append(f"lane {i} = bits {lo + w - 1}:{lo}" if w > 1 else f"lane {i} = bit {lo}")
            lo += w
        out.append(("[memory] lanes", "; ".join(spans)))
    for p in c.ports:
        if p.any_lane_write:
            out.append(
                (
                    f"port {p.name} writes",
                    "no write_enable: an access with any lane enable active writes those lanes; with none "
                    "active it reads",
                )
            )
    oor = {
        "unchecked": f"only the low {m.address_bits} address bit(s) are driven; upper address pin bits stay 0",
        "ignore": "address pins are driven over their full width; writes at or beyond words change nothing, "
        "reads there are unknown",
        "wrap": f"address pins are driven over their full width; only the low {m.address_bits} bit(s) decode, "
        f"so address a selects word a mod {m.words}",
    }
    out.append(("[memory] out_of_range", f"{m.out_of_range}: {oor[m.out_of_range]}"))
    if c.lockstep and m.collision_window:
        out.append(("[memory] collision_window", "changes nothing here: every port clock has the same edges"))
    if not c.lockstep:
        window = m.collision_window
        out.append(
            (
                "[memory] collision_window",
                f"{window} ns: accesses to one address from ports on different clocks less than {window} ns "
                "apart collide"
                if window
                else "0 ns: only edges at the same instant collide",
            )
        )
    return out


def _power_lines(c: Contract) -> list[tuple[str, str]]:
    pw = c.power
    if pw is None:
        return []
    out: list[tuple[str, str]] = []
    for role, pin in pw.pins().items():
        level = "low" if pin in pw.active_low else "high"
        does = (
            "contents kept, accesses ignored"
            if role == "sleep"
            else "every word becomes unknown, accesses ignored (dominates sleep)"
        )
        out.append((f"[power] {role}", f"{pin} (active {level}), sampled by rising edges: {does}"))
    out.append(("[power] wake_cycles", f"{pw.wake_cycles} edge(s) after both pins deassert make no access"))
    out.append(
        ("[power] sleep_read_data", f"read data due after an edge that sampled a power pin: {pw.sleep_read_data}")
    )
    effect = (
        "pins act at the edge that samples them"
        if pw.effect == "edge"
        else "read data may change as soon as a pin changes: that cycle's read data is not promised"
    )
    out.append(("[power] effect", f"{pw.effect}: {effect}"))
    return out
