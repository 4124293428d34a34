"""A behavioural SRAM with injected faults, chosen at run time from a fault table (``$readmemh``).

One compile serves a whole campaign: the module ``faulty_sram`` holds ``COPIES`` faulty copies of one
memory side by side, each with its own fault (one row of the fault table, file named by the plusarg
``+faults=FILE``; no file: a fault-free memory). All copies see the same operations; ``rdata`` is
the fault-free word with the bits of every copy marked ``drive`` replaced by that copy's faulty
value, and every copy's own read result is exposed, ``READ_LATENCY`` cycles later, as ``hit_q``
(copy ``k``'s cell took part in the read) and ``ret_q`` (the bit it returned), so a harness can
compare each copy on its own.

A fault involves at most two cells (victim and aggressor, or the two words of a decoder fault on one
bit) and one extra bit (the data-out latch of a stuck-open cell, the floating value of an address
that reaches no cell). The copies differ from the fault-free memory only there, so they are kept
*bit-sliced*: bit ``k`` of the ``COPIES``-bit registers ``V``, ``A`` and ``L`` is copy ``k``'s victim
cell, aggressor cell and latch, and one operation updates every copy with a few vector operations.
The fault semantics are those of :mod:`memcheck.faults.primitives` (docs/faults.md): the victim's
operation first (conditioned on the aggressor's value before it), then the aggressor's disturbance,
then state coupling; a decoder fault is modelled on one data bit (the bits of a word never interact
under a decoder fault, docs/faults.md), so a whole-word decoder fault is ``W`` rows.

Data retention (DRF): a cell loses its value when the memory has been idle (``en`` low) for
``RETENTION`` consecutive cycles after its first access; a campaign sets ``RETENTION`` to the
engine's pause length, so each delay element of the test is exactly one retention loss, as in the
fault simulator (idle cycles before the first access, i.e. reset, do not count).

Table rows are :data:`ROW_FIELDS` packed most significant first into ``ROW_BITS`` bits (hex).
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

from memcheck.errors import BistError
from memcheck.faults.primitives import FaultModel, FaultPrimitive

ROW_BITS = 128
KIND_NONE, KIND_FP, KIND_SOF, KIND_NC, KIND_NS, KIND_WC, KIND_EC = range(7)
AF_KIND_CODES = {"no-cell": KIND_NC, "no-cell-shared": KIND_NS, "wrong-cell": KIND_WC, "extra-cell": KIND_EC}
SLOT_FIELDS = ("valid", "any", "vs", "vr", "vw", "vt", "vst", "wv", "as", "ar", "aw", "ast", "awv", "f", "r")
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


def slot_bits(p: FaultPrimitive) -> dict[str, int]:
    """One fault primitive as the table's slot flags (see module docstring)."""
    v, a = p.victim, p.aggressor
    out = {"valid": 1, "any": int(v.is_any), "f": p.f, "r": p.f if p.r is None else p.r}
    out.update(vs=int(v.is_state), vr=int(v.op == "r"), vw=int(v.op == "w"), vt=int(v.op == "T"))
    out.update(vst=v.state or 0, wv=v.value or 0)
    if a is not None:
        out.update(**{"as": int(a.is_state)}, ar=int(a.op == "r"), aw=int(a.op == "w"))
        out.update(ast=a.state or 0, awv=a.value or 0)
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


@dataclass(frozen=True)
class MemoryShape:
    words: int
    width: int
    read_latency: int = 1
    copies: int = 1
    retention: int = 100
    module: str = "faulty_sram"

    @property
    def addr_bits(self) -> int:
        return max(1, (self.words - 1).bit_length())


def _unpack() -> list[str]:
    lines = []
    lsb = ROW_BITS
    for name, bits in ROW_FIELDS:
        lsb -= bits
        lines.append(f"            f_{name} = row[{lsb + bits - 1}:{lsb}];")
    return lines


