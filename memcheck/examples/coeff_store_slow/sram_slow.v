// Behavioural model of a single-port synchronous SRAM macro with a slow output: after a
// read edge, Q goes unknown 1 ns after the edge (output hold time) and shows the word
// 11 ns after the edge (clock-to-output access time). Both times are in the timescale the
// file is compiled with: this file has no `timescale directive of its own.
//
// One access per rising edge while CE is high:
//   WE=0  read:  MEM[A] on Q, valid T_ACC after the edge.
//   WE=1  write: MEM[A] <= D; Q holds its last value (no-change write mode).
// With CE low the macro does nothing and Q holds its last value.
module sram_slow #(
    parameter DEPTH = 128,
    parameter WIDTH = 24,
    parameter AW    = 7,
    parameter T_HOLD = 1,
    parameter T_ACC  = 11
) (
    input  wire             CLK,
    input  wire             CE,
    input  wire             WE,
    input  wire [AW-1:0]    A,
    input  wire [WIDTH-1:0] D,
    output reg  [WIDTH-1:0] Q
);
    reg [WIDTH-1:0] mem [0:DEPTH-1];

    always @(posedge CLK) begin
        if (CE) begin
            if (WE) begin
                mem[A] <= D;
            end else begin
                Q <= #(T_HOLD) {WIDTH{1'bx}};
                Q <= #(T_ACC) mem[A];
            end
        end
    end
endmodule
