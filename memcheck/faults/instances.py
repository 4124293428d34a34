"""Fault instances (a fault model placed on particular cells) and simulation verdicts.

Every instance is a frozen value object with a one-line description, e.g. ``bit 3 of word 17 cannot
rise (writing 1 over 0 leaves 0)`` or ``writing 1 to word 4 bit 0 (holding 0) flips word 9 bit 0
from 0 to 1``.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

from memcheck.errors import FaultModelError
from memcheck.faults.primitives import FaultModel
from memcheck.march.notation import MarchElement, MarchTest

#: What a March test does to one fault: ``detected`` from every power-up state, ``partial`` (detected
#: from some power-up states only) or ``escaped``. Distinct from a check's pass/fail verdict.
Detection = Literal["detected", "partial", "escaped"]
DETECTIONS: tuple[Detection, ...] = ("detected", "partial", "escaped")

DecoderKind = Literal["no-cell", "no-cell-shared", "wrong-cell", "extra-cell"]
DECODER_KINDS: tuple[DecoderKind, ...] = ("no-cell", "no-cell-shared", "wrong-cell", "extra-cell")
Wired = Literal["and", "or"]


@dataclass(frozen=True, slots=True, order=True)
class Cell:
    """One bit cell: bit ``bit`` of word ``word``."""

    word: int
    bit: int = 0

    def __str__(self) -> str:
        return f"word {self.word} bit {self.bit}"

    def long(self) -> str:
        return f"bit {self.bit} of word {self.word}"


class _ModelFault:
    """Class and name of an instance of a :class:`FaultModel`."""

    __slots__ = ()
    model: FaultModel

    @property
    def cls(self) -> str:
        return self.model.cls

    @property
    def name(self) -> str:
        return self.model.name


@dataclass(frozen=True, slots=True)
class CellFault(_ModelFault):
    """A single-cell fault model (SAF, TF, WDF, RDF, DRDF, IRF, DRF) on one cell."""

    model: FaultModel
    cell: Cell

    def __post_init__(self) -> None:
        if self.model.two_cell:
            raise FaultModelError(f"{self.model.name} involves two cells; use CouplingFault")

    @property
    def cells(self) -> tuple[Cell, ...]:
        return (self.cell,)

    def power_up_labels(self) -> tuple[str, ...]:
        return (str(self.cell),)

    def describe(self) -> str:
        return self.model.describe(self.cell.long())

    def __str__(self) -> str:
        return self.describe()


@dataclass(frozen=True, slots=True)
class CouplingFault(_ModelFault):
    """A two-cell fault model: ``aggressor`` sensitises, ``victim`` goes wrong (different cells,
    in the same word for intra-word coupling)."""

    model: FaultModel
    aggressor: Cell
    victim: Cell

    def __post_init__(self) -> None:
        if not self.model.two_cell:
            raise FaultModelError(f"{self.model.name} is a single-cell fault; use CellFault")
        if self.aggressor == self.victim:
            raise FaultModelError(f"a coupling fault needs two different cells, not {self.victim} twice")

    @property
    def cells(self) -> tuple[Cell, ...]:
        return (self.aggressor, self.victim)

    @property
    def scope(self) -> str:
        """``intra-word``, ``aggressor below`` or ``aggressor above`` (by address)."""
        if self.aggressor.word == self.victim.word:
            return "intra-word"
        return "aggressor below" if self.aggressor.word < self.victim.word else "aggressor above"

    def power_up_labels(self) -> tuple[str, ...]:
        return (str(self.aggressor), str(self.victim))

    def describe(self) -> str:
        return self.model.describe(str(self.victim), str(self.aggressor))

    def __str__(self) -> str:
        return self.describe()


@dataclass(frozen=True, slots=True)
class StuckOpenFault:
    """SOF: the cell cannot be accessed; a read of it returns what the data path last carried on
    that bit (the previous read's value)."""

    cell: Cell

    cls = "SOF"
    name = "SOF"

    @property
    def cells(self) -> tuple[Cell, ...]:
        return (self.cell,)

    def power_up_labels(self) -> tuple[str, ...]:
        return (f"data-out latch bit {self.cell.bit}",)

    def describe(self) -> str:
        return f"{self.cell.long()} is stuck open: reading it returns the previous value on data bit {self.cell.bit}"

    def __str__(self) -> str:
        return self.describe()


@dataclass(frozen=True, slots=True)
class DecoderFault:
    """An address-decoder fault (whole words). The four combinations of the classic types A-D
    (van de Goor 1991): ``no-cell`` (A+B), ``no-cell-shared`` (A+C), ``wrong-cell`` (B+D),
    ``extra-cell`` (C+D). ``address`` is the faulty address, ``other`` the second word involved.

    Read convention: an address reaching no cell returns a fixed unknown value per bit (enumerated
    like a power-up state); an address reaching two cells returns their wired-AND or wired-OR.
    """

    kind: DecoderKind
    address: int
    other: int | None = None
    wired: Wired | None = None

    cls = "AF"

    def __post_init__(self) -> None:
        if self.kind not in DECODER_KINDS:
            raise FaultModelError(f"unknown decoder fault kind {self.kind!r}; one of {', '.join(DECODER_KINDS)}")
        if (self.other is None) != (self.kind == "no-cell"):
            raise FaultModelError(
                f"decoder fault {self.kind} {'takes no' if self.kind == 'no-cell' else 'needs a'} second word"
            )
        if self.other is not None and self.other == self.address:
            raise FaultModelError("a decoder fault's two words must differ")
        multi = self.kind in ("no-cell-shared", "extra-cell")
        if multi != (self.wired is not None):
            raise FaultModelError(
                f"decoder fault {self.kind}: wired is {'and/or' if multi else 'None'} "
                "(only an address reaching two cells combines them)"
            )

    @property
    def name(self) -> str:
        return f"AF {self.kind}" + (f" ({self.wired})" if self.wired else "")

    @property
    def words(self) -> tuple[int, ...]:
        return (self.address,) if self.other is None else (self.address, self.other)

    def targets(self) -> dict[int, tuple[int, ...]]:
        """The words each involved address reaches (addresses not listed reach their own word)."""
        x, y = self.address, self.other
        if self.kind == "no-cell":
            return {x: ()}
        assert y is not None
        if self.kind == "no-cell-shared":
            return {x: (), y: (y, x)}
        if self.kind == "wrong-cell":
            return {x: (y,)}
        return {x: (x, y)}

    def power_up_labels(self) -> tuple[str, ...]:
        return (*(f"word {w}" for w in self.words), "floating read value")

    def describe(self) -> str:
        x, y = self.address, self.other
        how = f" (read as wired-{self.wired.upper()})" if self.wired else ""
        if self.kind == "no-cell":
            return f"address {x} reaches no cell (word {x} is unreachable)"
        if self.kind == "no-cell-shared":
            return f"address {x} reaches no cell and address {y} reaches words {y} and {x}{how}"
        if self.kind == "wrong-cell":
            return f"address {x} reaches word {y} instead of word {x}"
        return f"address {x} reaches words {x} and {y}{how}"

    def __str__(self) -> str:
        return self.describe()


FaultInstance = CellFault | CouplingFault | StuckOpenFault | DecoderFault


@dataclass(frozen=True, slots=True, order=True)
class OpRef:
    """A place in the expanded test: background, element, operation index inside the element and
    word address. A pause has ``op == word == -1``; the power-up moment is all -1."""

    background: int
    element: int
    op: int
    word: int

    @staticmethod
    def power_up() -> OpRef:
        return OpRef(-1, -1, -1, -1)

    @property
    def is_power_up(self) -> bool:
        return self.element < 0

    def describe(self, test: MarchTest | None = None) -> str:
        if self.is_power_up:
            return "power-up"
        bg = f", background {self.background}"
        if self.op < 0:
            return f"the pause (element {self.element}{bg})"
        el = test.elements[self.element] if test is not None and self.element < len(test.elements) else None
        if isinstance(el, MarchElement) and self.op < len(el.ops):
            return (
                f"{el.ops[self.op]} at word {self.word} (element {self.element} {el.to_unicode()}, "
                f"operation {self.op + 1}{bg})"
            )
        return f"operation {self.op + 1} of element {self.element} at word {self.word}{bg}"


@dataclass(frozen=True, slots=True)
class Witness:
    """Why a fault escapes from one power-up state: the state, the first operation after which the
    faulty memory differs from a good one (None: never), and the operation that hides the difference
    again before any read sees it (None with ``excited`` set: still there when the test ends)."""

    power_up: tuple[tuple[str, int], ...]
    excited: OpRef | None
    masked: OpRef | None

    def describe(self, test: MarchTest | None = None) -> str:
        state = ", ".join(f"{k}={v:#x}" if v > 1 else f"{k}={v}" for k, v in self.power_up)
        where: str
        if self.excited is None:
            where = (
                "nothing in the test exposes the fault: the faulty cells always hold what a good memory holds "
                "and every read returns the expected value"
            )
        elif self.masked is None:
            where = (
                f"it first shows after {self.excited.describe(test)} and is still in the memory when the "
                "test ends, never read"
            )
        else:
            where = (
                f"it first shows after {self.excited.describe(test)} and is overwritten or undone by "
                f"{self.masked.describe(test)} before any read sees it"
            )
        return f"from power-up {state}: {where}"


@dataclass(frozen=True, slots=True)
class FaultResult:
    """One fault's verdict; ``witness`` is set for escapes and partial detections."""

    fault: FaultInstance
    verdict: Detection
    witness: Witness | None = None

    def describe(self, test: MarchTest | None = None) -> str:
        text = f"{self.fault.describe()}: {self.verdict}"
        if self.verdict == "partial":
            text = f"{self.fault.describe()}: detected only from some power-up states"
        if self.witness is not None:
            text += f"; {self.witness.describe(test)}"
        return text


def fault_class(fault: FaultInstance) -> str:
    return fault.cls
