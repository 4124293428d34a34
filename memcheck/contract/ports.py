"""``[[port]]`` tables: which pins each port role needs, and checks across ports."""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any, cast

from memcheck.contract._fields import get_choice, get_str, reject_unknown, string_list
from memcheck.contract.spec import ROLES, MemorySpec, PortSpec, ResetSpec, Role
from memcheck.errors import ContractError

PORT_KEYS = (
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

_ROLE_PINS: dict[str, dict[str, str]] = {
    # pin -> "required" | "optional" | "forbidden" | "mask" (required iff the memory has write masks)
    # | "write" (required unless the port has lane_enable: then any active lane enable writes)
    "readwrite": {
        "enable": "optional",
        "write_enable": "write",
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


def build_port(tbl: Mapping[str, Any], index: int, memory: MemorySpec, source: str) -> PortSpec:
    s = f"port #{index + 1}"
    reject_unknown(tbl, PORT_KEYS, source, s)
    name = cast(str, get_str(tbl, "name", source, s, required=True, what="a port name"))
    s = f"port {name!r}"
    role = get_choice(tbl, "role", source, s, ROLES, "")
    if not role:
        raise ContractError(f'{source}: missing required key [{s}] role; allowed: "readwrite" | "read" | "write".')
    clock = cast(str, get_str(tbl, "clock", source, s, required=True))
    address = cast(str, get_str(tbl, "address", source, s, required=True))
    pins: dict[str, str | None] = {}
    for pin, need in _ROLE_PINS[role].items():
        _check_pin_need(tbl, pin, need, role, memory, source, s)
        pins[pin] = get_str(tbl, pin, source, s, required=False)
    active_low = string_list(
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


def _check_pin_need(
    tbl: Mapping[str, Any], pin: str, need: str, role: str, memory: MemorySpec, source: str, s: str
) -> None:
    present = pin in tbl
    if need == "forbidden" and present:
        raise ContractError(
            f"{source}: [{s}] {pin} is set, but a {role} port has no {pin.replace('_', ' ')} pin; "
            f"remove it or change role."
        )
    if need == "mask":
        if memory.lanes and not present:
            raise ContractError(
                f"{source}: [{s}] lane_enable is missing, but [memory] {_mask_key(memory)} needs a write-mask "
                f"pin with {memory.lanes} bit(s) on every writing port."
            )
        if not memory.lanes and present:
            raise ContractError(
                f"{source}: [{s}] lane_enable is set, but the memory has whole-word writes; set "
                "[memory] lanes, lane_width or bit_mask = true, or remove lane_enable."
            )
    if need == "write" and not present and not memory.lanes:
        raise ContractError(
            f"{source}: [{s}] write_enable is missing; a readwrite port needs it (or, on a memory with "
            "write lanes, a lane_enable: then a write happens when any lane enable is active)."
        )
    if need == "required" and not present:
        extra = " (a write port's enable is its write strobe)" if role == "write" and pin == "enable" else ""
        raise ContractError(f"{source}: [{s}] {pin} is missing; a {role} port needs it{extra}.")


def _mask_key(memory: MemorySpec) -> str:
    if memory.bit_mask:
        return "bit_mask = true"
    if memory.lane_map is not None:
        return f"lanes = {list(memory.lane_map)}"
    return f"lane_width = {memory.lane_width}"


def check_ports_together(ports: tuple[PortSpec, ...], reset: ResetSpec | None, source: str) -> dict[str, str]:
    """Unique port names, one job per pin; returns signal -> what carries it (clocks included)."""
    names = [p.name for p in ports]
    for n in names:
        if names.count(n) > 1:
            raise ContractError(f"{source}: two [[port]] tables are named {n!r}; port names must be unique.")
    clocks = {p.clock for p in ports}
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
            if sig in clocks:
                raise ContractError(f"{source}: port {p.name!r} uses the clock {sig!r} as its {role}.")
    if reset is not None and (reset.signal in owner or reset.signal in clocks):
        raise ContractError(
            f"{source}: [reset] signal = {reset.signal!r} is also a port pin or a clock; "
            "allowed: a separate reset input."
        )
    for c in clocks:
        owner[c] = "a clock"
    if reset is not None:
        owner[reset.signal] = "the reset"
    return owner
