// Cache tag store: 384 sets (a 3-way x 128-set arrangement flattened by the cache
// controller) of a 22-bit entry {valid, dirty, lru, tag[18:0]}. The controller
// updates single fields (set the dirty bit, flip the LRU bit) with a per-bit write
// mask, so no read-modify-write cycle is needed.
//
// Wrapper job: the macro compiler only builds even widths, so the 22-bit entry
// sits in a 24-bit macro; the two spare columns are never written (mask bit held
// at 1 = keep) and never read out. All controls pass through active low, as the
// controller drives them.
module tag_wrap (
    input  wire        clk,
    input  wire        cen,
    input  wire        wen,
    input  wire [8:0]  addr,
    input  wire [21:0] bwen,
    input  wire [21:0] wdata,
    output wire [21:0] rdata
);
    wire [23:0] q;

    sram_sp_wt #(.DEPTH(384), .WIDTH(24), .AW(9)) u_tags (
        .CLK (clk),
        .CEN (cen),
        .WEN (wen),
        .A   (addr),
        .D   ({2'b00, wdata}),
        .BWEB({2'b11, bwen}),
        .Q   (q)
    );

    assign rdata = q[21:0];
endmodule
