// Behavioural model of a single-port synchronous SRAM macro with write-through
// read data and an active-low bit-write mask. Every control pin is active low.
//
// One access per rising edge while CEN is low:
//   WEN=1  read:  Q <= MEM[A].
//   WEN=0  write: a data bit is written where its BWEB bit is 0, and Q shows the
//          word as it is after the write (write-through).
// With CEN high the macro does nothing and Q holds its last value.
// The compiler offers depths in steps of 64 words, so DEPTH need not be a power of
// two; an address at or above DEPTH reads X and writes nothing.
module sram_sp_wt #(
    parameter DEPTH = 384,
    parameter WIDTH = 24,
    parameter AW    = 9
) (
    input  wire             CLK,
    input  wire             CEN,
    input  wire             WEN,
    input  wire [AW-1:0]    A,
    input  wire [WIDTH-1:0] D,
    input  wire [WIDTH-1:0] BWEB,
    output reg  [WIDTH-1:0] Q
);
    reg [WIDTH-1:0] mem [0:DEPTH-1];
    wire [WIDTH-1:0] merged = (mem[A] & BWEB) | (D & ~BWEB);

    always @(posedge CLK) begin
        if (!CEN) begin
            if (A >= DEPTH) begin
                Q <= {WIDTH{1'bx}};
            end else if (!WEN) begin
                mem[A] <= merged;
                Q <= merged;
            end else begin
                Q <= mem[A];
            end
        end
    end
endmodule
