// Behavioural model of a single-port synchronous SRAM macro with a bit-write mask and
// write-through read data.
//
// One access per rising edge while CE is high:
//   WE=0  read:  Q <= MEM[A] (registered read, valid after the edge).
//   WE=1  write: MEM[A] <= (MEM[A] & ~BWE) | (D & BWE); Q <= the word after the write
//         (write-through: written bits new, the others as stored).
// With CE low the macro does nothing and Q holds its last value.
`timescale 1ns/1ps
module sram_bw76 #(
    parameter DEPTH = 512,
    parameter WIDTH = 76,
    parameter AW    = 9
) (
    input  wire             CLK,
    input  wire             CE,
    input  wire             WE,
    input  wire [AW-1:0]    A,
    input  wire [WIDTH-1:0] D,
    input  wire [WIDTH-1:0] BWE,
    output reg  [WIDTH-1:0] Q
);
    reg [WIDTH-1:0] mem [0:DEPTH-1];

    always @(posedge CLK) begin
        if (CE) begin
            if (WE) begin
                mem[A] <= (mem[A] & ~BWE) | (D & BWE);
                Q      <= (mem[A] & ~BWE) | (D & BWE);
            end else begin
                Q <= mem[A];
            end
        end
    end
endmodule
