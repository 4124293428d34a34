"""A March test as the BIST engine's microcode: one ROM word per operation (and per pause), plus
everything else the engine generator decides (address generator, backgrounds, widths, cycle count).

ROM word fields, most significant first (widths in :class:`EnginePlan`)::

    | kind 2 | value 1 | chk 1 | last 1 | dir 1 | ndir 1 | element EW | op OW | loop PW | count CW |

* ``kind``: 0 read, 1 write, 2 pause (the codes of ``memcheck patterns``' hex export);
* ``value``: the background (0) or its complement (1);
* ``chk``: compare this read (0 only for reads before the test's first write: unknown power-up data);
* ``last``: last operation of its element (the address generator steps after it);
* ``dir``: 1 when the element walks ⇓; ``ndir``: the walk of the next element (loaded on leaving
  the element or pause), wrapping to the first element for the next background;
* ``element``, ``op``: the element's index in the test (delays counted, as in ``march show``) and the
  operation's index inside it, both from 0 — what ``fail_element``/``fail_op`` report;
* ``loop``: ROM index of the element's first operation (where ``last`` jumps back while addresses remain);
* ``count``: for a pause word, its quiet cycles minus 1 (consecutive delay elements are merged;
  with ``pause_cycles = 0`` delays have no word at all). Present only when the test has pauses.

Timing (see docs/bist.md): the run takes exactly ``cycles = operations + pause cycles + READ_LATENCY
+ 1`` clock cycles, counted from the cycle in which ``start`` is sampled to the last cycle before
``done`` is seen high.
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from memcheck.bist.addrgen import AddressGen, bits_for, build_address_gen
from memcheck.errors import BistError, FaultModelError
from memcheck.march import DataBackground, Delay, MarchElement, MarchStream, MarchTest, expand, resolve_test
from memcheck.march.backgrounds import default_background_spec

MAX_WORDS = 1 << 24
MAX_WIDTH = 1024
MAX_LATENCY = 4
MAX_PAUSE = 1 << 24
_IDENT = re.compile(r"[A-Za-z_][A-Za-z0-9_]{0,62}\Z")
_KEYWORDS = (
    "always and assign begin buf case casex casez default defparam else end endcase endfunction endgenerate "
    "endmodule endtask for forever function generate genvar if initial inout input integer localparam module "
    "negedge nor not or output parameter posedge reg repeat signed task tri wait while wire xor"
)
_VERILOG_KEYWORDS = frozenset(_KEYWORDS.split())
KIND_READ, KIND_WRITE, KIND_PAUSE = 0, 1, 2


@dataclass(frozen=True)
class RomWord:
    """One microcode word (see module docstring)."""

    kind: int
    value: int = 0
    chk: int = 0
    last: int = 0
    down: int = 0
    ndown: int = 0
    element: int = 0
    op: int = 0
    loop: int = 0
    count: int = 0


@dataclass(frozen=True)
class EnginePlan:
    """Everything the generator needs, decided and checked."""

    stream: MarchStream
    module: str
    rom: tuple[RomWord, ...]
    addrgen: AddressGen
    pause_cycles: int
    read_latency: int

    @property
    def test(self) -> MarchTest:
        return self.stream.test

    @property
    def words(self) -> int:
        return self.stream.words

    @property
    def width(self) -> int:
        return self.stream.width

    @property
    def backgrounds(self) -> tuple[DataBackground, ...]:
        return self.stream.backgrounds

    @property
    def operations(self) -> int:
        """Memory operations of one run (the stream length)."""
        return self.stream.total_ops

    @property
    def pause_total(self) -> int:
        """Quiet cycles of the delay elements over the whole run."""
        return self.pause_cycles * self.test.delays * len(self.backgrounds)

    def cycles(self, read_latency: int | None = None) -> int:
        """Exact cycles of a run: operations + pause cycles + READ_LATENCY + 1."""
        lat = self.read_latency if read_latency is None else read_latency
        return self.operations + self.pause_total + lat + 1

    @property
    def has_pauses(self) -> bool:
        return any(w.kind == KIND_PAUSE for w in self.rom)

    @property
    def elements(self) -> int:
        return len(self.test.elements)

    @property
    def max_ops(self) -> int:
        return max(len(e.ops) for e in self.test.elements if isinstance(e, MarchElement))

    def field_widths(self) -> dict[str, int]:
        """Bits of each ROM field, most significant first."""
        widths = {
            "kind": 2,
            "value": 1,
            "chk": 1,
            "last": 1,
            "dir": 1,
            "ndir": 1,
            "element": bits_for(self.elements),
            "op": bits_for(self.max_ops),
            "loop": bits_for(len(self.rom)),
        }
        if self.has_pauses:
            widths["count"] = bits_for(max(w.count for w in self.rom) + 1)
        return widths

    def word_value(self, w: RomWord) -> int:
        """A ROM word packed as an integer (fields of :meth:`field_widths`)."""
        values = {
            "kind": w.kind,
            "value": w.value,
            "chk": w.chk,
            "last": w.last,
            "dir": w.down,
            "ndir": w.ndown,
            "element": w.element,
            "op": w.op,
            "loop": w.loop,
            "count": w.count,
        }
        out = 0
        for name, bits in self.field_widths().items():
            out = out << bits | values[name]
        return out


def _check_int(name: str, value: object, lo: int, hi: int) -> int:
    if isinstance(value, bool) or not isinstance(value, int) or not lo <= value <= hi:
        raise BistError(f"{name} must be an integer from {lo} to {hi} for a BIST engine, not {value!r}")
    return value


def _check_module(name: str) -> str:
    if not isinstance(name, str) or not _IDENT.match(name) or name in _VERILOG_KEYWORDS:
        raise BistError(
            f"module name {name!r} is not a plain Verilog identifier (a letter or _, then letters, digits or _, "
            "at most 63 characters, not a keyword)"
        )
    return name


def _check_layout(layout: tuple[int, int] | None) -> None:
    if layout is not None and layout[1] & (layout[1] - 1):
        raise BistError(
            f"layout {layout[0]}x{layout[1]}: the hardware background generator needs a power-of-two column "
            "count (the mux column is the low address bits)"
        )


def _check_test(test: MarchTest, backgrounds: int) -> None:
    if not any(isinstance(e, MarchElement) for e in test.elements):
        raise BistError(f"{test.to_ascii()} has no operation; a BIST engine needs at least one March element")
    from memcheck.faults.geometry import check_consistent

    try:
        check_consistent(test, backgrounds)
    except FaultModelError as exc:
        raise BistError(f"a correct memory fails this test, so a BIST engine running it means nothing: {exc}") from None


def build_rom(stream: MarchStream, pause_cycles: int) -> tuple[RomWord, ...]:
    """The microcode of one background pass (the engine repeats it per background)."""
    raw: list[RomWord] = []
    written = False
    for e, el in enumerate(stream.test.elements):
        if isinstance(el, Delay):
            if pause_cycles == 0:
                continue
            if raw and raw[-1].kind == KIND_PAUSE:  # consecutive delays: one longer pause
                raw[-1] = RomWord(KIND_PAUSE, element=e, count=raw[-1].count + pause_cycles)
            else:
                raw.append(RomWord(KIND_PAUSE, element=e, count=pause_cycles - 1))
            continue
        down = int(stream.direction(e) == "down")
        loop = len(raw)
        for j, op in enumerate(el.ops):
            is_write = op.kind == "w"
            chk = int(not is_write and written)
            written = written or is_write
            kind = KIND_WRITE if is_write else KIND_READ
            raw.append(RomWord(kind, op.value, chk, int(j == len(el.ops) - 1), down, 0, e, j, loop))
    op_dirs = [w.down for w in raw if w.kind != KIND_PAUSE]
    out = []
    for i, w in enumerate(raw):
        nxt = next((v.down for v in raw[i + 1 :] if v.kind != KIND_PAUSE), op_dirs[0])
        out.append(RomWord(w.kind, w.value, w.chk, w.last, w.down, nxt, w.element, w.op, w.loop, w.count))
    return tuple(out)


def plan_engine(
    test: MarchTest | str,
    words: int,
    width: int,
    *,
    order: str = "linear",
    any_order: str = "up",
    backgrounds: str | None = None,
    layout: tuple[int, int] | None = None,
    seed: int | None = None,
    pause_cycles: int = 100,
    read_latency: int = 1,
    module: str = "march_bist",
) -> EnginePlan:
    """Check a request and decide the engine (raises BistError or another MemcheckError naming the cause).

    ``seed`` picks the LFSR order's start state exactly as ``memcheck patterns --seed`` does;
    ``backgrounds`` None is the one default of every command (solid for 1-bit words, else standard).
    """
    _check_int("words", words, 1, MAX_WORDS)
    _check_int("width", width, 1, MAX_WIDTH)
    _check_int("pause cycles", pause_cycles, 0, MAX_PAUSE)
    _check_int("read latency", read_latency, 0, MAX_LATENCY)
    _check_module(module)
    _check_layout(layout)
    t = resolve_test(test) if isinstance(test, str) else test
    stream = expand(
        t,
        words,
        width,
        layout=layout,
        order=order,
        backgrounds=backgrounds if backgrounds is not None else default_background_spec(width),
        any_order=any_order,
        seed=seed if order == "lfsr" else None,
    )
    _check_test(stream.test, len(stream.backgrounds))
    gen = build_address_gen(stream.order)
    return EnginePlan(stream, module, build_rom(stream, pause_cycles), gen, pause_cycles, read_latency)
