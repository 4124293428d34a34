"""Fault simulation: which manufacturing faults a March test detects, per fault class.

Fault models are written as fault primitives ``<S/F/R>`` (:mod:`memcheck.faults.primitives`), placed on
cells as frozen instances (:mod:`memcheck.faults.instances`) and run by two engines that must agree:
the plain reference engine (:mod:`memcheck.faults.reference`) and the fast numpy engine
(:mod:`memcheck.faults.fast`). :func:`coverage` counts verdicts over a fault universe.

Pure Python + numpy (matplotlib only for :func:`plot_coverage`). Verdicts cover the modelled fault
models only; they are an engineering aid, not sign-off.
"""

from memcheck.faults.coverage import (
    DISCLAIMER,
    Breakdown,
    ClassCoverage,
    CoverageReport,
    EscapeGroup,
    coverage,
    wilson_interval,
)
from memcheck.faults.fast import simulate
from memcheck.faults.geometry import Arrangement
from memcheck.faults.instances import (
    DECODER_KINDS,
    Cell,
    CellFault,
    CouplingFault,
    DecoderFault,
    Detection,
    FaultInstance,
    FaultResult,
    OpRef,
    StuckOpenFault,
    Witness,
)
from memcheck.faults.plot import plot_coverage
from memcheck.faults.primitives import (
    ALL_MODELS,
    SINGLE_CELL_MODELS,
    TWO_CELL_MODELS,
    FaultModel,
    FaultPrimitive,
    fp,
    model_named,
    models_of,
)
from memcheck.faults.reference import simulate_reference
from memcheck.faults.sampling import enumerate_class, sample_class
from memcheck.faults.universe import CLASSES, Universe, parse_universe

__all__ = [
    "ALL_MODELS",
    "CLASSES",
    "DECODER_KINDS",
    "DISCLAIMER",
    "SINGLE_CELL_MODELS",
    "TWO_CELL_MODELS",
    "Arrangement",
    "Breakdown",
    "Cell",
    "CellFault",
    "ClassCoverage",
    "CouplingFault",
    "CoverageReport",
    "DecoderFault",
    "Detection",
    "EscapeGroup",
    "FaultInstance",
    "FaultModel",
    "FaultPrimitive",
    "FaultResult",
    "OpRef",
    "StuckOpenFault",
    "Universe",
    "Witness",
    "coverage",
    "enumerate_class",
    "fp",
    "model_named",
    "models_of",
    "parse_universe",
    "plot_coverage",
    "sample_class",
    "simulate",
    "simulate_reference",
    "wilson_interval",
]
