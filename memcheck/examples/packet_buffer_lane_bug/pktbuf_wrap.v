// Packet buffer: 512 x 64-bit words written a byte lane at a time by the receive
// MAC (packets rarely end on a word boundary) and read back by the transmit side.
//
// Wrapper job: active-low chip select, and expansion of the eight byte enables
// to the macro's 64-bit bit-write mask. Read data comes straight from the macro
// output register, so reads have a latency of one cycle and the data holds
// while the buffer is not selected.
//
// DELIBERATE BUG (demo): the mask is built with a concatenation that lists lane 0
// first. A Verilog concatenation puts its first item in the most significant
// bits, so byte enable 0 lands on bits 63:56 and byte enable 7 on bits 7:0:
// every partial-word write updates the mirror-image byte.
module pktbuf_wrap (
    input  wire        clk,
    input  wire        cs_n,
    input  wire        we,
    input  wire [7:0]  be,
    input  wire [8:0]  addr,
    input  wire [63:0] wdata,
    output wire [63:0] rdata
);
    wire [63:0] bwe = {{8{be[0]}}, {8{be[1]}}, {8{be[2]}}, {8{be[3]}},
                       {8{be[4]}}, {8{be[5]}}, {8{be[6]}}, {8{be[7]}}};

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
