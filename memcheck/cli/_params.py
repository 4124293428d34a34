"""Click parameter types shared by the DFT commands: sizes with K/M/G suffixes.

``--words 16K`` is 16,384 words and ``--max-memory 2G`` is 2 GiB: the suffixes are binary
(K = 1024, M = 1024², G = 1024³, T = 1024⁴), case-insensitive, an optional trailing ``B`` allowed
for byte sizes (``512MB``); plain integers and ``_`` or ``,`` separators work too (``16_384``).
"""

from __future__ import annotations

import re
from typing import Any

import click

from memcheck.errors import UsageError

_SUFFIX = {"": 1, "k": 1 << 10, "m": 1 << 20, "g": 1 << 30, "t": 1 << 40}
_SIZE_RE = re.compile(r"(\d+)\s*([kmgt]?)(i?b)?", re.IGNORECASE)


def parse_size(text: str | int, what: str = "size", minimum: int = 1) -> int:
    """``16K`` -> 16384; raises UsageError for anything else or a value below ``minimum``."""
    if isinstance(text, int):
        value = text
    else:
        m = _SIZE_RE.fullmatch(text.strip().replace("_", "").replace(",", ""))
        if m is None:
            raise UsageError(
                f"{what} {text!r} is not a size: give a whole number, optionally with a binary suffix "
                "K, M, G or T (e.g. 16K = 16384)"
            )
        value = int(m[1]) * _SUFFIX[m[2].lower()]
    if value < minimum:
        raise UsageError(f"{what} must be at least {minimum}, not {value}")
    return value


def format_bytes(n: int) -> str:
    """``3.9 GiB``-style text for a byte count."""
    size = float(n)
    for unit in ("B", "KiB", "MiB", "GiB", "TiB"):
        if size < 1024 or unit == "TiB":
            return f"{size:.0f} {unit}" if unit == "B" else f"{size:.1f} {unit}"
        size /= 1024
    return f"{n} B"  # pragma: no cover


class SizeType(click.ParamType[int, Any]):
    """A count or byte size with an optional K/M/G/T suffix (see module docstring)."""

    name = "size"

    def __init__(self, minimum: int = 1) -> None:
        self.minimum = minimum

    def convert(self, value: Any, param: click.Parameter | None, ctx: click.Context | None) -> int:
        if isinstance(value, int):
            return parse_size(value, self._what(param), self.minimum)
        try:
            return parse_size(str(value), self._what(param), self.minimum)
        except UsageError as exc:
            self.fail(str(exc), param, ctx)

    @staticmethod
    def _what(param: click.Parameter | None) -> str:
        return param.opts[0] if param is not None and param.opts else "size"


#: A positive count with an optional K/M/G/T suffix (``--words 16K``).
SIZE = SizeType(1)
