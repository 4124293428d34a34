"""One exception hierarchy for everything memcheck reports to a user.

``MemcheckError`` > ``ContractError``, ``InvalidOperation``, ``NotationError`` (March notation
only), ``UsageError`` (bad argument or option values), ``BudgetError`` (size and time limits),
``UnknownAlgorithm``, ``FaultModelError``, ``SimulationError`` (> ``SimulationStalled``), ``ReplayError``.

Errors are raised where the cause is known (file, key, position) and rendered once,
by the CLI, as a single paragraph with exit code 2.
"""

from __future__ import annotations


class MemcheckError(Exception):
    """Base of every error memcheck raises on purpose (bad input or tool failure)."""


class ContractError(MemcheckError):
    """A contract file (TOML) is malformed, incomplete or self-contradictory."""


class InvalidOperation(MemcheckError):
    """An operation cannot be performed by the port it is given to (e.g. a write on a read port)."""


class NotationError(MemcheckError):
    """March notation that cannot be parsed; the message points at the character."""

    def __init__(self, message: str, text: str = "", position: int = -1) -> None:
        self.text = text
        self.position = position
        if text and position >= 0:
            pointer = " " * position + "^"
            message = f"{message}\n  {text}\n  {pointer}"
        super().__init__(message)


class UsageError(MemcheckError):
    """An argument or option value outside what a function or command accepts: a memory size or
    layout that does not fit, an unknown address order, background or export format, a bad seed,
    or options that do not go together."""


class BudgetError(MemcheckError):
    """A request over a size or time limit (too many operations, faults or cycles for the call that
    was asked to hold them); the message names the limit and the way around it."""


class UnknownAlgorithm(MemcheckError):
    """A March algorithm name that is neither in the library nor valid notation."""


class FaultModelError(MemcheckError):
    """A fault class, universe or layout that cannot be built for the given memory."""


class SimulationError(MemcheckError):
    """The simulator could not build, start, or finish a run (compile errors, missing pins, hangs)."""


class SimulationStalled(SimulationError):
    """The stall watchdog stopped a simulation that made no progress (a zero-delay loop, a wait for
    something that never happens)."""


class NotYetSimulated(SimulationError):
    """A contract key the contract and the model support but the simulator harness does not honour yet
    (raised before anything is built, so no verdict is ever given on a contract the harness would drive
    wrongly)."""


class ReplayError(MemcheckError):
    """A replay file that cannot be read or does not match its contract."""


class SynthesisError(MemcheckError):
    """A March-test synthesis request that cannot be searched (unknown or unsupported fault class, a
    class set no March test can detect, a length bound below any possible test)."""


class BistError(MemcheckError):
    """A BIST engine that cannot be built, attached, simulated or checked as asked (bad test, order,
    background, geometry, port, or a missing tool)."""


class FailLogError(MemcheckError):
    """A fail log (the failing reads of a March test run) that cannot be read or names an operation
    the test does not have; the message gives the line."""
