"""The fault table of the faulty memory (:mod:`memcheck.bist.faulty_memory`): one row per faulty copy.

A row is :data:`ROW_FIELDS` packed most significant first into ``ROW_BITS`` bits and written in hex,
one row per line, for ``$readmemh`` (docs/bist.md, "Fault table"). A fault primitive takes one
*slot* (:data:`SLOT_FIELDS`); a model has at most two (CFin). A dynamic primitive (two operations in
a row, :mod:`memcheck.faults.primitives`) marks its dynamic part (``vd`` victim, ``ad`` aggressor)
and gives the first operation as ``ps`` (the state the cell held before it), ``pw`` (1: a write,
0: a read) and ``pd`` (the value written); its ``vst``/``ast`` is then the value the cell holds when
the second operation comes (``Sens.held``).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

from memcheck.errors import BistError
from memcheck.faults.primitives import FaultModel, FaultPrimitive, Sens

ROW_BITS = 128
KIND_NONE, KIND_FP, KIND_SOF, KIND_NC, KIND_NS, KIND_WC, KIND_EC = range(7)
AF_KIND_CODES = {"no-cell": KIND_NC, "no-cell-shared": KIND_NS, "wrong-cell": KIND_WC, "extra-cell": KIND_EC}
SLOT_FIELDS = (
    "valid",
    "any",
    "vs",
    "vr",
    "vw",
    "vt",
    "vst",
    "wv",
    "as",
    "ar",
    "aw",
    "ast",
    "awv",
    "f",
    "r",
    "vd",
    "ad",
    "ps",
    "pw",
    "pd",
)
ROW_FIELDS: tuple[tuple[str, int], ...] = (
    ("kind", 4),
    ("wired_and", 1),
    ("drive", 1),
    ("has_a", 1),
    ("v0", 1),
    ("a0", 1),
    ("l0", 1),
    ("vword", 24),
    ("vbit", 10),
    ("aword", 24),
    ("abit", 10),
    *((f"p{s}_{n}", 1) for s in (0, 1) for n in SLOT_FIELDS),
)
MAX_COPIES = 4096
MAX_TABLE_CELLS = 1 << 27  # words x copies: the per-word copy masks stay below ~64 MiB in the simulator


def _pre_bits(s: Sens) -> dict[str, int]:
    """The first operation of a dynamic part: the state before it, write or read, the value written."""
    assert s.pre is not None and s.state is not None
    kind, value = s.pre
    return {"ps": s.state, "pw": int(kind == "w"), "pd": value if kind == "w" else s.state}


def slot_bits(p: FaultPrimitive) -> dict[str, int]:
    """One fault primitive as the table's slot flags (see module docstring)."""
    v, a = p.victim, p.aggressor
    out = {"valid": 1, "any": int(v.is_any), "f": p.f, "r": p.f if p.r is None else p.r}
    out.update(vs=int(v.is_state), vr=int(v.op == "r"), vw=int(v.op == "w"), vt=int(v.op == "T"))
    out.update(vst=v.held or 0, wv=v.value or 0)
    if v.is_dynamic:
        out.update(vd=1, **_pre_bits(v))
    if a is not None:
        out.update(**{"as": int(a.is_state)}, ar=int(a.op == "r"), aw=int(a.op == "w"))
        out.update(ast=a.held or 0, awv=a.value or 0)
        if a.is_dynamic:
            out.update(ad=1, **_pre_bits(a))
    return out


def model_bits(model: FaultModel) -> dict[str, int]:
    if len(model.primitives) > 2:
        raise BistError(f"{model.name} has {len(model.primitives)} primitives; the RTL model holds at most two")
    out: dict[str, int] = {}
    for s, p in enumerate(model.primitives):
        out.update({f"p{s}_{k}": v for k, v in slot_bits(p).items()})
    return out


def pack_row(fields: Mapping[str, int]) -> str:
    """A table row as hex (fields not given are 0)."""
    value = 0
    for name, bits in ROW_FIELDS:
        x = int(fields.get(name, 0))
        if not 0 <= x < 1 << bits:
            raise BistError(f"fault table field {name}={x} does not fit in {bits} bits")
        value = value << bits | x
    used = sum(b for _, b in ROW_FIELDS)
    return f"{value << (ROW_BITS - used):0{ROW_BITS // 4}x}"


def table_text(rows: Sequence[str], copies: int) -> str:
    """A fault table of ``copies`` rows from packed rows (:func:`pack_row`; missing rows: no fault)."""
    if len(rows) > copies:
        raise BistError(f"{len(rows)} fault rows do not fit in {copies} copies")
    lines = list(rows) + [pack_row({})] * (copies - len(rows))
    return "\n".join(lines) + "\n"


def check_copies(words: int, copies: int) -> None:
    if not 1 <= copies <= MAX_COPIES or words * copies > MAX_TABLE_CELLS:
        raise BistError(
            f"--copies {copies} is too large for a {words}-word memory: use 1 to "
            f"{min(MAX_COPIES, max(1, MAX_TABLE_CELLS // words))} (the simulator keeps a {copies}-bit mask per word)"
        )


def default_copies(words: int, rows: int) -> int:
    """Copies per simulation: as many as the rows need, at most 1024 and within the memory budget."""
    cap = min(1024, max(1, MAX_TABLE_CELLS // (4 * words)))
    return max(1, min(cap, rows))
