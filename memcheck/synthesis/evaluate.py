"""Run a whole March test through the row model (used for ⇕ marking, checks and tests)."""

from __future__ import annotations

from collections.abc import Iterable

import numpy as np
import numpy.typing as npt

from memcheck.march.notation import Delay, MarchElement, MarchOp, MarchTest
from memcheck.synthesis.elements import DOWN, UP
from memcheck.synthesis.rows import CLEAR, DET, OPS, WIDTH, RowModel
from memcheck.synthesis.search import Step

U8 = npt.NDArray[np.uint8]
BoolArray = npt.NDArray[np.bool_]

_ORDER = {UP: "up", DOWN: "down"}


def op_index(op: MarchOp) -> int:
    return OPS.index((op.kind, op.value))


def steps_of(test: MarchTest, any_order: str = "up") -> tuple[Step, ...]:
    """The test as search steps; ⇕ elements walk ``any_order``."""
    out = []
    for el in test.elements:
        if isinstance(el, Delay):
            out.append(Step(None))
            continue
        order = any_order if el.order == "any" else el.order
        out.append(Step(tuple(op_index(o) for o in el.ops), DOWN if order == "down" else UP))
    return tuple(out)


def to_test(steps: Iterable[Step], any_elements: Iterable[int] = ()) -> MarchTest:
    """Search steps as a MarchTest; elements whose index is in ``any_elements`` are marked ⇕."""
    anys = set(any_elements)
    out: list[MarchElement | Delay] = []
    for i, st in enumerate(steps):
        if st.ops is None:
            out.append(Delay())
            continue
        ops = tuple(MarchOp(OPS[o][0], OPS[o][1]) for o in st.ops)  # type: ignore[arg-type]
        out.append(MarchElement("any" if i in anys else _ORDER[st.direction], ops))  # type: ignore[arg-type]
    return MarchTest(tuple(out))


def run_steps(model: RowModel, steps: Iterable[Step]) -> U8:
    """Final row states (rows,) after ``steps`` from power-up, run once per data background (the
    state carrying over from one background's pass to the next, as the fault engines do)."""
    r = np.arange(model.rows)
    state = model.init.copy()
    steps = tuple(steps)
    for first, second in model.passes or ((model.first, model.second),):
        for st in steps:
            if st.ops is None:
                state = model.pause[r, state]
                continue
            p = np.broadcast_to(np.arange(WIDTH, dtype=np.uint8), (model.rows, WIDTH))
            q = p
            for o in st.ops:
                p = first[o][r[:, None], p]
                q = second[o][r[:, None], q]
            p, q = CLEAR[p], CLEAR[q]  # two operations in a row never span words
            t = q[r[:, None], p] if st.direction == UP else p[r[:, None], q]
            state = t[r, state]
    return state


def detects_all(model: RowModel, steps: Iterable[Step]) -> bool:
    """Whether the steps detect every instance of the model."""
    return bool(model.complete(run_steps(model, steps)[None, :])[0])


def instance_detected(model: RowModel, steps: Iterable[Step]) -> BoolArray:
    """Per instance of the model: detected by ``steps``."""
    final = run_steps(model, steps)[None, :]
    out = np.zeros(len(model.instances), bool)
    done = final == DET
    for i, inst in enumerate(model.instances):
        out[i] = any(bool(done[0, list(alt)].all()) for alt in inst.alternatives)
    return out
