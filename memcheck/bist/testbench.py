"""Self-checking Verilog testbenches for generated BIST engines (Icarus Verilog; not synthesizable).

A testbench holds one or more *units*, each an engine with the memory it tests: a plain behavioural
memory (``READ_LATENCY`` parameter; ``+stuck_addr=A +stuck_bit=B +stuck_value=V`` makes one bit read
``V`` at address ``A``) or, through the contract adapter, the user's wrapper. All units start together
and every unit's checker prints one line when its engine is done::

    memcheck-bist NAME PASS cycles=C expected_cycles=C
    memcheck-bist NAME FAIL cycles=C expected_cycles=C fail_addr=.. fail_element=.. fail_op=..
        fail_background=.. fail_expected=.. fail_actual=..
    memcheck-bist NAME DIFF cycle=C line=K ...       (the engine left the expected stream)
    memcheck-bist NAME TIMEOUT cycle=C line=K

With a stream file (``memcheck patterns`` hex, read with ``$readmemh``) the checker also compares every
cycle's memory pins with the stream: an operation line must be issued in the next cycle (enable,
write enable, address, write data; data 0 on reads), a pause line is ``pause_cycles`` cycles without
enable. Cycle 0 is the cycle in which ``start`` is sampled; operation 0 is issued in cycle 1, and
``done`` must rise exactly in cycle ``EnginePlan.cycles()``.
"""

from __future__ import annotations

from dataclasses import dataclass

from memcheck.bist.addrgen import bits_for
from memcheck.bist.microcode import EnginePlan
from memcheck.march.export import HexLayout


@dataclass(frozen=True)
class TbUnit:
    """One engine in a testbench. ``memory`` is Verilog text for the memory side (None: the
    behavioural memory); it must connect ``{u}_en {u}_we {u}_addr {u}_wdata {u}_rdata`` where
    ``{u}`` is ``name``."""

    plan: EnginePlan
    name: str
    stream_file: str | None = None
    memory: str | None = None


