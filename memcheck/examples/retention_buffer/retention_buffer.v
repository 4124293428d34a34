// Retention buffer of an invented battery-powered sensor hub: 256 x 16-bit samples kept
// through the hub's sleep periods. The power controller puts the buffer to sleep between
// bursts (contents kept, read data driven to zero) and shuts it down in deep standby
// (contents lost).
//
// Wrapper job: the power controller's pin names (sleep request, active high; power-good,
// low for shutdown), and the macro's test-mode pin brought out for the production tester
// (held low in the application).
`timescale 1ns/1ps
module retention_buffer (
    input  wire        clk,
    input  wire        en,
    input  wire        we,
    input  wire [7:0]  addr,
    input  wire [15:0] wdata,
    output wire [15:0] rdata,
    input  wire        sleep_req,
    input  wire        pwr_ok,
    input  wire        test_mode
);
    sram_pg #(.DEPTH(256), .WIDTH(16), .AW(8)) u_ram (
        .CLK (clk),
        .CE  (en),
        .WE  (we),
        .A   (addr),
        .D   (wdata),
        .Q   (rdata),
        .SLP (sleep_req),
        .SD_N(pwr_ok),
        .TM  (test_mode)
    );
endmodule
