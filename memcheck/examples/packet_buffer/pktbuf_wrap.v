// Packet buffer: 512 x 64-bit words written a byte lane at a time by the receive
// MAC (packets rarely end on a word boundary) and read back by the transmit side.
//
// Wrapper job: active-low chip select, and expansion of the eight byte enables
// to the macro's 64-bit bit-write mask. Read data comes straight from the macro
// output register, so reads have a latency of one cycle and the data holds
// while the buffer is not selected.
module pktbuf_wrap (
    input  wire        clk,
    input  wire        cs_n,
    input  wire        we,
    input  wire [7:0]  be,
    input  wire [8:0]  addr,
    input  wire [63:0] wdata,
    output wire [63:0] rdata
);
    wire [63:0] bwe;

    genvar lane;
    generate
        for (lane = 0; lane < 8; lane = lane + 1) begin : g_lane
            assign bwe[lane*8 +: 8] = {8{be[lane]}};
        end
    endgenerate

    sram_sp_bw #(.DEPTH(512), .WIDTH(64), .AW(9)) u_ram (
        .CLK(clk),
        .CE (~cs_n),
        .WE (we),
        .A  (addr),
        .D  (wdata),
        .BWE(bwe),
        .Q  (rdata)
    );
endmodule
