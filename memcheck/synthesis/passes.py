"""Several data backgrounds as one search model.

A test runs once per data background, the memory not reset in between: pass ``k + 1`` starts each
row where pass ``k`` left it, which is known only once the whole test is. So a prefix keeps, for
every row, its pass-1 state from power-up and, for each later pass, the state it would be in had
the pass started in each possible state (``WIDTH`` of them, ``DET`` included). Each such
(row, pass, start state) is a *pseudo-row* with the row's tables of that pass and that start state
as its power-up state; the search runs on pseudo-rows unchanged, and
:meth:`~memcheck.synthesis.rows.RowModel.final` composes the passes at the end. Exact: a prefix's
future still depends only on its state, so state merging and the minimality proof are kept.
"""

from __future__ import annotations

import numpy as np

from memcheck.synthesis.rows import WIDTH, RowModel


def expand_passes(model: RowModel) -> RowModel:
    """The single-pass model over pseudo-rows of a model with several passes (itself when it has
    one). Instances keep their row numbers (pass-1 rows come first)."""
    if len(model.passes) <= 1:
        return model
    n = model.rows
    later = model.passes[1:]
    starts = np.tile(np.arange(WIDTH, dtype=np.uint8), n)  # row-major: row r, start s -> r * WIDTH + s
    rep = np.repeat(np.arange(n), WIDTH)
    init = [model.init] + [starts] * len(later)
    first = [model.first] + [f[:, rep] for f, _ in later]
    second = [model.second] + [q[:, rep] for _, q in later]
    pause = [model.pause] + [model.pause[rep]] * len(later)
    chain = np.stack([n + k * n * WIDTH + np.arange(n * WIDTH).reshape(n, WIDTH) for k in range(len(later))])
    return RowModel(
        model.classes,
        np.concatenate(init),
        np.ascontiguousarray(np.concatenate(first, axis=1)),
        np.ascontiguousarray(np.concatenate(second, axis=1)),
        np.concatenate(pause),
        model.instances,
        (),
        chain.astype(np.int64),
    )
