// Behavioural model of a true dual-port synchronous SRAM macro with byte write
// enables and write-through read data; both ports share one clock.
//
// Per port, one access per rising edge while CEx is high:
//   WEx=0  read:  Qx <= MEM[Ax].
//   WEx=1  write: bytes of MEM[Ax] with BEx set take Dx; Qx shows the word as
//                 it is after the edge (write-through).
// With CEx low the port does nothing and Qx holds.
// Same-address collisions on one edge disturb only the byte columns being
// written, which the model turns to X:
//   one port reads while the other writes -> the bytes being written read X;
//   both ports write                      -> a byte both ports write becomes X,
//                                            a byte one port writes takes its data.
// An address at or above DEPTH reads X and writes nothing.
module sram_dp_wt #(
    parameter DEPTH = 64,
    parameter BYTES = 2,
    parameter AW    = 6
) (
    input  wire               CLK,
    input  wire               CEA,
    input  wire               WEA,
    input  wire [AW-1:0]      AA,
    input  wire [BYTES*8-1:0] DA,
    input  wire [BYTES-1:0]   BEA,
    output reg  [BYTES*8-1:0] QA,
    input  wire               CEB,
    input  wire               WEB,
    input  wire [AW-1:0]      AB,
    input  wire [BYTES*8-1:0] DB,
    input  wire [BYTES-1:0]   BEB,
    output reg  [BYTES*8-1:0] QB
);
    localparam W = BYTES * 8;
    reg [W-1:0] mem [0:DEPTH-1];

    reg [W-1:0] ma, mb, old_a, old_b, new_w;
    integer i;

    always @(posedge CLK) begin
        // Bit masks of the columns each port writes on this edge.
        for (i = 0; i < BYTES; i = i + 1) begin
            ma[i*8 +: 8] = {8{CEA & WEA & BEA[i] & (AA < DEPTH)}};
            mb[i*8 +: 8] = {8{CEB & WEB & BEB[i] & (AB < DEPTH)}};
        end
        old_a = mem[AA];
        old_b = mem[AB];
        if (AA == AB) begin
            // One word, possibly written by both ports: a column written by
            // both becomes X, a column written by one takes that port's data.
            new_w = (old_a & ~(ma | mb)) | (DA & ma & ~mb) | (DB & mb & ~ma)
                  | ({W{1'bx}} & ma & mb);
            if (CEA) QA <= (AA >= DEPTH) ? {W{1'bx}} : WEA ? new_w : (old_a & ~mb) | ({W{1'bx}} & mb);
            if (CEB) QB <= (AB >= DEPTH) ? {W{1'bx}} : WEB ? new_w : (old_b & ~ma) | ({W{1'bx}} & ma);
            if (|(ma | mb)) mem[AA] <= new_w;
        end else begin
            if (CEA) QA <= (AA >= DEPTH) ? {W{1'bx}} : WEA ? (old_a & ~ma) | (DA & ma) : old_a;
            if (CEB) QB <= (AB >= DEPTH) ? {W{1'bx}} : WEB ? (old_b & ~mb) | (DB & mb) : old_b;
            if (|ma) mem[AA] <= (old_a & ~ma) | (DA & ma);
            if (|mb) mem[AB] <= (old_b & ~mb) | (DB & mb);
        end
    end
endmodule
