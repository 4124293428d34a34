// Behavioural model of a small flip-flop register-file macro: one synchronous write
// port and one asynchronous (combinational) read port. Register files this small
// are built from flops rather than bit cells, which is what makes a same-cycle read
// possible.
//
// Write: WE high at a rising edge -> MEM[WA] <= D.
// Read:  Q follows MEM[RA] combinationally; an address at or above DEPTH reads X.
// A write to an address at or above DEPTH changes nothing.
module rf_async #(
    parameter DEPTH = 24,
    parameter WIDTH = 18,
    parameter AW    = 5
) (
    input  wire             CLK,
    input  wire             WE,
    input  wire [AW-1:0]    WA,
    input  wire [WIDTH-1:0] D,
    input  wire [AW-1:0]    RA,
    output wire [WIDTH-1:0] Q
);
    reg [WIDTH-1:0] mem [0:DEPTH-1];

    assign Q = (RA < DEPTH) ? mem[RA] : {WIDTH{1'bx}};

    always @(posedge CLK)
        if (WE && WA < DEPTH)
            mem[WA] <= D;
endmodule
