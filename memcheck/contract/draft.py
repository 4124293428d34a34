"""A contract skeleton drafted from a top module's pin list (``memcheck contract draft``).

Pure: takes the pins (name, direction, width) as the simulator elaborated them and guesses, from
name patterns and widths, which pin is a clock, reset, enable, write enable, address, write data,
read data or lane enable, which pins belong to one port (by the parts of their names other than
the role: ``addr_a`` and ``we_a`` are port ``a``), and which controls are active low (a trailing
``_n``/``_b`` part or a trailing ``n`` on a known control name: ``cs_n``, ``cen``, ``wen``). The
geometry follows from the widths: words from the address width, width from the data width, lane
width from the lane-enable width. Nothing here is certain: every guess is marked "check this" in
the rendered TOML, and the behaviour keys a pin list cannot tell are written with their defaults
and what each means. These name patterns are common practice, not a standard.
"""

from __future__ import annotations

import json
import os
from collections.abc import Sequence
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Literal

from memcheck.errors import ContractError

Direction = Literal["input", "output", "inout"]
PinRole = Literal["clock", "reset", "enable", "write_enable", "address", "write_data", "read_data", "lane_enable"]


@dataclass(frozen=True)
class DraftPin:
    """One port of the top module: name, direction and width after elaboration."""

    name: str
    direction: Direction
    width: int


@dataclass(frozen=True)
class Guess:
    """What the draft makes of one pin: its role, its port group, whether it is active low, and why."""

    pin: DraftPin
    role: PinRole | None
    group: str
    active_low: bool
    why: str


@dataclass(frozen=True)
class DraftPort:
    """One drafted ``[[port]]`` table: role -> pin name, plus the reasons to show beside each."""

    name: str
    role: Literal["readwrite", "read", "write"]
    clock: str
    pins: tuple[tuple[str, str], ...]
    active_low: tuple[str, ...]
    notes: tuple[str, ...] = ()
    #: The name is the pins' shared name part (``a`` of ``addr_a``), not a made-up one.
    from_pins: bool = False

    def pin(self, role: str) -> str | None:
        return dict(self.pins).get(role)


@dataclass(frozen=True)
class Draft:
    """A drafted contract: geometry, ports, reset and what the draft left out."""

    top: str
    words: int
    width: int
    lane_key: tuple[str, int] | None
    ports: tuple[DraftPort, ...]
    reset: tuple[str, bool] | None
    left_out: tuple[str, ...] = ()
    why: dict[str, str] = field(default_factory=dict)


# -- name patterns (common practice, not a standard) -------------------------------------------

_WORDS: dict[str, PinRole] = {
    **dict.fromkeys(("clk", "clock", "ck"), "clock"),
    **dict.fromkeys(("rst", "reset", "rstb"), "reset"),
    **dict.fromkeys(("en", "ena", "enable", "ce", "cs", "me", "sel", "req", "re", "ren", "chipsel"), "enable"),
    **dict.fromkeys(("we", "wren", "wr_en", "write"), "write_enable"),
    **dict.fromkeys(("addr", "address", "adr", "ad", "a"), "address"),
    **dict.fromkeys(("wdata", "din", "d", "wd", "di", "data_in"), "write_data"),
    **dict.fromkeys(("rdata", "dout", "q", "do", "rdat", "data_out"), "read_data"),
    **dict.fromkeys(("be", "bwe", "wm", "wmask", "mask", "strb", "wstrb", "byteen", "lwe", "bm", "ble"), "lane_enable"),
}
#: Role words that need a trailing "n" to be active-low forms of the word (cen = ce + n).
_LOW_SUFFIXES = ("n", "b")
#: Parts that say "which port" rather than "what pin" when alone, and mean data when paired.
_DATA_WORDS = ("data", "dat")
_CONTROLS: tuple[PinRole, ...] = ("enable", "write_enable", "lane_enable", "reset")