def _declarations() -> list[str]:
    fields = ", ".join(f"f_{n}" for n, _ in ROW_FIELDS if n not in ("vword", "vbit", "aword", "abit", "kind"))
    slot_masks = ", ".join(f"p{s}_{n}" for s in (0, 1) for n in (*SLOT_FIELDS, "an"))
    return [
        f"    reg [{ROW_BITS - 1}:0] tbl [0:COPIES-1];",
        f"    reg [{ROW_BITS - 1}:0] row;",
        "    reg [3:0] f_kind;",
        "    reg [23:0] f_vword, f_aword;",
        "    reg [9:0] f_vbit, f_abit;",
        f"    reg {fields};",
        "    reg [W-1:0] mem [0:WORDS-1];      // fault-free contents; cells outside the faults power up to 0",
        "    reg [COPIES-1:0] vhit [0:WORDS-1];  // copies whose victim cell (decoder: address x) is in this word",
        "    reg [COPIES-1:0] ahit [0:WORDS-1];  // copies whose aggressor cell (decoder: address y) is in this word",
        "    reg [COPIES-1:0] vsel [0:W-1];      // copies whose victim / observed bit is this bit",
        "    reg [COPIES-1:0] asel [0:W-1];",
        "    reg [COPIES-1:0] k_fp, k_sof, k_nc, k_ns, k_wc, k_ec, k_af, wired_and, drive;",
        f"    reg [COPIES-1:0] {slot_masks};",
        "    reg [COPIES-1:0] V, A, L;          // victim cell, aggressor cell, latch / floating bit, per copy",
        "    reg [COPIES-1:0] hv, ha, dv, da, gv, v1, v2, a1, m0, m1, ret, xo, yo, rhit;",
        "    reg [COPIES-1:0] hit_p [0:3];",
        "    reg [COPIES-1:0] ret_p [0:3];",
        "    reg [W-1:0] good_p [0:3];",
        "    reg [W-1:0] rd;",
        "    reg [8*512-1:0] table_file;",
        "    reg started;",
        "    integer idle, i, k, b;",
    ]


def _init() -> list[str]:
    sets = []
    for s in (0, 1):
        for n in SLOT_FIELDS:
            sets.append(f"            p{s}_{n}[k] = f_p{s}_{n};")
        sets.append(f"            p{s}_an[k] = ~(f_p{s}_as | f_p{s}_ar | f_p{s}_aw);")
    return [
        "    initial begin",
        "        for (k = 0; k < COPIES; k = k + 1) tbl[k] = {ROW_BITS{1'b0}};",
        '        if ($value$plusargs("faults=%s", table_file)) $readmemh(table_file, tbl);',
        "        for (i = 0; i < WORDS; i = i + 1) begin",
        "            mem[i] = {W{1'b0}};",
        "            vhit[i] = {COPIES{1'b0}};",
        "            ahit[i] = {COPIES{1'b0}};",
        "        end",
        "        for (b = 0; b < W; b = b + 1) begin vsel[b] = {COPIES{1'b0}}; asel[b] = {COPIES{1'b0}}; end",
        "        for (k = 0; k < COPIES; k = k + 1) begin",
        "            row = tbl[k];",
        *_unpack(),
        "            k_fp[k] = f_kind == 4'd1; k_sof[k] = f_kind == 4'd2; k_nc[k] = f_kind == 4'd3;",
        "            k_ns[k] = f_kind == 4'd4; k_wc[k] = f_kind == 4'd5; k_ec[k] = f_kind == 4'd6;",
        "            k_af[k] = f_kind >= 4'd3 && f_kind <= 4'd6;",
        "            wired_and[k] = f_wired_and; drive[k] = f_drive;",
        "            V[k] = f_v0; A[k] = f_a0; L[k] = f_l0;",
        *sets,
        "            if (f_kind != 4'd0 && f_vword < WORDS && f_vbit < W) begin",
        "                hv = vhit[f_vword]; hv[k] = 1'b1; vhit[f_vword] = hv;",
        "                hv = vsel[f_vbit]; hv[k] = 1'b1; vsel[f_vbit] = hv;",
        "            end",
        "            if (f_kind != 4'd0 && f_has_a && f_aword < WORDS && f_abit < W) begin",
        "                ha = ahit[f_aword]; ha[k] = 1'b1; ahit[f_aword] = ha;",
        "                ha = asel[f_abit]; ha[k] = 1'b1; asel[f_abit] = ha;",
        "            end",
        "        end",
        "        V = settle(A, V);",
        "        for (i = 0; i < 4; i = i + 1) begin",
        "            hit_p[i] = {COPIES{1'b0}}; ret_p[i] = {COPIES{1'b0}}; good_p[i] = {W{1'b0}};",
        "        end",
        "        started = 1'b0; idle = 0;",
        "    end",
    ]


