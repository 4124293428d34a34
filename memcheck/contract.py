"""The memory contract: what a wrapper promises, loaded from TOML into frozen dataclasses.

Every malformed file is rejected with one :class:`ContractError` that names the file,
the key and what is allowed, so a user can fix it without reading our code.
"""

from __future__ import annotations

import difflib
import math
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from pathlib import Path
from types import MappingProxyType
from typing import Any, Literal, cast

from memcheck.errors import ContractError

Role = Literal["readwrite", "read", "write"]
ReadDuringWrite = Literal["old", "new", "keep", "unknown"]
Collision = Literal["old", "new", "unknown"]
WriteCollision = Literal["unknown", "first"]
Initial = Literal["unknown", "zero"]
IdleReadData = Literal["keep", "unknown"]

ROLES: tuple[str, ...] = ("readwrite", "read", "write")
READ_DURING_WRITE: tuple[str, ...] = ("old", "new", "keep", "unknown")
COLLISION: tuple[str, ...] = ("old", "new", "unknown")
WRITE_COLLISION: tuple[str, ...] = ("unknown", "first")
INITIAL: tuple[str, ...] = ("unknown", "zero")
IDLE_READ_DATA: tuple[str, ...] = ("keep", "unknown")

MAX_WIDTH = 1024
MAX_LATENCY = 4
MAX_WORDS = 1 << 32


@dataclass(frozen=True)
class MemorySpec:
    """Geometry and behaviour of the memory the wrapper promises."""

    words: int
    width: int
    lane_width: int | None = None
    bit_mask: bool = False
    read_latency: int = 1
    read_during_write: ReadDuringWrite = "unknown"
    collision: Collision = "unknown"
    write_collision: WriteCollision = "unknown"
    initial: Initial = "unknown"
    idle_read_data: IdleReadData = "unknown"

    @property
    def lanes(self) -> int:
        """Number of write-mask bits per port: lanes, data bits (bit_mask), or 0 for whole-word."""
        if self.bit_mask:
            return self.width
        if self.lane_width is not None:
            return self.width // self.lane_width
        return 0

    @property
    def bits_per_lane(self) -> int:
        if self.bit_mask:
            return 1
        return self.lane_width if self.lane_width is not None else self.width

    @property
    def word_mask(self) -> int:
        return (1 << self.width) - 1

    @property
    def all_lanes(self) -> int:
        """The lane-enable value that writes every bit (1 when writes are whole-word)."""
        return (1 << max(self.lanes, 1)) - 1

    @property
    def address_bits(self) -> int:
        """Minimum address pin width that reaches every word."""
        return max(1, math.ceil(math.log2(self.words))) if self.words > 1 else 1

    def lane_bits(self, lanes: int) -> int:
        """Expand a lane-enable value to the mask of data bits it writes."""
        if self.lanes == 0:
            return self.word_mask if lanes & 1 else 0
        if self.bit_mask:
            return lanes & self.word_mask
        per = self.bits_per_lane
        lane_ones = (1 << per) - 1
        bits = 0
        for lane in range(self.lanes):
            if lanes >> lane & 1:
                bits |= lane_ones << (lane * per)
        return bits


@dataclass(frozen=True)
class RtlSpec:
    """Where the wrapper RTL lives and how to elaborate it."""

    sources: tuple[Path, ...]
    top: str
    parameters: Mapping[str, int | str] = field(default_factory=lambda: MappingProxyType({}))
    defines: Mapping[str, int | str] = field(default_factory=lambda: MappingProxyType({}))
    include_dirs: tuple[Path, ...] = ()


@dataclass(frozen=True)
class ResetSpec:
    """An optional reset sequence applied before checking."""

    signal: str
    active_low: bool = True
    cycles: int = 2


