"""Power pins: sleep (retention) and shutdown, and what the memory promises around them."""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any, Literal, cast

from memcheck.contract._fields import get_choice, get_int, get_str, reject_unknown, string_list, table
from memcheck.errors import ContractError

SleepReadData = Literal["unknown", "zero", "keep"]
PowerEffect = Literal["edge", "immediate"]

SLEEP_READ_DATA: tuple[str, ...] = ("unknown", "zero", "keep")
POWER_EFFECT: tuple[str, ...] = ("edge", "immediate")
POWER_KEYS = ("sleep", "shutdown", "active_low", "wake_cycles", "sleep_read_data", "effect")
MAX_WAKE_CYCLES = 1000


@dataclass(frozen=True)
class PowerSpec:
    """The ``[power]`` table.

    ``sleep``: asserted, contents are kept and accesses ignored. ``shutdown``: asserted, every word
    becomes unknown and accesses are ignored (it dominates when both are asserted). Both are
    sampled by rising edges like any control pin. ``wake_cycles``: the first edges that sample both
    deasserted make no access and show nothing promised. ``sleep_read_data``: read data due after
    an edge that sampled a power pin asserted. ``effect``: "edge" (power pins act at the edge that
    samples them) or "immediate" (read data may change as soon as a pin changes, so a cycle in
    which one changes shows nothing promised).
    """

    sleep: str | None = None
    shutdown: str | None = None
    active_low: frozenset[str] = frozenset()
    wake_cycles: int = 1
    sleep_read_data: SleepReadData = "unknown"
    effect: PowerEffect = "edge"

    def pins(self) -> dict[str, str]:
        """Pin role -> top-level signal name."""
        return {k: v for k, v in (("sleep", self.sleep), ("shutdown", self.shutdown)) if v is not None}


def build_power(data: Mapping[str, Any], source: str) -> PowerSpec | None:
    tbl = table(data, "power", source, required=False)
    if tbl is None:
        return None
    s = "power"
    reject_unknown(tbl, POWER_KEYS, source, s)
    sleep = get_str(tbl, "sleep", source, s, required=False)
    shutdown = get_str(tbl, "shutdown", source, s, required=False)
    if sleep is None and shutdown is None:
        raise ContractError(
            f'{source}: [power] names no pin; allowed: sleep = "<pin>" and/or shutdown = "<pin>" '
            "(remove the [power] table if the memory has no power pins)."
        )
    if sleep is not None and sleep == shutdown:
        raise ContractError(f"{source}: [power] sleep and shutdown are both {sleep!r}; each pin carries one thing.")
    pins = [p for p in (sleep, shutdown) if p is not None]
    active_low = string_list(tbl, "active_low", source, s, required=False, what="a list of the power pin names")
    for name in active_low:
        if name not in pins:
            raise ContractError(
                f"{source}: [power] active_low lists {name!r}, which is not a power pin; allowed: {', '.join(pins)}."
            )
    return PowerSpec(
        sleep=sleep,
        shutdown=shutdown,
        active_low=frozenset(active_low),
        wake_cycles=cast(int, get_int(tbl, "wake_cycles", source, s, lo=0, hi=MAX_WAKE_CYCLES, default=1)),
        sleep_read_data=cast(SleepReadData, get_choice(tbl, "sleep_read_data", source, s, SLEEP_READ_DATA, "unknown")),
        effect=cast(PowerEffect, get_choice(tbl, "effect", source, s, POWER_EFFECT, "edge")),
    )
