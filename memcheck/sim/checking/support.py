"""What the simulator side honours so far: contract keys refused before anything is built.

The contract and the reference model understand every key of docs/contract.md; the generated
harness, the stimulus and the bulk phase do not yet drive some of them. A contract using one is
refused here, with the key named, instead of being checked as if the key were absent (which could
give a verdict on behaviour the harness never produced). Every job (check, March run, replay)
calls :func:`require_simulator_support` before building.
"""

from __future__ import annotations

from memcheck.contract import Contract
from memcheck.errors import NotYetSimulated
from memcheck.sim.checking.ticks import harness_timing

_MODEL_HINT = "check them with the model API (memcheck.model.Model) or wait for harness support"


def _power_problem(contract: Contract) -> str | None:
    power = contract.power
    if power is None:
        return None
    pins = ", ".join(f"{role} {pin!r}" for role, pin in power.pins().items())
    awake = ", ".join(f"{pin} = {int(pin in power.active_low)}" for pin in power.pins().values())
    return (
        f"[power] pins ({pins}): the contract and model support them, but the simulator harness does not drive "
        f"power pins yet; to check everything else, hold the memory awake with [rtl] tie = {{ {awake} }} instead "
        f"of [power], or {_MODEL_HINT}"
    )


def simulator_support_problems(contract: Contract) -> list[str]:
    """One sentence per key of ``contract`` the simulator harness cannot honour yet (empty: none)."""
    found = [_power_problem(contract)]
    return [p for p in found if p is not None]


def require_simulator_support(contract: Contract) -> None:
    """Raise :class:`~memcheck.errors.NotYetSimulated` naming every key of ``contract`` the simulator
    harness cannot honour yet, before anything is built.

    Raises
    ------
    NotYetSimulated
        One paragraph: each unsupported key, what it says, and what to do instead.
    """
    problems = simulator_support_problems(contract)
    if not problems:
        harness_timing(contract)  # clocks and sample points the harness can place exactly
        return
    where = f"{contract.path}: " if contract.path is not None else ""
    raise NotYetSimulated(
        f"{where}this contract uses {'a key' if len(problems) == 1 else 'keys'} the simulator cannot check yet: "
        + "; ".join(problems)
        + "."
    )
