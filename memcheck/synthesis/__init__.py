"""March-test synthesis: the shortest March test that detects every instance of chosen fault
classes on a memory, with a proof of minimality within the stated search space.

Pure Python + numpy. See docs/synthesis.md for the search space, the pruning rules and why each is
sound. Verdicts cover the modelled fault models only; an engineering aid, not sign-off.
"""

from memcheck.synthesis.api import (
    DEFAULT_MAX_LENGTH,
    DEFAULT_WORDS,
    Proof,
    SynthesisResult,
    parse_fault_classes,
    shortest_library_test,
    synthesize,
)
from memcheck.synthesis.beam import DEFAULT_BEAM_WIDTH, BeamOutcome
from memcheck.synthesis.evaluate import detects_all, run_steps, steps_of, to_test
from memcheck.synthesis.rows import ROW_BUILDERS, RowModel, build_model

__all__ = [
    "DEFAULT_BEAM_WIDTH",
    "DEFAULT_MAX_LENGTH",
    "DEFAULT_WORDS",
    "ROW_BUILDERS",
    "BeamOutcome",
    "Proof",
    "RowModel",
    "SynthesisResult",
    "build_model",
    "detects_all",
    "parse_fault_classes",
    "run_steps",
    "shortest_library_test",
    "steps_of",
    "synthesize",
    "to_test",
]