@dataclass(frozen=True)
class PortSpec:
    """One port of the memory and the top-level pins that carry it."""

    name: str
    role: Role
    clock: str
    address: str
    enable: str | None = None
    write_enable: str | None = None
    write_data: str | None = None
    lane_enable: str | None = None
    read_data: str | None = None
    active_low: frozenset[str] = frozenset()

    @property
    def can_read(self) -> bool:
        return self.role in ("readwrite", "read")

    @property
    def can_write(self) -> bool:
        return self.role in ("readwrite", "write")

    @property
    def can_idle(self) -> bool:
        """A port can do nothing on an edge only when it has an enable pin."""
        return self.enable is not None

    def pins(self) -> dict[str, str]:
        """Pin role -> top-level signal name, for the pins this port uses."""
        names = {
            "clock": self.clock,
            "address": self.address,
            "enable": self.enable,
            "write_enable": self.write_enable,
            "write_data": self.write_data,
            "lane_enable": self.lane_enable,
            "read_data": self.read_data,
        }
        return {k: v for k, v in names.items() if v is not None}


@dataclass(frozen=True)
class Contract:
    """A whole contract: memory behaviour, ports, and (when loaded from a file) RTL and reset."""

    memory: MemorySpec
    ports: tuple[PortSpec, ...]
    rtl: RtlSpec | None = None
    reset: ResetSpec | None = None
    path: Path | None = None

    @property
    def clock(self) -> str:
        return self.ports[0].clock

    def port(self, name: str) -> PortSpec:
        for p in self.ports:
            if p.name == name:
                return p
        raise KeyError(name)

    @property
    def multi_port(self) -> bool:
        return len(self.ports) > 1

    def unchecked_behaviours(self) -> list[str]:
        """Behaviours this contract leaves "unknown", phrased for a report.

        Only behaviours that can occur on this memory are listed, so a user sees exactly
        what the contract does not promise.
        """
        m = self.memory
        out: list[str] = []
        rw_ports = [p for p in self.ports if p.role == "readwrite"]
        writers = [p for p in self.ports if p.can_write]
        readers = [p for p in self.ports if p.can_read]
        if rw_ports and m.read_during_write == "unknown":
            out.append("read data of a readwrite port in a cycle that writes (read_during_write)")
        if m.collision == "unknown" and writers and readers and any(r is not w for r in readers for w in writers):
            out.append("read data when another port writes the same address on the same edge (collision)")
        if m.write_collision == "unknown" and len(writers) > 1:
            out.append("contents after two ports write the same address on the same edge (write_collision)")
        if m.initial == "unknown":
            out.append("contents of words never written (initial)")
        if m.idle_read_data == "unknown":
            out.append("read data after an edge that issued no read (idle_read_data)")
        if m.words < (1 << m.address_bits):
            out.append(f"reads and writes of addresses {m.words}..{(1 << m.address_bits) - 1} (beyond words)")
        return out

    @classmethod
    def simple(
        cls,
        words: int,
        width: int,
        *,
        enable: bool = True,
        **memory: Any,
    ) -> Contract:
        """A one-port readwrite contract without RTL: handy for models and March work in Python."""
        spec = _build_memory({"words": words, "width": width, **memory}, "<simple>")
        port = PortSpec(
            name="a",
            role="readwrite",
            clock="clk",
            address="addr",
            enable="en" if enable else None,
            write_enable="we",
            write_data="wdata",
            lane_enable="be" if spec.lanes else None,
            read_data="rdata",
        )
        return cls(memory=spec, ports=(port,))

    def with_memory(self, **changes: Any) -> Contract:
        """A copy with some memory keys changed (validated like a file)."""
        current = {f: getattr(self.memory, f) for f in _MEMORY_KEYS}
        current.update(changes)
        data = {k: v for k, v in current.items() if v is not None}
        return replace(self, memory=_build_memory(data, str(self.path or "<contract>")))


# ---------------------------------------------------------------------------------------
# Loading and validation
# ---------------------------------------------------------------------------------------

_MEMORY_KEYS = (
    "words",
    "width",
    "lane_width",
    "bit_mask",
    "read_latency",
    "read_during_write",
    "collision",
    "write_collision",
    "initial",
    "idle_read_data",
)
_RTL_KEYS = ("sources", "top", "parameters", "defines", "include_dirs")
_RESET_KEYS = ("signal", "active_low", "cycles")
_PORT_KEYS = (
    "name",
    "role",
    "clock",
    "enable",
    "write_enable",
    "address",
    "write_data",
    "lane_enable",
    "read_data",
    "active_low",
)
_TOP_KEYS = ("memory", "rtl", "reset", "port")