def _functions() -> list[str]:
    """Bit-sliced fault semantics (memcheck.faults.primitives: victim_op, aggressor_op, settle, pause)."""

    def ok(s: int, a: str) -> str:  # the primitive's aggressor condition holds for aggressor values ``a``
        return f"(p{s}_an | (p{s}_as & ~({a} ^ p{s}_ast)))"

    def first(m0: str, m1: str, x0: str, x1: str, other: str) -> str:
        return f"(({m0}) & {x0}) | (~({m0}) & ({m1}) & {x1}) | (~({m0}) & ~({m1}) & {other})"

    def settle_match(s: int) -> str:
        return f"p{s}_valid & (p{s}_any | (p{s}_vs & ~(v ^ p{s}_vst) & {ok(s, 'a')}))"

    return [
        "    // state coupling and stuck-at: the victim once the cells hold a and v (FP copies only)",
        "    function [COPIES-1:0] settle;",
        "        input [COPIES-1:0] a, v;",
        "        reg [COPIES-1:0] s0, s1;",
        "        begin",
        f"            s0 = k_fp & {settle_match(0)};",
        f"            s1 = k_fp & {settle_match(1)};",
        f"            settle = {first('s0', 's1', 'p0_f', 'p1_f', 'v')};",
        "        end",
        "    endfunction",
        "    // one bit per copy out of a word: bit vsel/asel of each copy",
        "    function [COPIES-1:0] pick;",
        "        input [W-1:0] word;",
        "        input use_a;",
        "        integer j;",
        "        begin",
        "            pick = {COPIES{1'b0}};",
        "            for (j = 0; j < W; j = j + 1)",
        "                if (word[j]) pick = pick | (use_a ? asel[j] : vsel[j]);",
        "        end",
        "    endfunction",
        "    function [COPIES-1:0] wired;",
        "        input [COPIES-1:0] p, q;",
        "        begin wired = (wired_and & p & q) | (~wired_and & (p | q)); end",
        "    endfunction",
        "    function [COPIES-1:0] vw_match;  // a write of dv sensitises primitive slot s on the victim",
        "        input s;",
        "        begin",
        "            if (s) vw_match = p1_valid & (p1_any | (p1_vw & ~(V ^ p1_vst) & ~(dv ^ p1_wv) & "
        + ok(1, "A")
        + "));",
        "            else vw_match = p0_valid & (p0_any | (p0_vw & ~(V ^ p0_vst) & ~(dv ^ p0_wv) & "
        + ok(0, "A")
        + "));",
        "        end",
        "    endfunction",
        "    function [COPIES-1:0] vr_match;",
        "        input s;",
        "        begin",
        "            if (s) vr_match = p1_valid & (p1_any | (p1_vr & ~(V ^ p1_vst) & " + ok(1, "A") + "));",
        "            else vr_match = p0_valid & (p0_any | (p0_vr & ~(V ^ p0_vst) & " + ok(0, "A") + "));",
        "        end",
        "    endfunction",
        "    function [COPIES-1:0] agg_match;  // an operation on the aggressor disturbs the victim (value v)",
        "        input s, is_write;",
        "        input [COPIES-1:0] v;",
        "        begin",
        "            if (s) agg_match = p1_valid & (is_write ? p1_aw & ~(da ^ p1_awv) : p1_ar) & ~(A ^ p1_ast)"
        " & p1_vs & ~(v ^ p1_vst);",
        "            else agg_match = p0_valid & (is_write ? p0_aw & ~(da ^ p0_awv) : p0_ar) & ~(A ^ p0_ast)"
        " & p0_vs & ~(v ^ p0_vst);",
        "        end",
        "    endfunction",
        "    function [COPIES-1:0] choose;  // slot 0 if it matches, else slot 1, else keep",
        "        input [COPIES-1:0] c0, c1, x0, x1, other;",
        f"        begin choose = {first('c0', 'c1', 'x0', 'x1', 'other')}; end",
        "    endfunction",
    ]


