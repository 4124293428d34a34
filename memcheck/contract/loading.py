"""Reading a contract file: TOML into validated frozen dataclasses.

Every malformed file is rejected with one :class:`ContractError` that names the file, the key and
what is allowed, so a user can fix it without reading our code.
"""

from __future__ import annotations

import tomllib
from collections.abc import Mapping
from pathlib import Path
from typing import Any, cast

from memcheck.contract._fields import (
    did_you_mean,
    get_bool,
    get_choice,
    get_float,
    get_int,
    get_str,
    reject_unknown,
    string_list,
    table,
    value_table,
)
from memcheck.contract.clocks import build_clocks, build_timing, check_timing, exact_ns
from memcheck.contract.ports import build_port, check_ports_together
from memcheck.contract.power import PowerSpec, build_power
from memcheck.contract.spec import (
    COLLISION,
    IDLE_READ_DATA,
    INITIAL,
    MAX_LATENCY,
    MAX_WIDTH,
    MAX_WORDS,
    OUT_OF_RANGE,
    READ_DURING_WRITE,
    WRITE_COLLISION,
    Collision,
    Contract,
    IdleReadData,
    Initial,
    MemorySpec,
    OutOfRange,
    ReadDuringWrite,
    ResetSpec,
    RtlSpec,
    WriteCollision,
)
from memcheck.errors import ContractError

MEMORY_KEYS = (
    "words",
    "width",
    "lane_width",
    "lanes",
    "bit_mask",
    "read_latency",
    "read_during_write",
    "collision",
    "write_collision",
    "initial",
    "idle_read_data",
    "out_of_range",
    "collision_window",
)
RTL_KEYS = ("sources", "top", "parameters", "defines", "include_dirs", "tie", "mutate")
RESET_KEYS = ("signal", "active_low", "cycles")
TOP_KEYS = ("memory", "rtl", "reset", "port", "clock", "timing", "power")


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
    reject_unknown(data, TOP_KEYS, source, "")
    memory_tbl = table(data, "memory", source, required=True)
    assert memory_tbl is not None
    memory = build_memory(memory_tbl, source)
    rtl = _build_rtl(table(data, "rtl", source, required=True), source, base_dir, check_sources)
    reset_tbl = table(data, "reset", source, required=False)
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
    ports = tuple(build_port(p, i, memory, source) for i, p in enumerate(ports_raw))
    owner = check_ports_together(ports, reset, source)
    contract = Contract(
        memory=memory,
        ports=ports,
        rtl=rtl,
        reset=reset,
        path=path,
        clocks=build_clocks(data.get("clock"), [p.clock for p in ports], source),
        timing=build_timing(data, source),
        power=build_power(data, source),
    )
    _check_across_tables(contract, owner, source)
    return contract


def _check_across_tables(c: Contract, owner: dict[str, str], source: str) -> None:
    """What only the whole contract can tell: timing against the clocks, the collision window, and
    power and tied pins that no port uses."""
    clocks = c.port_clocks
    check_timing(c.timing, clocks, [p.clock for p in c.ports if p.can_read], source)
    shortest = min(clock.period_ns for clock in clocks)
    window = c.memory.collision_window
    if window and exact_ns(window) > shortest:
        raise ContractError(
            f"{source}: [memory] collision_window = {window} ns is longer than the shortest clock period "
            f"({float(shortest)} ns); allowed: 0 <= collision_window <= {float(shortest)}."
        )
    extra: dict[str, str] = {}
    if c.power is not None:
        extra.update({pin: f"[power] {role}" for role, pin in c.power.pins().items()})
    if c.rtl is not None:
        extra.update({pin: f"[rtl] tie.{pin}" for pin in c.rtl.tie})
    for pin, what in extra.items():
        if pin in owner:
            raise ContractError(
                f"{source}: {what} names {pin!r}, which is already {owner[pin]}; allowed: a top-level input "
                "that no port, clock or reset uses."
            )
        owner[pin] = what
    _check_power_vs_tie(c.power, c.rtl, source)


def _check_power_vs_tie(power: PowerSpec | None, rtl: RtlSpec | None, source: str) -> None:
    if power is None or rtl is None:
        return
    for pin in power.pins().values():
        if pin in rtl.tie:
            raise ContractError(
                f"{source}: {pin!r} is both a [power] pin and tied in [rtl] tie; allowed: one of the two "
                "(tie it to hold the memory awake, or name it in [power] to check power modes)."
            )


def build_memory(tbl: Mapping[str, Any], source: str) -> MemorySpec:
    s = "memory"
    reject_unknown(tbl, MEMORY_KEYS, source, s)
    words = cast(int, get_int(tbl, "words", source, s, lo=1, hi=MAX_WORDS, required=True))
    width = cast(int, get_int(tbl, "width", source, s, lo=1, hi=MAX_WIDTH, required=True))
    lane_width = get_int(tbl, "lane_width", source, s, lo=1, hi=MAX_WIDTH)
    bit_mask = get_bool(tbl, "bit_mask", source, s, False)
    lane_map = _lane_map(tbl, width, source)
    _check_masks(lane_width, bit_mask, lane_map, width, source)
    latency = cast(int, get_int(tbl, "read_latency", source, s, lo=0, hi=MAX_LATENCY, default=1))
    out_of_range = cast(OutOfRange, get_choice(tbl, "out_of_range", source, s, OUT_OF_RANGE, "unchecked"))
    if out_of_range == "wrap" and words & (words - 1):
        raise ContractError(
            f'{source}: [memory] out_of_range = "wrap" needs words to be a power of two, but words = {words}; '
            'allowed: "unchecked" | "ignore" for this depth.'
        )
    window = get_float(tbl, "collision_window", source, s, allowed="a number of ns >= 0", default=0.0)
    assert window is not None
    if window < 0:
        raise ContractError(f"{source}: [memory] collision_window = {window}; allowed: a number of ns >= 0.")
    return MemorySpec(
        words=words,
        width=width,
        lane_width=lane_width,
        bit_mask=bit_mask,
        read_latency=latency,
        read_during_write=cast(
            ReadDuringWrite, get_choice(tbl, "read_during_write", source, s, READ_DURING_WRITE, "unknown")
        ),
        collision=cast(Collision, get_choice(tbl, "collision", source, s, COLLISION, "unknown")),
        write_collision=cast(WriteCollision, get_choice(tbl, "write_collision", source, s, WRITE_COLLISION, "unknown")),
        initial=cast(Initial, get_choice(tbl, "initial", source, s, INITIAL, "unknown")),
        idle_read_data=cast(IdleReadData, get_choice(tbl, "idle_read_data", source, s, IDLE_READ_DATA, "unknown")),
        lane_map=lane_map,
        out_of_range=out_of_range,
        collision_window=window,
    )


