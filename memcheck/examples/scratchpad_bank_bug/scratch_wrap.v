// Scratchpad of a vector accelerator: 1024 words of 64 bits with byte lanes, built
// from four 512 x 32 macros, two banks deep and two macros wide:
//
//                 bits 63:32     bits 31:0
//   addr[9] = 0   u_b0_hi        u_b0_lo
//   addr[9] = 1   u_b1_hi        u_b1_lo
//
// Wrapper job: decode the bank from the top address bit, split data and byte
// enables across the two macros of a bank, and pick the bank's read data.
//
// DELIBERATE BUG (demo): the output mux is steered by the live address bit
// instead of a copy registered with the read. The macros answer one edge later,
// so read data shows the wrong bank whenever the next cycle's address is in the
// other bank (for example two back-to-back reads, one per bank).
module scratch_wrap (
    input  wire        clk,
    input  wire        en,
    input  wire        we,
    input  wire [7:0]  be,
    input  wire [9:0]  addr,
    input  wire [63:0] wdata,
    output wire [63:0] rdata
);
    wire       bank = addr[9];
    wire [8:0] row  = addr[8:0];
    wire       ce0  = en & ~bank;
    wire       ce1  = en & bank;
    wire [31:0] q0_lo, q0_hi, q1_lo, q1_hi;

    sram_sp_be #(.DEPTH(512), .AW(9)) u_b0_lo (
        .CLK(clk), .CE(ce0), .WE(we), .A(row), .D(wdata[31:0]),  .BE(be[3:0]), .Q(q0_lo));
    sram_sp_be #(.DEPTH(512), .AW(9)) u_b0_hi (
        .CLK(clk), .CE(ce0), .WE(we), .A(row), .D(wdata[63:32]), .BE(be[7:4]), .Q(q0_hi));
    sram_sp_be #(.DEPTH(512), .AW(9)) u_b1_lo (
        .CLK(clk), .CE(ce1), .WE(we), .A(row), .D(wdata[31:0]),  .BE(be[3:0]), .Q(q1_lo));
    sram_sp_be #(.DEPTH(512), .AW(9)) u_b1_hi (
        .CLK(clk), .CE(ce1), .WE(we), .A(row), .D(wdata[63:32]), .BE(be[7:4]), .Q(q1_hi));

    assign rdata = bank ? {q1_hi, q1_lo} : {q0_hi, q0_lo};
endmodule