def _write_step() -> list[str]:
    return [
        "                // write: victim op (aggressor value before), aggressor disturbance, then state coupling",
        "                m0 = hv & k_fp & vw_match(1'b0); m1 = hv & k_fp & vw_match(1'b1);",
        "                v1 = (hv & k_fp & choose(m0, m1, p0_f, p1_f, dv)) | (~(hv & k_fp) & V);",
        "                a1 = (ha & k_fp & da) | (~(ha & k_fp) & A);",
        "                m0 = ha & k_fp & agg_match(1'b0, 1'b1, v1); m1 = ha & k_fp & agg_match(1'b1, 1'b1, v1);",
        "                v2 = choose(m0, m1, p0_f, p1_f, v1);",
        "                v2 = settle(a1, v2);",
        "                // decoder faults on one bit: X = V, Y = A",
        "                xo = (hv & k_ec & dv) | (ha & k_ns & da);",
        "                yo = (hv & (k_wc | k_ec) & dv) | (ha & k_af & da);",
        "                xo = xo | (V & ~((hv & k_ec) | (ha & k_ns)));",
        "                yo = yo | (A & ~((hv & (k_wc | k_ec)) | (ha & k_af)));",
        "                V = (k_fp & v2) | (k_af & xo) | (~(k_fp | k_af) & V);",
        "                A = (k_fp & a1) | (k_af & yo) | (~(k_fp | k_af) & A);",
        "                rhit = {COPIES{1'b0}};",
        "                ret = {COPIES{1'b0}};",
    ]


def _read_step() -> list[str]:
    return [
        "                // read: victim op, aggressor disturbance, state coupling; what each copy returns",
        "                m0 = hv & k_fp & vr_match(1'b0); m1 = hv & k_fp & vr_match(1'b1);",
        "                v1 = (hv & k_fp) & choose(m0, m1, p0_f, p1_f, V) | ~(hv & k_fp) & V;",
        "                ret = k_fp & choose(m0, m1, p0_r, p1_r, V);",
        "                m0 = ha & k_fp & agg_match(1'b0, 1'b0, v1); m1 = ha & k_fp & agg_match(1'b1, 1'b0, v1);",
        "                v2 = settle(A, choose(m0, m1, p0_f, p1_f, v1));",
        "                // stuck-open: the data-out latch; every read loads it",
        "                ret = ret | (k_sof & L);",
        "                L = (k_sof & ((hv & L) | (~hv & gv))) | (~k_sof & L);",
        "                // decoder faults: address x (hv) or y (ha)",
        "                ret = ret | (hv & (k_nc | k_ns) & L) | (hv & k_wc & A) | (hv & k_ec & wired(V, A));",
        "                ret = ret | (ha & k_ns & wired(A, V)) | (ha & k_af & ~k_ns & A);",
        "                V = (k_fp & v2) | (~k_fp & V);",
        "                rhit = hv | (ha & k_af);",
    ]


