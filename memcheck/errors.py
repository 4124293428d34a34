"""One exception hierarchy for everything memcheck reports to a user.

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


class UnknownAlgorithm(MemcheckError):
    """A March algorithm name that is neither in the library nor valid notation."""


class FaultModelError(MemcheckError):
    """A fault class, universe or layout that cannot be built for the given memory."""


class SimulationError(MemcheckError):
    """The simulator could not build, start, or finish a run (compile errors, missing pins, hangs)."""


class ReplayError(MemcheckError):
    """A replay file that cannot be read or does not match its contract."""


class BudgetError(MemcheckError):
    """A request over its size budget (operations of a run or stream), or sized for another memory."""
