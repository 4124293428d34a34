"""March elements as row-state maps, enumerated by length with exact pruning.

An element's effect on the row model is the pair of maps ``(P, Q)``: what its operations do to a
row's state on the first word it visits in ⇑ order (``P``) and on the second (``Q``). Walking ⇑,
every word is done with the element before the next starts, so a two-word row sees ``P`` then
``Q``; walking ⇓ it sees ``Q`` then ``P``. One-word rows have ``Q`` = identity.

Operation sequences are enumerated as a trie, one operation deeper per level. Two sequences that
start from the same good value and reach the same (good value, ``P``, ``Q``) are interchangeable in
every test and every extension, so a node equal to one already seen at the same or a smaller depth
is dropped with its whole subtree (sound: the kept node is never longer). Elements with equal
effect (good value after, state map) are kept once, the shortest first. The enumeration is finite:
once a depth adds no node, no longer element can do anything a shorter one does not.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import numpy.typing as npt

from memcheck.synthesis.keys import keep_new
from memcheck.synthesis.rows import CLEAR, OPS, UNWRITTEN, WIDTH, RowModel

U8 = npt.NDArray[np.uint8]

UP, DOWN = 0, 1


@dataclass(frozen=True, eq=False)
class ElementSet:
    """Elements of one length from one good value: their maps ``table[i, row, state]``, the good
    value they leave (``g_out``), their operations (op indices into ``OPS``) and direction."""

    table: U8
    g_out: U8
    ops: tuple[tuple[int, ...], ...]
    direction: tuple[int, ...]

    def __len__(self) -> int:
        return len(self.ops)


def compose(after: U8, before: U8) -> U8:
    """``after ∘ before`` for stacks of per-row maps ``(n, rows, WIDTH)``."""
    r = np.arange(after.shape[-2])[None, :, None]
    n = np.arange(after.shape[0])[:, None, None] if after.ndim == 3 else None
    if n is None:
        out: U8 = after[r[0], before]
        return out
    res: U8 = after[n, r, before]
    return res


@dataclass(eq=False)
class ElementTrie:
    """Lazily enumerated elements starting from good value ``g_in`` (``UNWRITTEN`` for the first
    element: its first operation must be a write, and only ``first_writes`` values are tried)."""

    model: RowModel
    g_in: int
    first_writes: tuple[int, ...] = (0, 1)
    directions: tuple[int, ...] = (UP, DOWN)
    _levels: list[ElementSet] = field(default_factory=list)
    _frontier: tuple[U8, U8, U8, list[tuple[int, ...]]] | None = None
    _seen_nodes: set[bytes] = field(default_factory=set)
    _seen_elements: set[bytes] = field(default_factory=set)
    exhausted_at: int | None = None

    def __post_init__(self) -> None:
        rows = self.model.rows
        ident = np.broadcast_to(np.arange(WIDTH, dtype=np.uint8), (1, rows, WIDTH)).copy()
        self._frontier = (ident, ident.copy(), np.array([self.g_in], np.uint8), [()])

    def elements(self, length: int) -> ElementSet | None:
        """Elements of exactly ``length`` operations (None once the enumeration is exhausted)."""
        while len(self._levels) < length and self.exhausted_at is None:
            self._grow()
        if length > len(self._levels):
            return None
        return self._levels[length - 1]

    def _children(self) -> tuple[U8, U8, U8, list[tuple[int, ...]]]:
        assert self._frontier is not None
        p, q, g, ops = self._frontier
        new_p, new_q, new_g, new_ops = [], [], [], []
        m = self.model
        for o, (kind, x) in enumerate(OPS):
            if kind == "r":
                sel = np.flatnonzero(g == x)
            elif self.g_in == UNWRITTEN and not ops[0]:
                sel = np.arange(len(ops)) if x in self.first_writes else np.zeros(0, np.int64)
            else:
                sel = np.arange(len(ops))
            if sel.size == 0:
                continue
            new_p.append(compose(m.first[o], p[sel]))
            new_q.append(compose(m.second[o], q[sel]))
            new_g.append(np.full(sel.size, x, np.uint8) if kind == "w" else g[sel])
            new_ops += [ops[i] + (o,) for i in sel.tolist()]
        if not new_ops:
            z = np.zeros((0, m.rows, WIDTH), np.uint8)
            return z, z, np.zeros(0, np.uint8), []
        return np.concatenate(new_p), np.concatenate(new_q), np.concatenate(new_g), new_ops

    def _grow(self) -> None:
        p, q, g, ops = self._children()
        both = np.concatenate([p.reshape(len(ops), -1), q.reshape(len(ops), -1)], axis=1)
        keep = keep_new(both, g, self._seen_nodes).tolist()
        if not keep:
            self.exhausted_at = len(self._levels)
            self._frontier = None
            return
        idx = np.array(keep, np.int64)
        p, q, g = p[idx], q[idx], g[idx]
        ops = [ops[i] for i in keep]
        self._frontier = (p, q, g, ops)
        self._levels.append(self._element_set(p, q, g, ops))

    def _element_set(self, p: U8, q: U8, g: U8, ops: list[tuple[int, ...]]) -> ElementSet:
        tables, gs, out_ops, dirs = [], [], [], []
        p, q = CLEAR[p], CLEAR[q]  # a word's last operation pairs with nothing after it
        for d in self.directions:
            t = compose(q, p) if d == UP else compose(p, q)
            for i in keep_new(t.reshape(len(ops), -1), g, self._seen_elements).tolist():
                tables.append(t[i])
                gs.append(int(g[i]))
                out_ops.append(ops[i])
                dirs.append(d)
        rows = self.model.rows
        table = np.stack(tables) if tables else np.zeros((0, rows, WIDTH), np.uint8)
        return ElementSet(table, np.array(gs, np.uint8), tuple(out_ops), tuple(dirs))
