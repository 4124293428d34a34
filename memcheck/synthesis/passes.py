"""Several data backgrounds as one search model, with the passes' shared behaviour simulated once.

A test runs once per data background, the memory not reset in between: pass ``k + 1`` starts each
row where pass ``k`` left it, which is known only once the whole test is. So a prefix keeps, for a
row's pass 1, its state from power-up and, for each later pass, the state it would be in had the pass
started in each state it can start in. Each such (pass tables, start state) is a *pseudo-row*; the
search runs on pseudo-rows unchanged, and :meth:`ExpandedModel.final_rows` composes the passes at
the end. Exact: a prefix's future still depends only on its state, so state merging and the
minimality proof are kept.

**The reduction.** A row's behaviour in one pass depends only on its fault, its cell relation and the
two flip bits the pass's background gives its cells: at most four patterns per (fault, relation),
whatever the number of backgrounds or bit columns. A 32-bit word with the six standard backgrounds
has 992 ordered bit pairs, each with its own sequence of per-pass patterns, but each pass of each of
them runs one of the same few tables. Pseudo-rows are therefore keyed by (the pass's tables, the
start state) and shared by every row, pass and background that has them: two pseudo-rows with equal
tables and equal start state go through equal states under every test, so keeping one loses
nothing. The start states are those a pass can begin in: the states reachable from the row's
power-up state under its operation, pause and end-of-word tables (a superset of what a pass boundary
can see), without ``DET`` (a detected row stays detected: one shared pseudo-row that is ``DET`` from
the start stands for it).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property

import numpy as np
import numpy.typing as npt

from memcheck.synthesis.rows import CLEAR, DET, NSTATE, WIDTH, Instance, RowModel

U8 = npt.NDArray[np.uint8]
IntArray = npt.NDArray[np.int64]
BoolArray = npt.NDArray[np.bool_]

_CHUNK_INSTANCES = 256  # instances whose rows are composed together in a completeness check
_STATE_BLOCK = 1 << 14  # states composed at once (bounds the composed array)
_SCORE_ROWS = 4096  # rows sampled for the beam search's score


@dataclass(frozen=True, eq=False)
class ExpandedModel(RowModel):
    """A model over pseudo-rows. ``entry[row]``: the pseudo-row of the original row's first pass;
    ``links[pass - 1, row, start state]``: the pseudo-row of a later pass started in that state.
    Instances name original rows."""

    entry: IntArray = field(default_factory=lambda: np.zeros(0, np.int64))
    links: IntArray = field(default_factory=lambda: np.zeros((0, 0, WIDTH), np.int64))

    def final_rows(self, states: U8, rows: IntArray) -> U8:
        """The state original ``rows`` end the whole test in, from pseudo-row ``states`` (n, pseudo)."""
        out: U8 = states[:, self.entry[rows]]
        for k in range(self.links.shape[0]):
            idx = self.links[k][rows[None, :], out]
            out = np.take_along_axis(states, idx, axis=1)
        return out

    def final(self, states: U8) -> U8:
        return self.final_rows(states, np.arange(self.entry.size))

    @cached_property
    def _chunks(self) -> list[tuple[IntArray, list[IntArray], list[list[IntArray]]]]:
        """Instances in groups: (their rows, row-index matrices of one-alternative instances by row
        count, alternatives of the others), indices local to the group's rows."""
        out = []
        nchunk = -(-len(self.instances) // _CHUNK_INSTANCES)
        for c0 in range(nchunk):  # strided: each group mixes every class, so most states fail the first
            part = self.instances[c0::nchunk]
            rows = np.array(sorted({r for inst in part for alt in inst.alternatives for r in alt}), np.int64)
            by_len: dict[int, list[IntArray]] = {}
            multi = []
            for inst in part:
                local = [np.searchsorted(rows, np.array(alt, np.int64)) for alt in inst.alternatives]
                if len(local) == 1:
                    by_len.setdefault(local[0].size, []).append(local[0])
                else:
                    multi.append(local)
            out.append((rows, [np.stack(v) for v in by_len.values()], multi))
        return out

    def complete(self, states: U8) -> BoolArray:
        ok = np.zeros(states.shape[0], bool)
        for s0 in range(0, states.shape[0], _STATE_BLOCK):
            ok[s0 : s0 + _STATE_BLOCK] = self._complete_block(states[s0 : s0 + _STATE_BLOCK])
        return ok

    def _complete_block(self, states: U8) -> BoolArray:
        alive = np.arange(states.shape[0])
        chunks = self._chunks
        for group in list(chunks):
            rows, singles, multi = group
            done = self.final_rows(states[alive], rows) == DET
            keep = np.ones(alive.size, bool)
            for mat in singles:
                keep &= done[:, mat].all(axis=(1, 2))
            for alts in multi:
                any_alt = np.zeros(alive.size, bool)
                for cols in alts:
                    any_alt |= done[:, cols].all(axis=1)
                keep &= any_alt
            if not keep.all() and chunks[0] is not group:  # tried first next time (changes the order only)
                chunks.insert(0, chunks.pop(next(i for i, c in enumerate(chunks) if c is group)))
            alive = alive[keep]
            if not alive.size:
                break
        out = np.zeros(states.shape[0], bool)
        out[alive] = True
        return out

    def score(self, states: U8) -> IntArray:
        n = self.entry.size
        sample = np.unique(np.linspace(0, n - 1, min(n, _SCORE_ROWS)).astype(np.int64))
        det: IntArray = (self.final_rows(states, sample) == DET).sum(axis=1)
        return det


def _start_states(model: RowModel, tables: list[U8]) -> npt.NDArray[np.bool_]:
    """``reach[row, s]``: states 0..3 a pass may start row in (closure of its power-up state under
    every table, the end-of-word clearing included)."""
    n = model.rows
    reach = np.zeros((n, WIDTH), bool)
    reach[np.arange(n), model.init] = True
    r = np.arange(n)[:, None]
    maps = [*tables, model.pause, np.broadcast_to(CLEAR, (n, WIDTH))]
    while True:
        before = int(reach.sum())
        for t in maps:
            src_r, src_s = np.nonzero(reach)
            reach[src_r, t[src_r, src_s]] = True
        if int(reach.sum()) == before:
            break
    reach[:, 4:] = False  # a pass ends after an element or a pause, both clear the "armed" bit; DET aside
    del r
    return reach


def expand_passes(model: RowModel) -> RowModel:
    """The single-pass search model over shared pseudo-rows of a model with several passes (itself
    when it has one)."""
    if len(model.passes) <= 1:
        return model
    n, npass = model.rows, len(model.passes)
    per_pass = [np.concatenate([f.transpose(1, 0, 2), q.transpose(1, 0, 2)], axis=1) for f, q in model.passes]
    keys = np.stack([np.concatenate([t.reshape(n, -1), model.pause], axis=1) for t in per_pass])  # (pass, row, bytes)
    flat = np.ascontiguousarray(keys.reshape(npass * n, -1))
    uniq, table_id = np.unique(flat.view(np.dtype((np.void, flat.shape[1]))).ravel(), return_inverse=True)
    table_id = table_id.reshape(npass, n)
    reach = _start_states(model, [t for f, q in model.passes for t in (*f, *q)])
    # pseudo-row key = table id * WIDTH + start state
    want = [table_id[0] * WIDTH + model.init.astype(np.int64)]
    rr, ss = np.nonzero(reach)
    for k in range(1, npass):
        want.append(table_id[k][rr] * WIDTH + ss)
    pkeys, inverse = np.unique(np.concatenate(want), return_inverse=True)
    det_row = pkeys.size
    entry = inverse[:n]
    links = np.full((npass - 1, n, WIDTH), det_row, np.int64)
    pos = n
    for k in range(1, npass):
        links[k - 1, rr, ss] = inverse[pos : pos + rr.size]
        pos += rr.size
    links[:, :, NSTATE] = det_row
    tab = np.frombuffer(uniq.tobytes(), np.uint8).reshape(uniq.size, -1)
    src = tab[pkeys // WIDTH]
    first = src[:, : 4 * WIDTH].reshape(-1, 4, WIDTH)
    second = src[:, 4 * WIDTH : 8 * WIDTH].reshape(-1, 4, WIDTH)
    pause = src[:, 8 * WIDTH :]
    init = (pkeys % WIDTH).astype(np.uint8)
    return ExpandedModel(
        model.classes,
        np.append(init, np.uint8(DET)),
        np.ascontiguousarray(np.concatenate([first, first[:1]]).transpose(1, 0, 2)),
        np.ascontiguousarray(np.concatenate([second, second[:1]]).transpose(1, 0, 2)),
        np.ascontiguousarray(np.concatenate([pause, pause[:1]])),
        tuple(Instance(i.label, i.alternatives) for i in model.instances),
        (),
        entry.astype(np.int64),
        links,
    )
