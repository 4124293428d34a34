// Inter-processor mailbox between two control cores: 64 words of 16 bits with
// byte lanes, one readwrite port per core. The mailbox protocol never has both
// cores touch one slot on the same edge, so the wrapper adds no collision logic.
//
// Wrapper job: the cores' shared read bus must stay quiet when the mailbox has
// nothing to say, so read data is forced to zero after an edge that issued no
// read (or write) on that port: the macro output is ANDed with a registered
// access flag. Read data therefore does not hold across idle cycles.
module mbox_wrap (
    input  wire        clk,
    input  wire        en_a,
    input  wire        we_a,
    input  wire [1:0]  be_a,
    input  wire [5:0]  addr_a,
    input  wire [15:0] wdata_a,
    output wire [15:0] rdata_a,
    input  wire        en_b,
    input  wire        we_b,
    input  wire [1:0]  be_b,
    input  wire [5:0]  addr_b,
    input  wire [15:0] wdata_b,
    output wire [15:0] rdata_b
);
    wire [15:0] qa, qb;
    reg         act_a, act_b;

    sram_dp_wt #(.DEPTH(64), .BYTES(2), .AW(6)) u_mbox (
        .CLK(clk),
        .CEA(en_a), .WEA(we_a), .AA(addr_a), .DA(wdata_a), .BEA(be_a), .QA(qa),
        .CEB(en_b), .WEB(we_b), .AB(addr_b), .DB(wdata_b), .BEB(be_b), .QB(qb)
    );

    always @(posedge clk) begin
        act_a <= en_a;
        act_b <= en_b;
    end

    assign rdata_a = qa & {16{act_a}};
    assign rdata_b = qb & {16{act_b}};
endmodule
