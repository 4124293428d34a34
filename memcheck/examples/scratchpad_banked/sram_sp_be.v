// Behavioural model of a single-port synchronous SRAM macro with byte write
// enables.
//
// One access per rising edge while CE is high:
//   WE=0  read:  Q <= MEM[A] (registered read).
//   WE=1  write: byte i of MEM[A] <= byte i of D where BE[i] is 1. The datasheet
//         does not define Q after a write cycle, so the model drives X.
// With CE low the macro does nothing and Q holds its last value.
// An address at or above DEPTH reads X and writes nothing.
module sram_sp_be #(
    parameter DEPTH = 512,
    parameter AW    = 9
) (
    input  wire          CLK,
    input  wire          CE,
    input  wire          WE,
    input  wire [AW-1:0] A,
    input  wire [31:0]   D,
    input  wire [3:0]    BE,
    output reg  [31:0]   Q
);
    reg [31:0] mem [0:DEPTH-1];
    integer i;

    always @(posedge CLK) begin
        if (CE) begin
            if (A >= DEPTH || WE)
                Q <= 32'bx;
            else
                Q <= mem[A];
            if (WE && A < DEPTH)
                for (i = 0; i < 4; i = i + 1)
                    if (BE[i])
                        mem[A][i*8 +: 8] <= D[i*8 +: 8];
        end
    end
endmodule
