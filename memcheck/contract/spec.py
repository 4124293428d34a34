"""The memory contract as frozen dataclasses: what a wrapper promises.

Loading and validation live in :mod:`memcheck.contract.loading`; clocks and the tick timeline in
:mod:`memcheck.contract.clocks`; power pins in :mod:`memcheck.contract.power`.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field, replace
from pathlib import Path
from types import MappingProxyType
from typing import Any, Literal

from memcheck.contract._fields import FrozenMap
from memcheck.contract.clocks import ClockSpec, TimingSpec
from memcheck.contract.power import PowerSpec

Role = Literal["readwrite", "read", "write"]
ReadDuringWrite = Literal["old", "new", "keep", "unknown"]
Collision = Literal["old", "new", "unknown"]
WriteCollision = Literal["unknown", "first"]
Initial = Literal["unknown", "zero"]
IdleReadData = Literal["keep", "unknown"]
OutOfRange = Literal["unchecked", "ignore", "wrap"]

ROLES: tuple[str, ...] = ("readwrite", "read", "write")
READ_DURING_WRITE: tuple[str, ...] = ("old", "new", "keep", "unknown")
COLLISION: tuple[str, ...] = ("old", "new", "unknown")
WRITE_COLLISION: tuple[str, ...] = ("unknown", "first")
INITIAL: tuple[str, ...] = ("unknown", "zero")
IDLE_READ_DATA: tuple[str, ...] = ("keep", "unknown")
OUT_OF_RANGE: tuple[str, ...] = ("unchecked", "ignore", "wrap")

MAX_WIDTH = 1024
MAX_LATENCY = 4
MAX_WORDS = 1 << 32
#: Addresses the model accepts when ``out_of_range`` drives the address pins over their full range.
MAX_ADDRESS_BITS = 62

#: TOML key -> MemorySpec field, where they differ (``lanes`` is the lane map; ``MemorySpec.lanes``
#: stays the number of write-mask bits, as everywhere else in memcheck).
MEMORY_KEY_FIELDS: Mapping[str, str] = MappingProxyType({"lanes": "lane_map"})


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
    lane_map: tuple[int, ...] | None = None
    out_of_range: OutOfRange = "unchecked"
    collision_window: float = 0.0

    @property
    def lanes(self) -> int:
        """Number of write-mask bits per port: lanes, data bits (bit_mask), or 0 for whole-word."""
        if self.bit_mask:
            return self.width
        if self.lane_map is not None:
            return len(self.lane_map)
        if self.lane_width is not None:
            return self.width // self.lane_width
        return 0

    @property
    def lane_widths(self) -> tuple[int, ...]:
        """Bits of each write-mask bit, LSB lane first (``(width,)`` for whole-word writes)."""
        if self.lane_map is not None:
            return self.lane_map
        return (self.bits_per_lane,) * max(self.lanes, 1)

    @property
    def bits_per_lane(self) -> int:
        """Bits per lane when lanes are even; with a lane map, the widest lane."""
        if self.bit_mask:
            return 1
        if self.lane_map is not None:
            return max(self.lane_map)
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

    @property
    def address_limit(self) -> int:
        """Addresses an operation may carry: the minimum address width, or (``out_of_range`` =
        "ignore" or "wrap") any address of up to :data:`MAX_ADDRESS_BITS` bits."""
        if self.out_of_range == "unchecked":
            return 1 << self.address_bits
        return 1 << MAX_ADDRESS_BITS

    def word_of(self, address: int) -> int | None:
        """The word an address selects, or None when it selects none (out of range)."""
        if self.out_of_range == "wrap":
            return address & (self.words - 1)
        return address if address < self.words else None

    def lane_bits(self, lanes: int) -> int:
        """Expand a lane-enable value to the mask of data bits it writes."""
        if self.lanes == 0:
            return self.word_mask if lanes & 1 else 0
        if self.bit_mask:
            return lanes & self.word_mask
        bits = 0
        offset = 0
        for lane, size in enumerate(self.lane_widths):
            if lanes >> lane & 1:
                bits |= ((1 << size) - 1) << offset
            offset += size
        return bits


@dataclass(frozen=True)
class RtlSpec:
    """Where the wrapper RTL lives and how to elaborate it."""

    sources: tuple[Path, ...]
    top: str
    parameters: Mapping[str, int | str] = field(default_factory=FrozenMap)
    defines: Mapping[str, int | str] = field(default_factory=FrozenMap)
    include_dirs: tuple[Path, ...] = ()
    #: Top-level inputs no port uses, held at a constant (``tie = { regce = 1 }``).
    tie: Mapping[str, int] = field(default_factory=FrozenMap)
    #: Sources ``memcheck mutate`` may change (``[rtl] mutate``); empty: the file defining ``top``.
    mutate: tuple[Path, ...] = ()


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

    @property
    def any_lane_write(self) -> bool:
        """A readwrite port without write_enable: it writes when any lane enable is active."""
        return self.role == "readwrite" and self.write_enable is None

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
    """A whole contract: memory behaviour, ports, and (when loaded from a file) RTL, reset, clocks,
    timing and power pins.

    ``clocks`` lists the ``[[clock]]`` tables given (a port clock without one runs at the default
    period 10 ns, phase 0); use :meth:`clock_spec` or :attr:`port_clocks` for every port's clock.
    """

    memory: MemorySpec
    ports: tuple[PortSpec, ...]
    rtl: RtlSpec | None = None
    reset: ResetSpec | None = None
    path: Path | None = None
    clocks: tuple[ClockSpec, ...] = ()
    timing: TimingSpec = field(default_factory=TimingSpec)
    power: PowerSpec | None = None

    @property
    def clock(self) -> str:
        """The first port's clock (the only clock of a single-clock contract)."""
        return self.ports[0].clock

    def port(self, name: str) -> PortSpec:
        for p in self.ports:
            if p.name == name:
                return p
        raise KeyError(name)

    @property
    def multi_port(self) -> bool:
        return len(self.ports) > 1

    def clock_spec(self, name: str) -> ClockSpec:
        """Period and phase of one clock pin (defaults when no ``[[clock]]`` table names it)."""
        for c in self.clocks:
            if c.name == name:
                return c
        return ClockSpec(name)

    @property
    def clock_names(self) -> tuple[str, ...]:
        """Distinct port clocks, in order of first use."""
        return tuple(dict.fromkeys(p.clock for p in self.ports))

    @property
    def port_clocks(self) -> tuple[ClockSpec, ...]:
        """Every clock the ports use, in order of first use, with defaults filled in."""
        return tuple(self.clock_spec(n) for n in self.clock_names)

    @property
    def lockstep(self) -> bool:
        """True when every port's clock has the same edges (one clock, or several identical ones):
        then every tick is an edge of every port, exactly as a single-clock memory."""
        return len({(c.period, c.phase) for c in self.port_clocks}) == 1

    def unchecked_behaviours(self) -> list[str]:
        """Behaviours this contract leaves "unknown", phrased for a report.

        Only behaviours that can occur on this memory are listed, so a user sees exactly
        what the contract does not promise.
        """
        from memcheck.contract.explain import unchecked_behaviours

        return unchecked_behaviours(self)

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
        from memcheck.contract.loading import build_memory

        spec = build_memory({"words": words, "width": width, **memory}, "<simple>")
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
        """A copy with some memory keys (TOML names) changed, validated like a file."""
        from memcheck.contract.loading import MEMORY_KEYS, build_memory

        current = {k: getattr(self.memory, MEMORY_KEY_FIELDS.get(k, k)) for k in MEMORY_KEYS}
        current.update(changes)
        data = {k: list(v) if isinstance(v, tuple) else v for k, v in current.items() if v is not None}
        return replace(self, memory=build_memory(data, str(self.path or "<contract>")))
