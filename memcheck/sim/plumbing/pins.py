"""The top module's ports, read from an elaborated design, checked against the contract.

Icarus writes one ``.port_info`` line per port of each root module into its compiled ``.vvp``
file, with the width after parameters are applied. Reading those lines gives the ports exactly
as the simulator sees them, without a Verilog parser of our own.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Literal

from memcheck.contract import Contract
from memcheck.errors import SimulationError

Direction = Literal["input", "output", "inout"]

_SCOPE = re.compile(r'^\S+ \.scope module, "((?:[^"\\]|\\.)*)" "(?:[^"\\]|\\.)*" \d+ \d+(, .*)?;$')
_PORT = re.compile(r'^\s*\.port_info (\d+) /(INPUT|OUTPUT|INOUT) (\d+) "((?:[^"\\]|\\.)*)";$')


@dataclass(frozen=True)
class TopPort:
    """One port of the top module as elaborated."""

    name: str
    direction: Direction
    width: int

    def describe(self) -> str:
        return (
            f"{self.direction} {_range(self.width)} {self.name}" if self.width > 1 else f"{self.direction} {self.name}"
        )


def read_ports(vvp_file: Path, top: str) -> dict[str, TopPort]:
    """Ports of root module ``top`` in a compiled Icarus ``.vvp`` file, in declaration order."""
    ports: dict[str, TopPort] = {}
    inside = False
    found = False
    for line in vvp_file.read_text(encoding="utf-8", errors="replace").splitlines():
        m = _SCOPE.match(line)
        if m:
            inside = m.group(1) == top and m.group(2) is None  # a root scope has no parent
            found = found or inside
            continue
        if not inside:
            continue
        p = _PORT.match(line)
        if p:
            direction: Direction = p.group(2).lower()  # type: ignore[assignment]
            ports[p.group(4)] = TopPort(p.group(4), direction, int(p.group(3)))
        elif ports:
            break
    if not found:
        raise SimulationError(f"the compiled design has no root module named {top!r}; check [rtl] top.")
    return ports


@dataclass(frozen=True)
class PinCheck:
    """Result of matching a contract against the top module's ports."""

    widths: Mapping[str, int]
    unconnected_inputs: tuple[str, ...]


#: The width of a tied pin: any (the constant is sized to the pin).
ANY_WIDTH = 0


def expected_pins(contract: Contract) -> dict[str, tuple[Direction, int | None, str]]:
    """Pin -> (direction, required width, None for "at least the address bits" or :data:`ANY_WIDTH`,
    what it is): every port clock, the reset, the power pins, the tied pins and each port's pins."""
    m = contract.memory
    out: dict[str, tuple[Direction, int | None, str]] = {c: ("input", 1, "a clock") for c in contract.clock_names}
    if contract.reset is not None:
        out[contract.reset.signal] = ("input", 1, "the reset")
    if contract.power is not None:
        out.update({pin: ("input", 1, f"the {role} pin of [power]") for role, pin in contract.power.pins().items()})
    if contract.rtl is not None:
        out.update({pin: ("input", ANY_WIDTH, f"tied to {v} by [rtl] tie") for pin, v in contract.rtl.tie.items()})
    for p in contract.ports:
        where = f"port {p.name!r}"
        if p.enable:
            out[p.enable] = ("input", 1, f"{where} enable")
        if p.write_enable:
            out[p.write_enable] = ("input", 1, f"{where} write enable")
        out[p.address] = ("input", None, f"{where} address")
        if p.write_data:
            out[p.write_data] = ("input", m.width, f"{where} write data")
        if p.lane_enable:
            out[p.lane_enable] = ("input", m.lanes, f"{where} lane enables")
        if p.read_data:
            out[p.read_data] = ("output", m.width, f"{where} read data")
    return out


def check_pins(contract: Contract, ports: Mapping[str, TopPort], top: str) -> PinCheck:
    """Every contract pin must exist on ``top`` with the right direction and width.

    Raises :class:`SimulationError` naming the pin, the width the contract implies and the
    module's actual ports. Address pins may be wider than needed (the extra addresses lie beyond
    ``words``) but not narrower.
    """
    m = contract.memory
    actual = "; ".join(p.describe() for p in ports.values()) or "(none)"
    widths: dict[str, int] = {}
    for pin, (direction, width, what) in expected_pins(contract).items():
        want = _wanted(width, m.address_bits, m.words)
        port = ports.get(pin)
        if port is None:
            raise SimulationError(
                f"the top module {top!r} has no pin {pin!r} ({what}, {direction}, {want}). Its ports are: {actual}."
            )
        if port.direction != direction and not (direction == "input" and port.direction == "inout"):
            raise SimulationError(
                f"pin {pin!r} ({what}) of {top!r} is an {port.direction}, but the contract needs an "
                f"{direction} of {want}. Its ports are: {actual}."
            )
        ok = port.width >= m.address_bits if width is None else width in (ANY_WIDTH, port.width)
        if not ok:
            raise SimulationError(
                f"pin {pin!r} ({what}) of {top!r} is {_declared(port.width)}, but the contract needs {want}. "
                f"Its ports are: {actual}."
            )
        widths[pin] = port.width
    _check_ties(contract, widths, top)
    spare = tuple(p.name for p in ports.values() if p.name not in widths and p.direction != "output")
    return PinCheck(widths=widths, unconnected_inputs=spare)


def _range(width: int) -> str:
    """A width as a Verilog declaration writes it: 4 -> ``[3:0]``."""
    return f"[{width - 1}:0]"


def _declared(width: int) -> str:
    """``[3:0] (4 bits wide)`` / ``1 bit wide``."""
    return f"{_range(width)} ({width} bits wide)" if width > 1 else "1 bit wide"


def _wanted(width: int | None, address_bits: int, words: int) -> str:
    if width == ANY_WIDTH:
        return "any width"
    if width is None:
        return f"at least {_declared(address_bits).replace(' wide', '')} for {words} words"
    return f"{_range(width)} ({width} bits)" if width > 1 else "1 bit"


def _check_ties(contract: Contract, widths: Mapping[str, int], top: str) -> None:
    """Each ``[rtl] tie`` value must fit its pin as an unsigned number."""
    if contract.rtl is None:
        return
    for pin, value in contract.rtl.tie.items():
        w = widths[pin]
        if not 0 <= value < 1 << w:
            raise SimulationError(
                f"[rtl] tie.{pin} = {value} does not fit pin {pin!r} of {top!r} ({w} bit{'s' if w != 1 else ''}); "
                f"allowed: 0 to {(1 << w) - 1}."
            )
