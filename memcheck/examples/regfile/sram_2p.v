// Behavioural model of a two-port (one write port, one read port) synchronous SRAM
// macro with a shared clock and active-low port enables.
//
// Write port: WENA low at a rising edge -> MEM[AA] <= DA.
// Read port:  CENB low at a rising edge -> QB <= MEM[AB] (registered read);
//             with CENB high QB holds its last value.
// Same address on both ports at one edge: the datasheet leaves the read data
// undefined, so the model returns X (the write itself completes).
// An address at or above DEPTH reads X and writes nothing.
module sram_2p #(
    parameter DEPTH = 32,
    parameter WIDTH = 32,
    parameter AW    = 5
) (
    input  wire             CLK,
    input  wire             WENA,
    input  wire [AW-1:0]    AA,
    input  wire [WIDTH-1:0] DA,
    input  wire             CENB,
    input  wire [AW-1:0]    AB,
    output reg  [WIDTH-1:0] QB
);
    reg [WIDTH-1:0] mem [0:DEPTH-1];

    always @(posedge CLK) begin
        if (!CENB) begin
            if (AB >= DEPTH || (!WENA && AA == AB))
                QB <= {WIDTH{1'bx}};
            else
                QB <= mem[AB];
        end
        if (!WENA && AA < DEPTH)
            mem[AA] <= DA;
    end
endmodule
