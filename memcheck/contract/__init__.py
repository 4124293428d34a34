"""The memory contract: what a wrapper promises, loaded from TOML into frozen dataclasses.

``spec`` holds the dataclasses, ``loading`` the TOML reading and validation, ``clocks`` the clock
pins, read-data timing and the tick timeline, ``power`` the power pins, ``explain`` the contract in
words. Everything public is re-exported here, so ``from memcheck.contract import ...`` is enough.
"""

from memcheck.contract.clocks import DEFAULT_PERIOD, DEFAULT_TIMESCALE, ClockSpec, Tick, TimingSpec, ticks, timeline
from memcheck.contract.explain import key_explanations, unchecked_behaviours
from memcheck.contract.loading import MEMORY_KEYS, build_memory, contract_from_dict, load_contract, parse_contract
from memcheck.contract.power import POWER_EFFECT, SLEEP_READ_DATA, PowerEffect, PowerSpec, SleepReadData
from memcheck.contract.spec import (
    COLLISION,
    IDLE_READ_DATA,
    INITIAL,
    MAX_ADDRESS_BITS,
    MAX_LATENCY,
    MAX_WIDTH,
    MAX_WORDS,
    OUT_OF_RANGE,
    READ_DURING_WRITE,
    ROLES,
    WRITE_COLLISION,
    Collision,
    Contract,
    IdleReadData,
    Initial,
    MemorySpec,
    OutOfRange,
    PortSpec,
    ReadDuringWrite,
    ResetSpec,
    Role,
    RtlSpec,
    WriteCollision,
)

__all__ = [
    "COLLISION",
    "DEFAULT_PERIOD",
    "DEFAULT_TIMESCALE",
    "IDLE_READ_DATA",
    "INITIAL",
    "MAX_ADDRESS_BITS",
    "MAX_LATENCY",
    "MAX_WIDTH",
    "MAX_WORDS",
    "MEMORY_KEYS",
    "OUT_OF_RANGE",
    "POWER_EFFECT",
    "READ_DURING_WRITE",
    "ROLES",
    "SLEEP_READ_DATA",
    "WRITE_COLLISION",
    "ClockSpec",
    "Collision",
    "Contract",
    "IdleReadData",
    "Initial",
    "MemorySpec",
    "OutOfRange",
    "PortSpec",
    "PowerEffect",
    "PowerSpec",
    "ReadDuringWrite",
    "ResetSpec",
    "Role",
    "RtlSpec",
    "SleepReadData",
    "Tick",
    "TimingSpec",
    "WriteCollision",
    "build_memory",
    "contract_from_dict",
    "key_explanations",
    "load_contract",
    "parse_contract",
    "ticks",
    "timeline",
    "unchecked_behaviours",
]
