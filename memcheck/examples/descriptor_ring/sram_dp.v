// Behavioural model of a true dual-port synchronous SRAM macro (two readwrite
// ports on one clock), every control pin active low.
//
// Per port, one access per rising edge while CENx is low:
//   WENx=1  read:  Qx <= MEM[Ax].
//   WENx=0  write: MEM[Ax] <= Dx; Qx keeps its value (no-change write mode).
// With CENx high the port does nothing and Qx holds.
// Same-address collisions on one edge, as the datasheet leaves them:
//   one port reads while the other writes -> the read returns X;
//   both ports write                      -> the word becomes X.
// An address at or above DEPTH reads X and writes nothing.
module sram_dp #(
    parameter DEPTH = 256,
    parameter WIDTH = 32,
    parameter AW    = 8
) (
    input  wire             CLK,
    input  wire             CENA,
    input  wire             WENA,
    input  wire [AW-1:0]    AA,
    input  wire [WIDTH-1:0] DA,
    output reg  [WIDTH-1:0] QA,
    input  wire             CENB,
    input  wire             WENB,
    input  wire [AW-1:0]    AB,
    input  wire [WIDTH-1:0] DB,
    output reg  [WIDTH-1:0] QB
);
    reg [WIDTH-1:0] mem [0:DEPTH-1];

    wire wr_a = !CENA && !WENA && AA < DEPTH;
    wire wr_b = !CENB && !WENB && AB < DEPTH;
    wire same = AA == AB;

    always @(posedge CLK) begin
        if (!CENA && WENA)
            QA <= (AA >= DEPTH || (wr_b && same)) ? {WIDTH{1'bx}} : mem[AA];
        if (!CENB && WENB)
            QB <= (AB >= DEPTH || (wr_a && same)) ? {WIDTH{1'bx}} : mem[AB];
        if (wr_a && wr_b && same)
            mem[AA] <= {WIDTH{1'bx}};
        else begin
            if (wr_a) mem[AA] <= DA;
            if (wr_b) mem[AB] <= DB;
        end
    end
endmodule
