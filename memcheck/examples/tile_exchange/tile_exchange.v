// Tile exchange buffer: 1024 x 32-bit words shared by an image sensor front end on a
// 10 ns clock (sclk) and a compute engine on a 15 ns clock (cclk) whose first edge comes
// 5 ns after the sensor clock's. Each side writes tiles and reads the other side's results
// through its own port of a true dual-port macro, on its own clock; no clock crosses.
//
// Wrapper job: active-low chip enables, and the side names. Read data comes straight from
// the macro's output registers: latency one cycle of the reading side's clock, the old word
// on a write cycle, and the data holds while the side is not selected.
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
    sram_tdp_2clk #(.DEPTH(1024), .WIDTH(32), .AW(10)) u_ram (
        .CLKA(sclk), .CEA(~s_en_n), .WEA(s_we), .AA(s_addr), .DA(s_wdata), .QA(s_rdata),
        .CLKB(cclk), .CEB(~c_en_n), .WEB(c_we), .AB(c_addr), .DB(c_wdata), .QB(c_rdata)
    );
endmodule
