"""Typed reads of one TOML key each, with errors that name the file, the key and what is allowed."""

from __future__ import annotations

import difflib
import math
from collections.abc import Iterator, Mapping
from typing import Any, TypeVar

from memcheck.errors import ContractError

V = TypeVar("V")


class FrozenMap(Mapping[str, V]):
    """A read-only mapping that pickles (the simulator side pickles contracts)."""

    __slots__ = ("_data",)

    def __init__(self, data: Mapping[str, V] | None = None) -> None:
        self._data: dict[str, V] = dict(data or {})

    def __getitem__(self, key: str) -> V:
        return self._data[key]

    def __iter__(self) -> Iterator[str]:
        return iter(self._data)

    def __len__(self) -> int:
        return len(self._data)

    def __repr__(self) -> str:
        return f"FrozenMap({self._data!r})"

    def __reduce__(self) -> tuple[Any, ...]:
        return (FrozenMap, (self._data,))


def where(section: str, key: str) -> str:
    return f"[{section}] {key}" if section else key


def reject_unknown(tbl: Mapping[str, Any], allowed: tuple[str, ...], source: str, section: str) -> None:
    for key in tbl:
        if key not in allowed:
            raise ContractError(
                f"{source}: unknown key {where(section, key)!r}.{did_you_mean(key, allowed)} "
                f"Allowed keys{' in [' + section + ']' if section else ''}: {', '.join(allowed)}."
            )


def did_you_mean(name: str, choices: tuple[str, ...] | list[str]) -> str:
    close = difflib.get_close_matches(name, list(choices), n=1, cutoff=0.6)
    return f" Did you mean '{close[0]}'?" if close else ""


def table(data: Mapping[str, Any], name: str, source: str, *, required: bool) -> dict[str, Any] | None:
    tbl = data.get(name)
    if tbl is None:
        if required:
            raise ContractError(f"{source}: missing the [{name}] table, which is required.")
        return None
    if not isinstance(tbl, dict):
        raise ContractError(f"{source}: '{name}' must be a table written as [{name}].")
    return tbl


def get_int(
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
                f"{source}: missing required key {where(section, key)}; allowed: an integer {lo}..{hi}."
            )
        return default
    v = tbl[key]
    if isinstance(v, bool) or not isinstance(v, int):
        raise ContractError(
            f"{source}: {where(section, key)} = {v!r} has the wrong type; allowed: an integer {lo}..{hi}."
        )
    if not lo <= v <= hi:
        raise ContractError(f"{source}: {where(section, key)} = {v} is out of range; allowed: {lo}..{hi}.")
    return v


def get_float(
    tbl: Mapping[str, Any], key: str, source: str, section: str, *, allowed: str, default: float | None = None
) -> float | None:
    """A number (integer or float, finite); ``allowed`` says in words what range is allowed."""
    if key not in tbl:
        return default
    v = tbl[key]
    if isinstance(v, bool) or not isinstance(v, int | float) or not math.isfinite(v) or abs(v) > 1e12:
        raise ContractError(f"{source}: {where(section, key)} = {v!r} has the wrong type; allowed: {allowed}.")
    return float(v)


def get_bool(tbl: Mapping[str, Any], key: str, source: str, section: str, default: bool) -> bool:
    if key not in tbl:
        return default
    v = tbl[key]
    if not isinstance(v, bool):
        raise ContractError(f"{source}: {where(section, key)} = {v!r}; allowed: true or false.")
    return v


def get_choice(
    tbl: Mapping[str, Any], key: str, source: str, section: str, choices: tuple[str, ...], default: str
) -> str:
    if key not in tbl:
        return default
    v = tbl[key]
    if not isinstance(v, str) or v not in choices:
        allowed = " | ".join(f'"{c}"' for c in choices)
        raise ContractError(f"{source}: {where(section, key)} = {v!r}; allowed: {allowed}.")
    return v


def get_str(
    tbl: Mapping[str, Any], key: str, source: str, section: str, *, required: bool, what: str = "a signal name"
) -> str | None:
    if key not in tbl:
        if required:
            raise ContractError(f"{source}: missing required key {where(section, key)}; allowed: {what}.")
        return None
    v = tbl[key]
    if not isinstance(v, str) or not v.strip():
        raise ContractError(f"{source}: {where(section, key)} = {v!r}; allowed: {what} (non-empty string).")
    if what == "a signal name" and not is_identifier(v):
        raise ContractError(
            f"{source}: {where(section, key)} = {v!r} is not a Verilog identifier; "
            "allowed: letters, digits, '_' and '$', not starting with a digit or '$'."
        )
    return v


def is_identifier(name: str) -> bool:
    if not name or not (name[0].isalpha() or name[0] == "_"):
        return False
    return all(c.isalnum() or c in "_$" for c in name) and name.isascii()


def string_list(tbl: Mapping[str, Any], key: str, source: str, section: str, *, required: bool, what: str) -> list[str]:
    if key not in tbl:
        if required:
            raise ContractError(f"{source}: missing required key {where(section, key)}; allowed: {what}.")
        return []
    v = tbl[key]
    if not isinstance(v, list) or not all(isinstance(x, str) and x for x in v):
        raise ContractError(f"{source}: {where(section, key)} = {v!r}; allowed: {what}.")
    return list(v)


def value_table(
    tbl: Mapping[str, Any], key: str, source: str, section: str, *, ints_only: bool = False
) -> Mapping[str, Any]:
    """An inline table of Verilog identifiers to integers (or strings unless ``ints_only``)."""
    v = tbl.get(key, {})
    allowed = "a non-negative integer" if ints_only else "an integer or a string"
    if not isinstance(v, dict):
        raise ContractError(f"{source}: {where(section, key)} must be an inline table like {{ NAME = 8 }}.")
    out: dict[str, Any] = {}
    for name, value in v.items():
        bad_type = isinstance(value, bool) or not isinstance(value, int | str)
        if bad_type or (ints_only and (not isinstance(value, int) or value < 0)):
            raise ContractError(f"{source}: {where(section, key)}.{name} = {value!r}; allowed: {allowed}.")
        if not is_identifier(name):
            raise ContractError(f"{source}: {where(section, key)} has {name!r}, not a Verilog identifier.")
        out[name] = value
    return FrozenMap(out)
