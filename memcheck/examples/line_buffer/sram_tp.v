// Behavioural model of a two-port (one read port, one write port) synchronous SRAM
// macro with a shared clock.
//
// Read port:  RE high at a rising edge -> QB <= MEM[AB] (registered read).
//             With RE low QB holds its last value.
// Write port: WE high at a rising edge -> MEM[AA] <= DA.
// Same address on both ports at one edge: the read returns the word as it was
// before the write (the read is resolved first in the cycle).
// An address at or above DEPTH reads X and writes nothing.
module sram_tp #(
    parameter DEPTH = 640,
    parameter WIDTH = 30,
    parameter AW    = 10
) (
    input  wire             CLK,
    input  wire             WE,
    input  wire [AW-1:0]    AA,
    input  wire [WIDTH-1:0] DA,
    input  wire             RE,
    input  wire [AW-1:0]    AB,
    output reg  [WIDTH-1:0] QB
);
    reg [WIDTH-1:0] mem [0:DEPTH-1];

    always @(posedge CLK) begin
        if (RE)
            QB <= (AB < DEPTH) ? mem[AB] : {WIDTH{1'bx}};
        if (WE && AA < DEPTH)
            mem[AA] <= DA;
    end
endmodule
