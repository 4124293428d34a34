// Behavioural model of a single-port synchronous SRAM macro with 32-bit word-lane
// write enables and a no-change write mode.
//
// One access per rising edge while CE is high:
//   WEN=1  read:  Q <= MEM[A] (registered read).
//   WEN=0  write: lane i of MEM[A] <= lane i of D where LWE[i] is 1; Q keeps
//          its value (no-change mode saves the output toggling power).
// WEN is active low. With CE low the macro does nothing and Q holds.
// An address at or above DEPTH reads X and writes nothing.
module sram_sp_nc #(
    parameter DEPTH = 256,
    parameter LANES = 4,
    parameter AW    = 8
) (
    input  wire              CLK,
    input  wire              CE,
    input  wire              WEN,
    input  wire [AW-1:0]     A,
    input  wire [LANES*32-1:0] D,
    input  wire [LANES-1:0]  LWE,
    output reg  [LANES*32-1:0] Q
);
    reg [LANES*32-1:0] mem [0:DEPTH-1];
    integer i;

    always @(posedge CLK) begin
        if (CE) begin
            if (A >= DEPTH)
                Q <= {LANES*32{1'bx}};
            else if (WEN)
                Q <= mem[A];
            else
                for (i = 0; i < LANES; i = i + 1)
                    if (LWE[i])
                        mem[A][i*32 +: 32] <= D[i*32 +: 32];
        end
    end
endmodule