def _tokens(name: str) -> list[str]:
    """Lower-case name parts; ``clka`` splits into ``clk``, ``a`` (a per-port clock)."""
    out: list[str] = []
    for t in name.lower().split("_"):
        if len(t) == 4 and t.startswith("clk") and t[3].isalnum():
            out += ["clk", t[3]]
        elif t:
            out.append(t)
    return out


def _role_word(token: str) -> tuple[PinRole | None, bool]:
    """(role, active low) a single name part stands for: ``cen`` is an active-low ``ce``."""
    if token in _WORDS:
        return _WORDS[token], False
    for suffix in _LOW_SUFFIXES:
        base = token[: -len(suffix)]
        if token.endswith(suffix) and len(base) >= 2 and _WORDS.get(base) in _CONTROLS:
            return _WORDS[base], True
    return None, False


def classify(pin: DraftPin, names: frozenset[str]) -> Guess:
    """The role, port group and polarity of one pin from its name alone (None when the name says nothing).

    A trailing ``_n`` or ``_b`` part marks an active-low control; ``_b`` beside a matching ``_a``
    pin, and either part on a pin that is not a control (``addr_b``), names a port instead.
    """
    tokens = _tokens(pin.name)
    if len(tokens) > 1 and tokens[-1] in _LOW_SUFFIXES:
        paired = pin.name.lower()[: -len(tokens[-1])] + "a"  # en_b beside en_a: b names a port, not a polarity
        if tokens[-1] == "n" or paired not in names:
            g = _from_tokens(pin, tokens[:-1])
            if g.role in _CONTROLS:
                return Guess(pin, g.role, g.group, True, f"{g.why}, trailing _{tokens[-1]}")
    return _from_tokens(pin, tokens)


def _from_tokens(pin: DraftPin, tokens: list[str]) -> Guess:
    found = [(i, *_role_word(t)) for i, t in enumerate(tokens)]
    found = [f for f in found if f[1] is not None]
    if found:
        i, role, low = max(found, key=lambda f: (len(tokens[f[0]]), -f[0]))
        assert role is not None
        group = "_".join(t for k, t in enumerate(tokens) if k != i)
        why = f"name part {tokens[i]!r}" + (", trailing n" if low else "")
        return Guess(pin, _by_direction(role, pin), group, low, why)
    for i, t in enumerate(tokens):
        if t in _DATA_WORDS:
            data: PinRole = "read_data" if pin.direction == "output" else "write_data"
            return Guess(pin, data, "_".join(tokens[:i] + tokens[i + 1 :]), False, f"name part {t!r}")
    return Guess(pin, None, "", False, "")


def _by_direction(role: PinRole, pin: DraftPin) -> PinRole:
    """Outputs are read data whatever their name; a write enable wider than 1 bit is a lane enable."""
    if pin.direction == "output":
        return "read_data"
    if role in ("enable", "write_enable", "clock", "reset") and pin.width > 1:
        return "lane_enable" if role == "write_enable" else role
    if role == "read_data":
        return "write_data"
    return role


def _data_width(guesses: Sequence[Guess]) -> int:
    """The most common output width (outputs are read data), else the most common write-data width."""
    for pick in (
        [g.pin.width for g in guesses if g.pin.direction == "output"],
        [g.pin.width for g in guesses if g.role == "write_data"],
    ):
        if pick:
            return max(set(pick), key=pick.count)
    return 1


def _fill_unnamed(guesses: list[Guess], width: int) -> list[Guess]:
    """Pins the names say nothing about, by direction and width: outputs are read data, data-wide
    inputs write data, other multi-bit inputs addresses; each joins the port whose name part it has."""
    known = {g.group for g in guesses if g.role is not None and g.group}
    out = []
    for g in guesses:
        if g.role is None and (g.pin.direction == "output" or g.pin.width > 1):
            parts = _tokens(g.pin.name)
            matches = [k for k in sorted(known, key=len, reverse=True) if set(k.split("_")) <= set(parts)]
            group = matches[0] if matches else "_".join(parts[:-1])
            role: PinRole
            if g.pin.direction == "output":
                role, why = "read_data", "an output"
            elif g.pin.width == width:
                role, why = "write_data", f"an input {width} bits wide like the read data"
            else:
                role, why = "address", f"an input {g.pin.width} bits wide, not data-wide"
            g = Guess(g.pin, role, group, g.active_low, why)
        out.append(g)
    return out


