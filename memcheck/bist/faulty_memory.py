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

Dynamic faults (two operations in a row, :mod:`memcheck.faults.primitives`): each copy keeps the last
operation on its victim's and aggressor's word (``PV*``, ``PA*``: the state before it, write or read,
the value written); an operation *follows back to back* (``chain``) when the previous clock cycle
carried an operation on the same address and the input ``split`` is low. ``split`` marks the first
operation of a new March element (or background): the fault simulator never pairs operations across
elements, so a harness drives it from the engine's element and background (unconnected: only
address and adjacency count). A pause (``en`` low) always breaks a pair.

``READ_LATENCY`` 0 to 4, as the BIST engine: read data appear ``READ_LATENCY`` rising edges after the
edge that samples the read. With 0 (an asynchronous read) the memory acts on each cycle's operation at
the falling clock edge, so the data are there before the next rising edge; inputs must be stable by
then (the engine changes them just after the rising edge).

The fault table's format is :mod:`memcheck.bist.fault_table` (re-exported here).
"""

from __future__ import annotations

from dataclasses import dataclass

from memcheck.bist.fault_table import (
    AF_KIND_CODES,
    KIND_FP,
    KIND_SOF,
    ROW_BITS,
    ROW_FIELDS,
    SLOT_FIELDS,
    check_copies,
    default_copies,
    model_bits,
    pack_row,
    slot_bits,
    table_text,
)
from memcheck.errors import BistError

__all__ = [
    "AF_KIND_CODES",
    "KIND_FP",
    "KIND_SOF",
    "ROW_BITS",
    "ROW_FIELDS",
    "MemoryShape",
    "check_copies",
    "default_copies",
    "faulty_memory_verilog",
    "model_bits",
    "pack_row",
    "slot_bits",
    "table_text",
]


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
        "    // the last operation on the victim's / aggressor's word: state before, write?, value written",
        "    reg [COPIES-1:0] PVs, PVw, PVd, PAs, PAw, PAd, vb, ab;",
        "    reg last_en, chain;  // chain: this operation follows the previous one back to back",
        "    reg dyn_any;  // some copy has a dynamic fault (the rest of the dynamic logic is skipped otherwise)",
        "    reg [AW-1:0] last_addr;",
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
        "        PVs = {COPIES{1'b0}}; PVw = PVs; PVd = PVs; PAs = PVs; PAw = PVs; PAd = PVs;",
        "        last_en = 1'b0; last_addr = {AW{1'b0}}; chain = 1'b0;",
        "        dyn_any = |(p0_vd | p0_ad | p1_vd | p1_ad);",
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

    def pre_ok(s: int, who: str) -> str:  # a dynamic part (who: V or A) follows its first operation
        part = f"p{s}_{who.lower()}d"
        same = f"~(P{who}s ^ p{s}_ps) & ~(P{who}w ^ p{s}_pw) & (~p{s}_pw | ~(P{who}d ^ p{s}_pd))"
        return f"~{part} | ({same})"

    def dyn(name: str, args: str) -> list[str]:  # AND in the dynamic condition (only when a copy has one)
        return [f"            if (dyn_any) {name} = {name} & pre_ok({args});"]

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
        *dyn("vw_match", "s, 1'b0"),
        "        end",
        "    endfunction",
        "    function [COPIES-1:0] vr_match;",
        "        input s;",
        "        begin",
        "            if (s) vr_match = p1_valid & (p1_any | (p1_vr & ~(V ^ p1_vst) & " + ok(1, "A") + "));",
        "            else vr_match = p0_valid & (p0_any | (p0_vr & ~(V ^ p0_vst) & " + ok(0, "A") + "));",
        *dyn("vr_match", "s, 1'b0"),
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
        *dyn("agg_match", "s, 1'b1"),
        "        end",
        "    endfunction",
        "    // dynamic parts of slot s on the victim (use_a 0) or aggressor (1): this operation follows back to",
        "    // back on the part's first operation (copies without a dynamic part: all ones)",
        "    function [COPIES-1:0] pre_ok;",
        "        input s, use_a;",
        "        begin",
        "            if (!chain) pre_ok = ~(s ? (use_a ? p1_ad : p1_vd) : (use_a ? p0_ad : p0_vd));",
        f"            else if (use_a) pre_ok = s ? ({pre_ok(1, 'A')}) : ({pre_ok(0, 'A')});",
        f"            else pre_ok = s ? ({pre_ok(1, 'V')}) : ({pre_ok(0, 'V')});",
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
        "                if (dyn_any) begin",
        "                    PVs = (hv & vb) | (~hv & PVs); PVw = hv | PVw; PVd = (hv & dv) | (~hv & PVd);",
        "                    PAs = (ha & ab) | (~ha & PAs); PAw = ha | PAw; PAd = (ha & da) | (~ha & PAd);",
        "                end",
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
        "                if (dyn_any) begin",
        "                    PVs = (hv & vb) | (~hv & PVs); PVw = ~hv & PVw; PVd = (hv & vb) | (~hv & PVd);",
        "                    PAs = (ha & ab) | (~ha & PAs); PAw = ~ha & PAw; PAd = (ha & ab) | (~ha & PAd);",
        "                end",
    ]


def _always() -> list[str]:
    return [
        "    // READ_LATENCY 0 (asynchronous read): the operation takes effect at the falling edge, so its read",
        "    // data is there before the next rising edge; otherwise at the rising edge",
        "    wire op_clk = (READ_LATENCY == 0) ? ~clk : clk;",
        "    always @(posedge op_clk) begin",
        "        hv = vhit[addr]; ha = ahit[addr];",
        "        if (dyn_any) begin vb = V; ab = A; end",
        "        chain = last_en && en === 1'b1 && last_addr == addr && split !== 1'b1;",
        "        last_en = en === 1'b1; last_addr = addr;",
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
        "    localparam QS = (READ_LATENCY == 0) ? 0 : READ_LATENCY - 1;",
        "    wire [COPIES-1:0] hit_q = hit_p[QS];",
        "    wire [COPIES-1:0] ret_q = ret_p[QS];",
        "    wire [W-1:0] good_q = good_p[QS];",
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
    if not 0 <= shape.read_latency <= 4:
        raise BistError(f"the faulty memory's READ_LATENCY is 0 to 4, not {shape.read_latency}")
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
        "    input wire split,  // 1: this operation never pairs with the previous one (a new March element)",
        "    output wire [W-1:0] rdata",
        ");",
    ]
    return "\n".join([*head, *_declarations(), *_functions(), *_init(), *_always(), *_outputs(), "endmodule", ""])