def hex_fields(plan: EnginePlan) -> HexLayout:
    return HexLayout((plan.addrgen.addr_bits + 3) // 4, (plan.width + 3) // 4)


def stream_lines(plan: EnginePlan) -> int:
    """Lines of the stream's hex file: operations plus one per delay element and background."""
    return plan.operations + plan.test.delays * len(plan.backgrounds)


def _memory_module(prefix: str) -> str:
    return f"""module {prefix}_mem #(
    parameter WORDS = 16, parameter AW = 4, parameter W = 8, parameter READ_LATENCY = 1
) (
    input wire clk, input wire en, input wire we, input wire [AW-1:0] addr, input wire [W-1:0] wdata,
    output wire [W-1:0] rdata
);
    reg [W-1:0] mem [0:WORDS-1];
    reg [W-1:0] pipe [0:4];
    reg [W-1:0] rd;
    integer sa_addr, sa_bit, sa_value, i;
    reg sa_on;
    initial begin
        sa_on = 1'b0; sa_addr = 0; sa_bit = 0; sa_value = 0;
        if ($value$plusargs("stuck_addr=%d", sa_addr)) sa_on = 1'b1;
        if ($value$plusargs("stuck_bit=%d", sa_bit)) sa_on = sa_on;
        if ($value$plusargs("stuck_value=%d", sa_value)) sa_on = sa_on;
    end
    always @* begin
        rd = mem[addr];
        if (sa_on && addr == sa_addr) rd[sa_bit] = sa_value[0];
    end
    always @(posedge clk) begin
        if (en && we) mem[addr] <= wdata;
        for (i = 4; i > 0; i = i - 1) pipe[i] <= pipe[i - 1];
        if (en && !we) pipe[0] <= rd;
    end
    assign rdata = (READ_LATENCY == 0) ? rd : pipe[(READ_LATENCY == 0) ? 0 : READ_LATENCY - 1];
endmodule
"""


def _stream_check(lay: HexLayout) -> str:
    f = lay.fields()
    op, ad, da = f["op"], f["address"], f["data"]
    return f"""        while (k < NLINES && lines[k][{op[0]}:{op[1]}] == 4'd2 && PAUSE == 0) k = k + 1;
        if (!diff) begin
            if (k < NLINES) begin
                line = lines[k];
                if (line[{op[0]}:{op[1]}] == 4'd2) begin
                    if (mem_en !== 1'b0) diff = 1;
                    else begin
                        pcount = pcount + 1;
                        if (pcount == PAUSE) begin pcount = 0; k = k + 1; end
                    end
                end else if (mem_en !== 1'b1 || mem_we !== line[{op[1]}] || mem_addr !== line[{ad[0]}:{ad[1]}]
                             || mem_wdata !== line[{da[0]}:{da[1]}]) diff = 1;
                else k = k + 1;
            end else if (mem_en !== 1'b0) diff = 1;
            if (diff) begin
                $display("memcheck-bist %0s DIFF cycle=%0d line=%0d expected=%h got en=%b we=%b addr=%h wdata=%h",
                         NAME, cyc, k, (k < NLINES) ? lines[k] : {{LB{{1'b0}}}}, mem_en, mem_we, mem_addr, mem_wdata);
                over = 1'b1;
            end
        end
"""


def _check_module(prefix: str, lay: HexLayout | None) -> str:
    stream = lay is not None
    decl = ""
    if lay is not None:
        decl = f"""    localparam LB = {lay.line_bits};
    reg [LB-1:0] lines [0:NLINES-1];
    reg [LB-1:0] line;
    integer k, pcount;
    reg diff;
    initial begin
        k = 0; pcount = 0; diff = 1'b0;
        $readmemh(FILE, lines);
    end
"""
    body = _stream_check(lay) if lay is not None else ""
    module = f"{prefix}_check" if lay is None else f"{prefix}_check_h{lay.address_digits}_{lay.data_digits}"
    late, late_args = (" line=%0d of %0d", ", k, NLINES") if stream else ("", "")
    return f"""module {module} #(
    parameter NAME = "engine", parameter FILE = "", parameter NLINES = 1, parameter PAUSE = 0,
    parameter CYCLES = 1, parameter AW = 1, parameter W = 1, parameter EW = 1, parameter OW = 1, parameter BW = 1
) (
    input wire clk, input wire start, input wire mem_en, input wire mem_we, input wire [AW-1:0] mem_addr,
    input wire [W-1:0] mem_wdata, input wire done, input wire fail, input wire [AW-1:0] fail_addr,
    input wire [EW-1:0] fail_element, input wire [OW-1:0] fail_op, input wire [BW-1:0] fail_background,
    input wire [W-1:0] fail_expected, input wire [W-1:0] fail_actual, output reg over
);
{decl}    integer cyc;
    initial begin cyc = 0; over = 1'b0; end
    always @(posedge clk) begin
        if (start && cyc == 0) cyc <= 1;
        else if (cyc != 0) cyc <= cyc + 1;
    end
    always @(negedge clk) if (cyc != 0 && !over) begin
{body}        if (!over && done === 1'b1) begin
            over = 1'b1;
            if ({"k != NLINES || " if stream else ""}cyc != CYCLES)
                $display("memcheck-bist %0s DIFF cycle=%0d done at cycle %0d, expected cycle %0d{late}",
                         NAME, cyc, cyc, CYCLES{late_args});
            else if (fail === 1'b0)
                $display("memcheck-bist %0s PASS cycles=%0d expected_cycles=%0d", NAME, cyc, CYCLES);
            else
                $display({{"memcheck-bist %0s FAIL cycles=%0d expected_cycles=%0d fail_addr=%0h fail_element=%0d ",
                          "fail_op=%0d fail_background=%0d fail_expected=%h fail_actual=%h"}}, NAME, cyc, CYCLES,
                         fail_addr, fail_element, fail_op, fail_background, fail_expected, fail_actual);
        end
        if (!over && cyc > CYCLES + 64) begin
            over = 1'b1;
            $display("memcheck-bist %0s TIMEOUT cycle=%0d", NAME, cyc);
        end
    end
endmodule
"""


def _unit(prefix: str, u: TbUnit) -> str:
    p = u.plan
    aw, w = p.addrgen.addr_bits, p.width
    widths = p.field_widths()
    ew, ow, bw = widths["element"], widths["op"], bits_for(len(p.backgrounds))
    n = u.name
    mem = u.memory
    if mem is None:
        mem = (
            f"    {prefix}_mem #(.WORDS({p.words}), .AW({aw}), .W({w}), .READ_LATENCY({p.read_latency})) {n}_mem "
            f"(.clk(clk), .en({n}_en), .we({n}_we), .addr({n}_addr), .wdata({n}_wdata), .rdata({n}_rdata));"
        )
    lay = hex_fields(p) if u.stream_file is not None else None
    check = f"{prefix}_check" if lay is None else f"{prefix}_check_h{lay.address_digits}_{lay.data_digits}"
    file_params = f'.FILE("{u.stream_file}"), .NLINES({stream_lines(p)}), ' if u.stream_file is not None else ""
    return f"""    // unit {n}: {p.module}
    wire {n}_busy, {n}_done, {n}_fail, {n}_en, {n}_we, {n}_over;
    wire [{aw - 1}:0] {n}_addr, {n}_fail_addr;
    wire [{w - 1}:0] {n}_wdata, {n}_rdata, {n}_fail_expected, {n}_fail_actual;
    wire [{ew - 1}:0] {n}_fail_element;
    wire [{ow - 1}:0] {n}_fail_op;
    wire [{bw - 1}:0] {n}_fail_background;
    {p.module} #(.READ_LATENCY({p.read_latency})) {n}_engine (.clk(clk), .rst_n(rst_n), .start(start),
        .busy({n}_busy), .done({n}_done), .fail({n}_fail), .fail_addr({n}_fail_addr), .fail_element({n}_fail_element),
        .fail_op({n}_fail_op), .fail_background({n}_fail_background), .fail_expected({n}_fail_expected),
        .fail_actual({n}_fail_actual), .mem_en({n}_en), .mem_we({n}_we), .mem_addr({n}_addr), .mem_wdata({n}_wdata),
        .mem_rdata({n}_rdata));
{mem}
    {check} #(.NAME("{n}"), {file_params}.PAUSE({p.pause_cycles}), .CYCLES({p.cycles()}), .AW({aw}), .W({w}),
        .EW({ew}), .OW({ow}), .BW({bw})) {n}_check (.clk(clk), .start(start), .mem_en({n}_en), .mem_we({n}_we),
        .mem_addr({n}_addr), .mem_wdata({n}_wdata), .done({n}_done), .fail({n}_fail), .fail_addr({n}_fail_addr),
        .fail_element({n}_fail_element), .fail_op({n}_fail_op), .fail_background({n}_fail_background),
        .fail_expected({n}_fail_expected), .fail_actual({n}_fail_actual), .over({n}_over));
"""


def testbench_verilog(prefix: str, units: list[TbUnit], pre_cycles: int = 3, half_period: str = "5") -> str:
    """A testbench module ``prefix`` (plus ``prefix_mem`` / ``prefix_check*`` helpers) running ``units``,
    its clock toggling every ``half_period`` ns.

    ``rst_n`` is held low for ``pre_cycles`` cycles (long enough for a wrapper's own reset, which the
    unit's memory text drives from time 0); ``start`` is pulsed one cycle later.
    """
    layouts = sorted(
        {(lay.address_digits, lay.data_digits) for u in units if u.stream_file for lay in [hex_fields(u.plan)]}
    )
    helpers = [_memory_module(prefix)] if any(u.memory is None for u in units) else []
    if any(u.stream_file is None for u in units):
        helpers.append(_check_module(prefix, None))
    helpers += [_check_module(prefix, HexLayout(a, d)) for a, d in layouts]
    overs = " & ".join(f"{u.name}_over" for u in units)
    top = f"""module {prefix};
    reg clk;
    reg rst_n;
    reg start;
    initial begin clk = 1'b0; forever #{half_period} clk = ~clk; end
    initial begin
        rst_n = 1'b0;
        start = 1'b0;
        repeat ({pre_cycles}) @(negedge clk);
        rst_n = 1'b1;
        @(negedge clk);
        start = 1'b1;
        @(negedge clk);
        start = 1'b0;
    end
{"".join(_unit(prefix, u) for u in units)}    initial begin
        wait ({overs});
        #1 $finish;
    end
endmodule
"""
    return "\n".join(["// Testbench generated by memcheck (simulation only).", "`timescale 1ns / 1ps", *helpers, top])