def _groups(guesses: Sequence[Guess]) -> dict[str, list[Guess]]:
    """Port groups; pins of a group without an address join the group without a name part."""
    groups: dict[str, list[Guess]] = {}
    for g in guesses:
        if g.role not in (None, "clock", "reset"):
            groups.setdefault(g.group, []).append(g)
    has_addr = {k for k, gs in groups.items() if any(g.role == "address" for g in gs)}
    if "" in has_addr:
        for k in [k for k in groups if k not in has_addr]:
            groups[""].extend(groups.pop(k))
    elif "" in groups and len(groups) == 2:
        other = next(k for k in groups if k)
        groups[other].extend(groups.pop(""))
    return groups


# -- ports and geometry -------------------------------------------------------------------------


def _lane_key(groups: dict[str, list[Guess]], width: int) -> tuple[tuple[str, int] | None, str]:
    """``("lane_width", n)`` or ``("bit_mask", 1)`` from the lane-enable widths, or None and why not."""
    writers = [gs for gs in groups.values() if any(g.role == "write_data" for g in gs)]
    lanes = [next((g.pin.width for g in gs if g.role == "lane_enable"), None) for gs in writers]
    if not any(lanes):
        return None, ""
    if None in lanes or len(set(lanes)) > 1:
        return None, "lane enables left out: not every writing port has one of the same width"
    n = lanes[0]
    assert n is not None
    if n == width:
        return ("bit_mask", 1), f"one lane-enable bit per data bit ({n} of {width})"
    if width % n:
        return None, f"lane enables left out: {n} bits do not divide the {width}-bit data evenly"
    return ("lane_width", width // n), f"{width} data bits / {n} lane-enable bits"


def _clock_for(group: str, clocks: Sequence[Guess]) -> str | None:
    for want in (group, ""):
        for c in clocks:
            if c.group == want:
                return c.pin.name
    return clocks[0].pin.name if clocks else None


def _pick(gs: Sequence[Guess], role: PinRole) -> Guess | None:
    return next((g for g in gs if g.role == role), None)


def _port_role(read: Guess | None, wdata: Guess | None) -> Literal["readwrite", "read", "write"] | None:
    if read and wdata:
        return "readwrite"
    return "read" if read else "write" if wdata else None


def _port(name: str, gs: Sequence[Guess], clock: str, lanes: bool) -> tuple[DraftPort | None, list[str]]:
    """One port from one group of pins, or None (and why) when the group makes no port."""
    picked = {r: _pick(gs, r) for r in ("enable", "write_enable", "address", "write_data", "read_data", "lane_enable")}
    role = _port_role(picked["read_data"], picked["write_data"])
    pins_txt = ", ".join(g.pin.name for g in gs)
    if role is None or picked["address"] is None:
        return None, [f"{pins_txt}: no address or no data pin, so no port drafted"]
    notes: list[str] = []
    if not lanes:
        picked["lane_enable"] = None
    if role == "readwrite" and picked["write_enable"] is None and picked["lane_enable"] is None:
        wdata = picked["write_data"]
        assert wdata is not None
        notes.append(f"no write enable found, so a read port; write data {wdata.pin.name!r} left out")
        role, picked["write_data"] = "read", None
    if role == "write" and picked["enable"] is None:
        picked["enable"], picked["write_enable"] = picked["write_enable"], None
        if picked["enable"] is None:
            return None, [f"{pins_txt}: a write port needs an enable (its write strobe); none found"]
    if role != "readwrite" and picked["write_enable"] is not None:
        notes.append(f"{picked['write_enable'].pin.name!r} left out: a {role} port has no write enable")
        picked["write_enable"] = None
    if role == "read":
        picked["lane_enable"] = None
    pins = tuple((r, g.pin.name) for r, g in picked.items() if g is not None)
    low = tuple(g.pin.name for r, g in picked.items() if g is not None and g.active_low and r in _CONTROLS)
    used = {g.pin.name for g in picked.values() if g is not None}
    notes += [f"{g.pin.name!r} left out (another pin already has its role)" for g in gs if g.pin.name not in used]
    return DraftPort(name, role, clock, pins, low, tuple(notes)), []


def _port_names(keys: Sequence[str]) -> list[str]:
    names: list[str] = []
    for k in keys:
        name = k or "a"
        while name in names or (not k and name in keys):
            name = f"p{len(names)}"
        names.append(name)
    return names


def build_draft(pins: Sequence[DraftPin], top: str) -> Draft:
    """The contract the pin list suggests (see the module docstring for the rules)."""
    names = frozenset(p.name.lower() for p in pins)
    guesses = [classify(p, names) for p in pins]
    width = _data_width(guesses)
    guesses = _fill_unnamed(guesses, width)
    one_bit_inputs = [g for g in guesses if g.pin.direction != "output" and g.pin.width == 1]
    clocks = [g for g in one_bit_inputs if g.role == "clock"]
    resets = [g for g in one_bit_inputs if g.role == "reset"]
    groups = _groups(guesses)
    lane_key, lane_why = _lane_key(groups, width)
    ports: list[DraftPort] = []
    left_out: list[str] = [lane_why] if lane_key is None and lane_why else []
    keys = sorted(groups)
    for key, name in zip(keys, _port_names(keys), strict=True):
        clock = _clock_for(key, clocks) or "clk"
        port, dropped = _port(name, groups[key], clock, lane_key is not None)
        left_out += dropped
        if port is not None:
            ports.append(replace(port, from_pins=bool(key)))
    if not ports:
        listed = "; ".join(f"{p.direction} [{p.width}] {p.name}" for p in pins) or "(none)"
        raise ContractError(
            f"no memory port could be drafted from the pins of {top!r} (a port needs an address and read or "
            f"write data); its pins are: {listed}."
        )
    if not clocks:
        left_out.append("no clock pin found: the ports name 'clk'; set the real clock pin")
    used = {pin for p in ports for _, pin in p.pins} | {p.clock for p in ports}
    reset = (resets[0].pin.name, resets[0].active_low) if resets else None
    used |= {reset[0]} if reset else set()
    spare = [g.pin.name for g in guesses if g.pin.name not in used and g.pin.direction != "output"]
    if spare:
        left_out.append(f"inputs not used by the draft (tie them with [rtl] tie if they matter): {', '.join(spare)}")
    addr = max((dict(p.pins).get("address", "") for p in ports), key=lambda n: _width(pins, n), default="")
    why = {g.pin.name: g.why for g in guesses}
    if lane_key is not None:
        why["[lanes]"] = lane_why
    words = 1 << _width(pins, addr) if addr else 1
    return Draft(top, words, width, lane_key, tuple(ports), reset, tuple(left_out), why)


def _width(pins: Sequence[DraftPin], name: str) -> int:
    return next((p.width for p in pins if p.name == name), 0)


# -- TOML text ------------------------------------------------------------------------------------

_CHECK = "# check this: "
#: The behaviour keys no pin list can tell: key, default, what it means (see docs/contract.md).
_BEHAVIOUR = (
    ("read_latency", "1", "rising edges from the edge that samples a read to the edge that samples its data (0-4)"),
    (
        "read_during_write",
        '"unknown"',
        'a readwrite port\'s read data in a cycle it writes: "old", "new", "keep" or "unknown" (not promised)',
    ),
    (
        "collision",
        '"unknown"',
        'a read of the address another port writes on the same edge: "old", "new" or "unknown"',
    ),
    (
        "write_collision",
        '"unknown"',
        'two ports writing one address on one edge: "first" listed port wins, or "unknown"',
    ),
    ("initial", '"unknown"', 'contents at power-up or after the reset: "unknown" or "zero"'),
    ("idle_read_data", '"unknown"', 'read data after an edge that issued no read: "keep" (held) or "unknown"'),
)


def _q(text: str) -> str:
    """A TOML basic string (JSON string syntax is a subset for these names)."""
    return json.dumps(text)


def _line(key: str, value: str, comment: str = "") -> str:
    text = f"{key} = {value}"
    return f"{text:<33} {_CHECK}{comment}" if comment else text


def _memory_lines(d: Draft) -> list[str]:
    data = next((pin for p in d.ports for r, pin in p.pins if r == "read_data"), None)
    data = data or next((pin for p in d.ports for r, pin in p.pins if r == "write_data"), "?")
    addr_bits = d.words.bit_length() - 1
    out = [
        "[memory]",
        _line("words", str(d.words), f"2^{addr_bits} from the {addr_bits}-bit address; set the real depth"),
        _line("width", str(d.width), f"the width of {data!r}"),
    ]
    if d.lane_key is not None:
        key, value = d.lane_key
        out.append(_line(key, "true" if key == "bit_mask" else str(value), d.why.get("[lanes]", "")))
    for key, default, meaning in _BEHAVIOUR:
        out += [f"# {key}: {meaning}.", f"{key} = {default}"]
    return out


def _port_lines(p: DraftPort, why: dict[str, str]) -> list[str]:
    roles = {"readwrite": "read data and write data", "read": "read data only", "write": "write data only"}
    out = [
        "[[port]]",
        _line("name", _q(p.name), "the pins' shared name part" if p.from_pins else "any name will do"),
        _line("role", _q(p.role), f"the port has {roles[p.role]}"),
        _line("clock", _q(p.clock), why.get(p.clock, "the only clock found") or "the only clock found"),
    ]
    for role, pin in p.pins:
        out.append(_line(role, _q(pin), why.get(pin, "")))
    if p.active_low:
        out.append(_line("active_low", "[" + ", ".join(map(_q, p.active_low)) + "]", "a _n/_b/n name ending"))
    out += [f"# note: {n}" for n in p.notes]
    return out


def render_draft(d: Draft, sources: Sequence[str]) -> str:
    """The draft as contract TOML, every guess marked "check this"."""
    head = [
        f"# Contract skeleton drafted by `memcheck contract draft` from the pins of module {d.top!r}.",
        '# Lines marked "check this" are guesses from pin names and widths (common naming practice);',
        "# the behaviour keys under [memory] cannot be read from pins: they hold their defaults until you",
        "# set them. Next: `memcheck contract validate` on this file, then `memcheck check`.",
    ]
    head += [f"# left out: {n}" for n in d.left_out]
    parts = [head, _memory_lines(d)]
    parts.append(["[rtl]", f"sources = [{', '.join(map(_q, sources))}]", f"top = {_q(d.top)}"])
    if d.reset is not None:
        sig, low = d.reset
        parts.append(
            [
                "[reset]",
                _line("signal", _q(sig), d.why.get(sig, "")),
                _line("active_low", "true" if low else "false", "a _n/_b/n name ending" if low else "no _n ending"),
                "# cycles: how many clock cycles the reset is held before checking starts.",
                "cycles = 2",
            ]
        )
    parts += [_port_lines(p, d.why) for p in d.ports]
    return "\n\n".join("\n".join(p) for p in parts) + "\n"


def relative_sources(sources: Sequence[Path], contract_dir: Path) -> list[str]:
    """Source paths as the contract file must list them: relative to its folder."""
    return [Path(os.path.relpath(Path(s).resolve(), contract_dir.resolve())).as_posix() for s in sources]
