// Weight buffer of a neural-network accelerator: 256 rows of 128 bits (four 32-bit
// weight words per row). The DMA loader writes one or more 32-bit words of a row;
// the multiplier array reads whole rows.
//
// Wrapper job: the macro output goes through one more flop before the multiplier
// array (the route is too long for one cycle), so reads have a latency of two.
// That flop loads only when the edge before it issued a read, so read data holds
// while the buffer is idle and across write cycles (the macro leaves its output
// unchanged on a write, and the wrapper does not reload it). The write enable is
// active low, as the loader drives it.
module wbuf_wrap (
    input  wire         clk,
    input  wire         en,
    input  wire         we_n,
    input  wire [3:0]   lwe,
    input  wire [7:0]   addr,
    input  wire [127:0] wdata,
    output reg  [127:0] rdata
);
    wire [127:0] q;
    reg          read_q;

    sram_sp_nc #(.DEPTH(256), .LANES(4), .AW(8)) u_wts (
        .CLK(clk),
        .CE (en),
        .WEN(we_n),
        .A  (addr),
        .D  (wdata),
        .LWE(lwe),
        .Q  (q)
    );

    always @(posedge clk) begin
        read_q <= en & we_n;
        if (read_q)
            rdata <= q;
    end
endmodule