def load_contract(path: str | Path, *, check_sources: bool = True) -> Contract:
    """Read and validate a contract file; RTL paths are resolved relative to it."""
    p = Path(path)
    try:
        raw = p.read_bytes()
    except OSError as exc:
        raise ContractError(f"{p}: cannot read the contract file ({exc.strerror or exc}).") from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        raise ContractError(f"{p}: the contract file is not UTF-8 text.") from None
    return parse_contract(text, source=str(p), base_dir=p.resolve().parent, check_sources=check_sources, path=p)


def parse_contract(
    text: str,
    *,
    source: str = "<contract>",
    base_dir: Path | None = None,
    check_sources: bool = False,
    path: Path | None = None,
) -> Contract:
    """Validate contract TOML text. ``source`` names the file in error messages."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ContractError(f"{source}: not valid TOML ({exc}).") from None
    return contract_from_dict(data, source=source, base_dir=base_dir, check_sources=check_sources, path=path)


def contract_from_dict(
    data: Mapping[str, Any],
    *,
    source: str = "<contract>",
    base_dir: Path | None = None,
    check_sources: bool = False,
    path: Path | None = None,
) -> Contract:
    """Validate an already-parsed TOML document."""
    _reject_unknown(data, _TOP_KEYS, source, "")
    memory_tbl = _table(data, "memory", source, required=True)
    assert memory_tbl is not None
    memory = _build_memory(memory_tbl, source)
    rtl = _build_rtl(_table(data, "rtl", source, required=True), source, base_dir, check_sources)
    reset_tbl = _table(data, "reset", source, required=False)
    reset = _build_reset(reset_tbl, source) if reset_tbl is not None else None
    ports_raw = data.get("port")
    if ports_raw is None:
        raise ContractError(
            f"{source}: no [[port]] table; allowed: one [[port]] table per port, each with "
            "name, role, clock, address and the pins its role needs."
        )
    if not isinstance(ports_raw, list) or not all(isinstance(p, dict) for p in ports_raw):
        raise ContractError(f"{source}: 'port' must be an array of tables written as [[port]].")
    if not ports_raw:
        raise ContractError(f"{source}: at least one [[port]] table is required.")
    ports = tuple(_build_port(p, i, memory, source) for i, p in enumerate(ports_raw))
    _check_ports_together(ports, reset, source)
    return Contract(memory=memory, ports=ports, rtl=rtl, reset=reset, path=path)


def _where(section: str, key: str) -> str:
    return f"[{section}] {key}" if section else key


def _reject_unknown(tbl: Mapping[str, Any], allowed: tuple[str, ...], source: str, section: str) -> None:
    for key in tbl:
        if key not in allowed:
            close = difflib.get_close_matches(key, allowed, n=1, cutoff=0.6)
            hint = f" Did you mean '{close[0]}'?" if close else ""
            raise ContractError(
                f"{source}: unknown key {_where(section, key)!r}.{hint} "
                f"Allowed keys{' in [' + section + ']' if section else ''}: {', '.join(allowed)}."
            )


def _table(data: Mapping[str, Any], name: str, source: str, *, required: bool) -> dict[str, Any] | None:
    tbl = data.get(name)
    if tbl is None:
        if required:
            raise ContractError(f"{source}: missing the [{name}] table, which is required.")
        return None
    if not isinstance(tbl, dict):
        raise ContractError(f"{source}: '{name}' must be a table written as [{name}].")
    return tbl


def _get_int(
    tbl: Mapping[str, Any],
    key: str,
    source: str,
    section: str,
    *,
    lo: int,
    hi: int,
    default: int | None = None,
    required: bool = False,
) -> int | None:
    if key not in tbl:
        if required:
            raise ContractError(
                f"{source}: missing required key {_where(section, key)}; allowed: an integer {lo}..{hi}."
            )
        return default
    v = tbl[key]
    if isinstance(v, bool) or not isinstance(v, int):
        raise ContractError(
            f"{source}: {_where(section, key)} = {v!r} has the wrong type; allowed: an integer {lo}..{hi}."
        )
    if not lo <= v <= hi:
        raise ContractError(f"{source}: {_where(section, key)} = {v} is out of range; allowed: {lo}..{hi}.")
    return v


def _get_bool(tbl: Mapping[str, Any], key: str, source: str, section: str, default: bool) -> bool:
    if key not in tbl:
        return default
    v = tbl[key]
    if not isinstance(v, bool):
        raise ContractError(f"{source}: {_where(section, key)} = {v!r}; allowed: true or false.")
    return v


def _get_choice(
    tbl: Mapping[str, Any], key: str, source: str, section: str, choices: tuple[str, ...], default: str
) -> str:
    if key not in tbl:
        return default
    v = tbl[key]
    if not isinstance(v, str) or v not in choices:
        allowed = " | ".join(f'"{c}"' for c in choices)
        raise ContractError(f"{source}: {_where(section, key)} = {v!r}; allowed: {allowed}.")
    return v


def _get_str(
    tbl: Mapping[str, Any], key: str, source: str, section: str, *, required: bool, what: str = "a signal name"
) -> str | None:
    if key not in tbl:
        if required:
            raise ContractError(f"{source}: missing required key {_where(section, key)}; allowed: {what}.")
        return None
    v = tbl[key]
    if not isinstance(v, str) or not v.strip():
        raise ContractError(f"{source}: {_where(section, key)} = {v!r}; allowed: {what} (non-empty string).")
    if what == "a signal name" and not _is_identifier(v):
        raise ContractError(
            f"{source}: {_where(section, key)} = {v!r} is not a Verilog identifier; "
            "allowed: letters, digits, '_' and '$', not starting with a digit or '$'."
        )
    return v


def _is_identifier(name: str) -> bool:
    if not name or not (name[0].isalpha() or name[0] == "_"):
        return False
    return all(c.isalnum() or c in "_$" for c in name) and name.isascii()


def _build_memory(tbl: Mapping[str, Any], source: str) -> MemorySpec:
    s = "memory"
    _reject_unknown(tbl, _MEMORY_KEYS, source, s)
    words = cast(int, _get_int(tbl, "words", source, s, lo=1, hi=MAX_WORDS, required=True))
    width = cast(int, _get_int(tbl, "width", source, s, lo=1, hi=MAX_WIDTH, required=True))
    lane_width = _get_int(tbl, "lane_width", source, s, lo=1, hi=MAX_WIDTH)
    bit_mask = _get_bool(tbl, "bit_mask", source, s, False)
    if lane_width is not None and width % lane_width:
        divisors = [d for d in range(1, width + 1) if width % d == 0]
        raise ContractError(
            f"{source}: [memory] lane_width = {lane_width} does not divide width = {width}; "
            f"allowed: a divisor of the width ({', '.join(map(str, divisors))})."
        )
    if lane_width is not None and bit_mask:
        raise ContractError(
            f"{source}: [memory] lane_width and bit_mask = true cannot both be set; allowed: "
            "lane_width for one mask bit per lane, or bit_mask = true for one mask bit per data bit."
        )
    latency = cast(int, _get_int(tbl, "read_latency", source, s, lo=0, hi=MAX_LATENCY, default=1))
    return MemorySpec(
        words=words,
        width=width,
        lane_width=lane_width,
        bit_mask=bit_mask,
        read_latency=latency,
        read_during_write=cast(
            ReadDuringWrite, _get_choice(tbl, "read_during_write", source, s, READ_DURING_WRITE, "unknown")
        ),
        collision=cast(Collision, _get_choice(tbl, "collision", source, s, COLLISION, "unknown")),
        write_collision=cast(
            WriteCollision, _get_choice(tbl, "write_collision", source, s, WRITE_COLLISION, "unknown")
        ),
        initial=cast(Initial, _get_choice(tbl, "initial", source, s, INITIAL, "unknown")),
        idle_read_data=cast(IdleReadData, _get_choice(tbl, "idle_read_data", source, s, IDLE_READ_DATA, "unknown")),
    )


def _string_list(
    tbl: Mapping[str, Any], key: str, source: str, section: str, *, required: bool, what: str
) -> list[str]:
    if key not in tbl:
        if required:
            raise ContractError(f"{source}: missing required key {_where(section, key)}; allowed: {what}.")
        return []
    v = tbl[key]
    if not isinstance(v, list) or not all(isinstance(x, str) and x for x in v):
        raise ContractError(f"{source}: {_where(section, key)} = {v!r}; allowed: {what}.")
    return list(v)


def _value_table(tbl: Mapping[str, Any], key: str, source: str, section: str) -> Mapping[str, int | str]:
    v = tbl.get(key, {})
    if not isinstance(v, dict):
        raise ContractError(f"{source}: {_where(section, key)} must be an inline table like {{ NAME = 8 }}.")
    out: dict[str, int | str] = {}
    for name, value in v.items():
        if isinstance(value, bool) or not isinstance(value, int | str):
            raise ContractError(
                f"{source}: {_where(section, key)}.{name} = {value!r}; allowed: an integer or a string."
            )
        if not _is_identifier(name):
            raise ContractError(f"{source}: {_where(section, key)} has {name!r}, not a Verilog identifier.")
        out[name] = value
    return MappingProxyType(out)


def _build_rtl(tbl: Mapping[str, Any] | None, source: str, base_dir: Path | None, check_sources: bool) -> RtlSpec:
    assert tbl is not None
    s = "rtl"
    _reject_unknown(tbl, _RTL_KEYS, source, s)
    srcs = _string_list(
        tbl,
        "sources",
        source,
        s,
        required=True,
        what="a non-empty list of Verilog file paths relative to the contract file",
    )
    if not srcs:
        raise ContractError(f"{source}: [rtl] sources is empty; allowed: at least one Verilog file.")
    top = cast(str, _get_str(tbl, "top", source, s, required=True, what="a signal name"))
    base = base_dir or Path.cwd()
    sources = tuple((base / x) for x in srcs)
    if check_sources:
        for given, full in zip(srcs, sources, strict=True):
            if not full.is_file():
                raise ContractError(
                    f"{source}: [rtl] sources lists {given!r}, but {full} does not exist; "
                    "allowed: paths relative to the contract file's folder."
                )
    incs = tuple(
        base / x for x in _string_list(tbl, "include_dirs", source, s, required=False, what="a list of folder paths")
    )
    return RtlSpec(
        sources=sources,
        top=top,
        parameters=_value_table(tbl, "parameters", source, s),
        defines=_value_table(tbl, "defines", source, s),
        include_dirs=incs,
    )


def _build_reset(tbl: Mapping[str, Any], source: str) -> ResetSpec:
    s = "reset"
    _reject_unknown(tbl, _RESET_KEYS, source, s)
    return ResetSpec(
        signal=cast(str, _get_str(tbl, "signal", source, s, required=True)),
        active_low=_get_bool(tbl, "active_low", source, s, True),
        cycles=cast(int, _get_int(tbl, "cycles", source, s, lo=1, hi=1000, default=2)),
    )


_ROLE_PINS: dict[str, dict[str, str]] = {
    # pin -> "required" | "optional" | "forbidden" | "mask" (required iff the memory has write masks)
    "readwrite": {
        "enable": "optional",
        "write_enable": "required",
        "write_data": "required",
        "lane_enable": "mask",
        "read_data": "required",
    },
    "read": {
        "enable": "optional",
        "write_enable": "forbidden",
        "write_data": "forbidden",
        "lane_enable": "forbidden",
        "read_data": "required",
    },
    "write": {
        "enable": "required",
        "write_enable": "forbidden",
        "write_data": "required",
        "lane_enable": "mask",
        "read_data": "forbidden",
    },
}


def _build_port(tbl: Mapping[str, Any], index: int, memory: MemorySpec, source: str) -> PortSpec:
    s = f"port #{index + 1}"
    _reject_unknown(tbl, _PORT_KEYS, source, s)
    name = cast(str, _get_str(tbl, "name", source, s, required=True, what="a port name"))
    s = f"port {name!r}"
    role = _get_choice(tbl, "role", source, s, ROLES, "")
    if not role:
        raise ContractError(f'{source}: missing required key [{s}] role; allowed: "readwrite" | "read" | "write".')
    clock = cast(str, _get_str(tbl, "clock", source, s, required=True))
    address = cast(str, _get_str(tbl, "address", source, s, required=True))
    pins: dict[str, str | None] = {}
    for pin, need in _ROLE_PINS[role].items():
        present = pin in tbl
        if need == "forbidden" and present:
            raise ContractError(
                f"{source}: [{s}] {pin} is set, but a {role} port has no {pin.replace('_', ' ')} pin; "
                f"remove it or change role."
            )
        if need == "mask":
            if memory.lanes and not present:
                what = "bit_mask = true" if memory.bit_mask else f"lane_width = {memory.lane_width}"
                raise ContractError(
                    f"{source}: [{s}] lane_enable is missing, but [memory] {what} needs a write-mask pin "
                    f"with {memory.lanes} bit(s) on every writing port."
                )
            if not memory.lanes and present:
                raise ContractError(
                    f"{source}: [{s}] lane_enable is set, but the memory has whole-word writes; set "
                    "[memory] lane_width or bit_mask = true, or remove lane_enable."
                )
        if need == "required" and not present:
            extra = " (a write port's enable is its write strobe)" if role == "write" and pin == "enable" else ""
            raise ContractError(f"{source}: [{s}] {pin} is missing; a {role} port needs it{extra}.")
        pins[pin] = _get_str(tbl, pin, source, s, required=False)
    active_low = _string_list(
        tbl, "active_low", source, s, required=False, what="a list of this port's control pin names"
    )
    controls = {v for k, v in pins.items() if k in ("enable", "write_enable", "lane_enable") and v}
    for pin_name in active_low:
        if pin_name not in controls:
            raise ContractError(
                f"{source}: [{s}] active_low lists {pin_name!r}, which is not one of this port's control "
                f"pins; allowed: {', '.join(sorted(controls)) or '(none: this port has no control pins)'}."
            )
    return PortSpec(
        name=name,
        role=cast(Role, role),
        clock=clock,
        address=address,
        enable=pins.get("enable"),
        write_enable=pins.get("write_enable"),
        write_data=pins.get("write_data"),
        lane_enable=pins.get("lane_enable"),
        read_data=pins.get("read_data"),
        active_low=frozenset(active_low),
    )


def _check_ports_together(ports: tuple[PortSpec, ...], reset: ResetSpec | None, source: str) -> None:
    names = [p.name for p in ports]
    for n in names:
        if names.count(n) > 1:
            raise ContractError(f"{source}: two [[port]] tables are named {n!r}; port names must be unique.")
    clocks = {p.clock for p in ports}
    if len(clocks) > 1:
        raise ContractError(
            f"{source}: ports use different clocks ({', '.join(sorted(clocks))}); "
            "allowed: one clock shared by all ports."
        )
    owner: dict[str, str] = {}
    for p in ports:
        for role, sig in p.pins().items():
            if role == "clock":
                continue
            if sig in owner:
                raise ContractError(
                    f"{source}: signal {sig!r} is used twice ({owner[sig]} and port {p.name!r} {role}); "
                    "each pin carries one thing."
                )
            owner[sig] = f"port {p.name!r} {role}"
            if sig == p.clock:
                raise ContractError(f"{source}: port {p.name!r} uses the clock {sig!r} as its {role}.")
    if reset is not None and (reset.signal in owner or reset.signal in clocks):
        raise ContractError(
            f"{source}: [reset] signal = {reset.signal!r} is also a port pin or the clock; "
            "allowed: a separate reset input."
        )
