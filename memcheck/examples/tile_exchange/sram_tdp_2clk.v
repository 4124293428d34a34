// Behavioural model of a true dual-port synchronous SRAM macro with one clock per port.
//
// Each port does one access per rising edge of its own clock while its CE is high:
//   WE=0  read:  Q <= MEM[A] (registered read, valid after the edge).
//   WE=1  write: MEM[A] <= D; Q <= the word as it was before the write (read-first).
// With CE low the port does nothing and its Q holds its last value.
// The two ports are independent: a write on one clock is seen by a read on the other clock
// at any later edge. Edges of both clocks at the same instant race (Verilog gives processes
// triggered at one instant no order), so a same-address read and write on such an edge is
// undefined; so is a same-address write on both ports.
`timescale 1ns/1ps
module sram_tdp_2clk #(
    parameter DEPTH = 1024,
    parameter WIDTH = 32,
    parameter AW    = 10
) (
    input  wire             CLKA,
    input  wire             CEA,
    input  wire             WEA,
    input  wire [AW-1:0]    AA,
    input  wire [WIDTH-1:0] DA,
    output reg  [WIDTH-1:0] QA,
    input  wire             CLKB,
    input  wire             CEB,
    input  wire             WEB,
    input  wire [AW-1:0]    AB,
    input  wire [WIDTH-1:0] DB,
    output reg  [WIDTH-1:0] QB
);
    reg [WIDTH-1:0] mem [0:DEPTH-1];

    always @(posedge CLKA) begin
        if (CEA) begin
            QA <= mem[AA];
            if (WEA)
                mem[AA] <= DA;
        end
    end

    always @(posedge CLKB) begin
        if (CEB) begin
            QB <= mem[AB];
            if (WEB)
                mem[AB] <= DB;
        end
    end
endmodule