def _lane_map(tbl: Mapping[str, Any], width: int, source: str) -> tuple[int, ...] | None:
    if "lanes" not in tbl:
        return None
    v = tbl["lanes"]
    ok = isinstance(v, list | tuple) and 0 < len(v) <= MAX_WIDTH
    if not ok or not all(isinstance(x, int) and not isinstance(x, bool) and x >= 1 for x in v):
        raise ContractError(
            f"{source}: [memory] lanes = {v!r}; allowed: a list of lane widths in bits, LSB lane first, "
            f"each >= 1 and summing to width = {width} (for example [8, 8, 8, 8, 1])."
        )
    if sum(v) != width:
        raise ContractError(
            f"{source}: [memory] lanes = {list(v)} sums to {sum(v)} bits, but width = {width}; allowed: lane "
            "widths (LSB lane first) that add up to the width."
        )
    return tuple(v)


def _check_masks(
    lane_width: int | None, bit_mask: bool, lane_map: tuple[int, ...] | None, width: int, source: str
) -> None:
    if lane_map is not None and (lane_width is not None or bit_mask):
        other = "lane_width" if lane_width is not None else "bit_mask = true"
        raise ContractError(
            f"{source}: [memory] lanes and {other} cannot both be set; allowed: lanes = [...] for lanes of "
            "any widths, lane_width for even lanes, or bit_mask = true for one mask bit per data bit."
        )
    if lane_width is not None and width % lane_width:
        divisors = [d for d in range(1, width + 1) if width % d == 0]
        raise ContractError(
            f"{source}: [memory] lane_width = {lane_width} does not divide width = {width}; "
            f"allowed: a divisor of the width ({', '.join(map(str, divisors))}), or lanes = [...] for "
            "uneven lanes."
        )
    if lane_width is not None and bit_mask:
        raise ContractError(
            f"{source}: [memory] lane_width and bit_mask = true cannot both be set; allowed: "
            "lane_width for one mask bit per lane, or bit_mask = true for one mask bit per data bit."
        )


def _build_rtl(tbl: Mapping[str, Any] | None, source: str, base_dir: Path | None, check_sources: bool) -> RtlSpec:
    assert tbl is not None
    s = "rtl"
    reject_unknown(tbl, RTL_KEYS, source, s)
    srcs = string_list(
        tbl,
        "sources",
        source,
        s,
        required=True,
        what="a non-empty list of Verilog file paths relative to the contract file",
    )
    if not srcs:
        raise ContractError(f"{source}: [rtl] sources is empty; allowed: at least one Verilog file.")
    top = cast(str, get_str(tbl, "top", source, s, required=True, what="a signal name"))
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
        base / x for x in string_list(tbl, "include_dirs", source, s, required=False, what="a list of folder paths")
    )
    return RtlSpec(
        sources=sources,
        top=top,
        parameters=value_table(tbl, "parameters", source, s),
        defines=value_table(tbl, "defines", source, s),
        include_dirs=incs,
        tie=value_table(tbl, "tie", source, s, ints_only=True),
        mutate=_mutate_files(tbl, source, srcs, base),
    )


def _mutate_files(tbl: Mapping[str, Any], source: str, srcs: list[str], base: Path) -> tuple[Path, ...]:
    """``[rtl] mutate``: the sources ``memcheck mutate`` may change, each one of ``sources``."""
    given = string_list(tbl, "mutate", source, "rtl", required=False, what="a list of files among [rtl] sources")
    known = {(base / x).resolve(): base / x for x in srcs}
    out = []
    for name in given:
        full = (base / name).resolve()
        if full not in known:
            raise ContractError(
                f"{source}: [rtl] mutate lists {name!r}, which is not among [rtl] sources.{did_you_mean(name, srcs)} "
                "Allowed: files of [rtl] sources (the wrapper's own RTL, never the macro models)."
            )
        out.append(known[full])
    return tuple(out)


def _build_reset(tbl: Mapping[str, Any], source: str) -> ResetSpec:
    s = "reset"
    reject_unknown(tbl, RESET_KEYS, source, s)
    return ResetSpec(
        signal=cast(str, get_str(tbl, "signal", source, s, required=True)),
        active_low=get_bool(tbl, "active_low", source, s, True),
        cycles=cast(int, get_int(tbl, "cycles", source, s, lo=1, hi=1000, default=2)),
    )


__all__ = ["MEMORY_KEYS", "build_memory", "contract_from_dict", "load_contract", "parse_contract"]
