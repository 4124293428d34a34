// Tile exchange buffer: 1024 x 32-bit words shared by an image sensor front end on a
// 10 ns clock (sclk) and a compute engine on a 15 ns clock (cclk) whose first edge comes
// 5 ns after the sensor clock's.
//
// DELIBERATE BUG: a cross-side bypass copied from a single-clock version of this buffer
// (where both sides shared one clock and a same-edge write was forwarded to the reading
// side). On the compute clock it compares the compute read address with the sensor
// side's pins and forwards the sensor's write data when they match, but with two clocks
// the sensor's pins carry a write that the sensor clock has not performed yet: a compute
// read shows a word that is written only later.
`timescale 1ns/1ps
module tile_exchange (
    input  wire        sclk,
    input  wire        s_en_n,
    input  wire        s_we,
    input  wire [9:0]  s_addr,
    input  wire [31:0] s_wdata,
    output wire [31:0] s_rdata,
    input  wire        cclk,
    input  wire        c_en_n,
    input  wire        c_we,
    input  wire [9:0]  c_addr,
    input  wire [31:0] c_wdata,
    output wire [31:0] c_rdata
);
    wire [31:0] q_c;
    reg         fwd;
    reg  [31:0] fwd_data;

    always @(posedge cclk) begin
        if (!c_en_n) begin
            fwd      <= !c_we && !s_en_n && s_we && (s_addr == c_addr);
            fwd_data <= s_wdata;
        end
    end

    assign c_rdata = fwd ? fwd_data : q_c;

    sram_tdp_2clk #(.DEPTH(1024), .WIDTH(32), .AW(10)) u_ram (
        .CLKA(sclk), .CEA(~s_en_n), .WEA(s_we), .AA(s_addr), .DA(s_wdata), .QA(s_rdata),
        .CLKB(cclk), .CEB(~c_en_n), .WEB(c_we), .AB(c_addr), .DB(c_wdata), .QB(q_c)
    );
endmodule
