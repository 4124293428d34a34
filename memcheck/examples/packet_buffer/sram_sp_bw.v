// Behavioural model of a single-port synchronous SRAM macro with a bit-write mask.
//
// One access per rising edge while CE is high:
//   WE=0  read:  Q <= MEM[A] (registered read, valid after the edge).
//   WE=1  write: MEM[A] <= (MEM[A] & ~BWE) | (D & BWE); Q <= the word as it was
//         before the write (read-before-write), whatever BWE carries.
// With CE low the macro does nothing and Q holds its last value.
// An address at or above DEPTH reads X and writes nothing.
module sram_sp_bw #(
    parameter DEPTH = 512,
    parameter WIDTH = 64,
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
            if (A < DEPTH) begin
                Q <= mem[A];
                if (WE)
                    mem[A] <= (mem[A] & ~BWE) | (D & BWE);
            end else begin
                Q <= {WIDTH{1'bx}};
            end
        end
    end
endmodule