def _always() -> list[str]:
    return [
        "    always @(posedge clk) begin",
        "        hv = vhit[addr]; ha = ahit[addr];",
        "        dv = pick(wdata, 1'b0); da = pick(wdata, 1'b1);",
        "        rd = mem[addr];",
        "        gv = pick(rd, 1'b0);",
        "        rhit = {COPIES{1'b0}}; ret = {COPIES{1'b0}};",
        "        if (en) begin",
        "            started = 1'b1; idle = 0;",
        "            if (we) begin",
        "                mem[addr] <= wdata;",
        *_write_step(),
        "            end else begin",
        *_read_step(),
        "            end",
        "        end else if (started && idle < RETENTION) begin",
        "            idle = idle + 1;",
        "            if (idle == RETENTION) begin  // a pause as long as the retention time: DRF cells decay",
        "                m0 = k_fp & p0_valid & p0_vt & ~(V ^ p0_vst); m1 = k_fp & p1_valid & p1_vt & ~(V ^ p1_vst);",
        "                V = settle(A, choose(m0, m1, p0_f, p1_f, V));",
        "            end",
        "        end",
        "        for (i = 3; i > 0; i = i - 1) begin",
        "            hit_p[i] <= hit_p[i - 1]; ret_p[i] <= ret_p[i - 1]; good_p[i] <= good_p[i - 1];",
        "        end",
        "        hit_p[0] <= (en && !we) ? rhit : {COPIES{1'b0}};",
        "        ret_p[0] <= ret;",
        "        if (en && !we) good_p[0] <= rd;",
        "    end",
    ]


def _outputs() -> list[str]:
    return [
        "    // read port: READ_LATENCY cycles after the read; bits of 'drive' copies carry their faults",
        "    wire [COPIES-1:0] hit_q = hit_p[READ_LATENCY - 1];",
        "    wire [COPIES-1:0] ret_q = ret_p[READ_LATENCY - 1];",
        "    wire [W-1:0] good_q = good_p[READ_LATENCY - 1];",
        "    genvar gb;",
        "    generate",
        "        for (gb = 0; gb < W; gb = gb + 1) begin : g_bit",
        "            wire [COPIES-1:0] own = drive & hit_q & vsel[gb];",
        "            assign rdata[gb] = (|own) ? (|(own & ret_q)) : good_q[gb];",
        "        end",
        "    endgenerate",
    ]


def faulty_memory_verilog(shape: MemoryShape) -> str:
    """The module text (see module docstring); ``shape`` gives the parameter defaults."""
    check_copies(shape.words, shape.copies)
    if not 1 <= shape.read_latency <= 4:
        raise BistError(f"the faulty memory's READ_LATENCY is 1 to 4, not {shape.read_latency}")
    if shape.retention < 1:
        raise BistError("the retention time (the engine's pause) must be at least one cycle")
    head = [
        f"// {shape.module}: behavioural SRAM with run-time fault injection, generated by memcheck.",
        "// Fault table: +faults=FILE ($readmemh, one row per copy, fields in docs/bist.md). Semantics of",
        "// docs/faults.md; verdicts cover the modelled fault models only, not sign-off. Simulation only.",
        "`timescale 1ns / 1ps",
        f"module {shape.module} #(",
        f"    parameter WORDS = {shape.words}, parameter AW = {shape.addr_bits}, parameter W = {shape.width},",
        f"    parameter READ_LATENCY = {shape.read_latency}, parameter COPIES = {shape.copies},",
        f"    parameter RETENTION = {shape.retention}, parameter ROW_BITS = {ROW_BITS}",
        ") (",
        "    input wire clk, input wire en, input wire we, input wire [AW-1:0] addr, input wire [W-1:0] wdata,",
        "    output wire [W-1:0] rdata",
        ");",
    ]
    return "\n".join([*head, *_declarations(), *_functions(), *_init(), *_always(), *_outputs(), "endmodule", ""])


def table_text(rows: Sequence[str], copies: int) -> str:
    """A fault table of ``copies`` rows from packed rows (:func:`pack_row`; missing rows: no fault)."""
    if len(rows) > copies:
        raise BistError(f"{len(rows)} fault rows do not fit in {copies} copies")
    lines = list(rows) + [pack_row({})] * (copies - len(rows))
    return "\n".join(lines) + "\n"
