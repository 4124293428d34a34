// Behavioural model of a power-gated single-port synchronous SRAM macro with a retention
// (sleep) mode and a shutdown mode. Every pin, the power pins included, is sampled by the
// rising edge of CLK:
//   SD_N=0  shutdown: the array loses power (every word becomes X); no access; Q <= 0.
//   SLP=1   sleep (retention): contents kept; no access; Q <= 0.
//   The first edge that samples both deasserted is a wake-up edge: no access.
//   Otherwise, while CE is high, WE=0 reads (Q <= MEM[A], valid after the edge) and WE=1
//   writes (MEM[A] <= D; Q holds its last value). With CE low Q holds its last value.
// TM (test mode) puts the write data on Q instead of the array word on a read.
`timescale 1ns/1ps
module sram_pg #(
    parameter DEPTH = 256,
    parameter WIDTH = 16,
    parameter AW    = 8
) (
    input  wire             CLK,
    input  wire             CE,
    input  wire             WE,
    input  wire [AW-1:0]    A,
    input  wire [WIDTH-1:0] D,
    output reg  [WIDTH-1:0] Q,
    input  wire             SLP,
    input  wire             SD_N,
    input  wire             TM
);
    reg [WIDTH-1:0] mem [0:DEPTH-1];
    reg             waking = 1'b0;
    integer         i;

    always @(posedge CLK) begin
        waking <= !SD_N || SLP;
        if (!SD_N) begin
            for (i = 0; i < DEPTH; i = i + 1)
                mem[i] <= {WIDTH{1'bx}};
            Q <= {WIDTH{1'b0}};
        end else if (SLP) begin
            Q <= {WIDTH{1'b0}};
        end else if (CE && !waking) begin
            if (WE)
                mem[A] <= D;
            else
                Q <= TM ? D : mem[A];
        end
    end
endmodule
