"""A scoreboard for users' own cocotb tests: watch a memory's pins, raise on the first wrong read.

::

    board = Scoreboard("rtl/buf/contract.toml", dut.u_buf).start()
    ...  # the design's own traffic, a CPU model, a DMA: whatever drives the pins
    board.check()  # or let the first mismatch fail the test as it happens

At every rising edge of the contract's clock the pins are sampled as the edge finds them
(:mod:`memcheck.sim.checking.monitor` turns them into operations and steps the reference model);
the first read data that differs from the contract raises :class:`ScoreboardMismatch` (an
``AssertionError``) from the scoreboard's task, which fails the cocotb test with the last cycles
as memcheck's failure table. The table comes from the report layer, which this layer never
imports: :class:`memcheck.scoreboard.Scoreboard` (exported as ``memcheck.sim.Scoreboard``) is this
class with that renderer as :attr:`Scoreboard.default_render`.
"""

from __future__ import annotations

import os
from collections.abc import Callable
from pathlib import Path
from typing import Any

import cocotb
from cocotb.simtime import get_sim_time
from cocotb.triggers import RisingEdge

from memcheck.contract import Contract, load_contract
from memcheck.errors import SimulationError
from memcheck.records import CheckedTrace, CycleRow, ModelStart
from memcheck.sim.checking.monitor import Monitor, parse_bits, refuse_unsupported
from memcheck.sim.plumbing.pins import expected_pins

#: Renders the failure window: (contract, checked window, words before the table) -> text.
Renderer = Callable[[Contract, CheckedTrace, str], str]


class ScoreboardMismatch(AssertionError):
    """Read data on a monitored design differs from its contract; ``checked`` holds the last cycles."""

    def __init__(self, message: str, contract: Contract, checked: CheckedTrace, cycle: int, time_ns: float) -> None:
        super().__init__(message)
        self.contract = contract
        self.checked = checked
        self.cycle = cycle
        self.time_ns = time_ns


def _handle(dut: Any, pin: str, what: str) -> Any:
    try:
        return getattr(dut, pin)
    except AttributeError:
        raise SimulationError(
            f"the monitored design {getattr(dut, '_name', dut)!r} has no signal {pin!r} ({what}); pass the "
            "handle of the memory wrapper instance (for example dut.u_buf) whose pins the contract names."
        ) from None


def _plain(contract: Contract, checked: CheckedTrace, start_text: str) -> str:
    rows = "\n".join(f"cycle {r.cycle}: diff {[hex(d) for d in r.diff]}" for r in checked.rows)
    return f"{start_text}\n{rows}"


class Scoreboard:
    """Monitors one memory wrapper instance against its contract in a running cocotb test.

    Parameters
    ----------
    contract:
        A :class:`~memcheck.contract.Contract` or the path of a contract file.
    dut:
        The cocotb handle of the instance whose pins the contract names (the test's ``dut`` or an
        instance inside it).
    window:
        How many of the last cycles the failure table shows (the mismatch included).
    start:
        What the model knows at the first edge: ``"power-up"`` (the contract's ``initial`` when it
        has no reset), ``"reset"`` or ``"unknown"`` (nothing; use it when monitoring starts mid-run).
    render:
        Renders the failure window; :mod:`memcheck.scoreboard` passes memcheck's failure table.

    Raises
    ------
    SimulationError
        A pin the contract names is missing on ``dut`` or has another width.
    NotYetSimulated
        A contract with several clock pins or with ``[power]`` pins.
    """

    #: The renderer used when none is passed (memcheck.scoreboard.Scoreboard: the failure table).
    default_render: Renderer = staticmethod(_plain)

    def __init__(
        self,
        contract: Contract | str | os.PathLike[str],
        dut: Any,
        *,
        window: int = 16,
        start: ModelStart = "power-up",
        render: Renderer | None = None,
    ) -> None:
        self.contract = (
            contract if isinstance(contract, Contract) else load_contract(Path(contract), check_sources=False)
        )
        refuse_unsupported(self.contract)
        self.dut = dut
        self.render = render or type(self).default_render
        self.handles = {pin: _handle(dut, pin, what) for pin, (_, _, what) in expected_pins(self.contract).items()}
        self.widths = {pin: self._width(pin, want) for pin, (_, want, _) in expected_pins(self.contract).items()}
        self.monitor = Monitor(self.contract, self.widths, window=window, start=start)
        self.failure: ScoreboardMismatch | None = None
        self._task: Any = None

    def _width(self, pin: str, want: int | None) -> int:
        width = len(self.handles[pin]) if hasattr(self.handles[pin], "__len__") else 1
        m = self.contract.memory
        if (want is None and width < m.address_bits) or (want not in (None, 0, width)):
            need = f"at least {m.address_bits}" if want is None else str(want)
            raise SimulationError(
                f"signal {pin!r} of the monitored design is {width} bit(s) wide; the contract needs {need}."
            )
        return int(width)

    # -- running ----------------------------------------------------------------------------------

    def start(self) -> Scoreboard:
        """Start monitoring in a background task (returns self, so ``Scoreboard(...).start()`` reads well)."""
        if self._task is None:
            self._task = cocotb.start_soon(self._run())
        return self

    def stop(self) -> None:
        """Stop monitoring (the cycles seen so far stay checked)."""
        if self._task is not None:
            self._task.cancel()
            self._task = None

    def check(self) -> None:
        """Raise the recorded mismatch, if any (for tests that stop the scoreboard themselves)."""
        if self.failure is not None:
            raise self.failure

    def summary(self) -> str:
        return self.monitor.summary()

    @property
    def cycles(self) -> int:
        return self.monitor.cycle

    @property
    def reads_checked(self) -> int:
        return self.monitor.reads_checked

    async def _run(self) -> None:
        clock = self.handles[self.contract.clock]
        pins = [(pin, h) for pin, h in self.handles.items() if pin != self.contract.clock]
        while True:
            await RisingEdge(clock)
            row = self.monitor.step({pin: parse_bits(str(h.value)) for pin, h in pins})
            if row is not None and not row.ok:
                self.failure = self._mismatch(row)
                self._task = None
                raise self.failure

    def _mismatch(self, row: CycleRow) -> ScoreboardMismatch:
        now = float(get_sim_time("ns"))
        ports = ", ".join(p.name for p, d in zip(self.contract.ports, row.diff, strict=True) if d)
        where = str(self.contract.path) if self.contract.path else "the contract"
        head = (
            f"memcheck scoreboard: read data of port {ports} differs from {where} at cycle {row.cycle} "
            f"({now:g} ns), the rising edge number {row.cycle} of {self.contract.clock!r} since the scoreboard "
            f"started. The last {len(self.monitor.rows)} cycles:"
        )
        notes = "".join(f"\nnote: {n}" for n in self.monitor.notes)
        text = self.render(self.contract, self.monitor.window(), head)
        message = f"{text}\n\n{self.monitor.summary()}{notes}"
        return ScoreboardMismatch(message, self.contract, self.monitor.window(), row.cycle, now)
