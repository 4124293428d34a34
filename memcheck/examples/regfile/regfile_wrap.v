// Register file of a small control processor: 32 registers of 32 bits, one write
// port (write-back stage) and one read port (operand fetch), read latency one.
//
// Wrapper job:
//  * Reset clears every register to zero. An SRAM cannot be cleared in one cycle,
//    so the wrapper keeps a valid flop per register, cleared by reset and set by
//    a write; reading a register that is not valid returns zero.
//  * The macro returns undefined data when the read and the write hit the same
//    register on one edge, but the pipeline needs the value being written (write
//    then read in the same cycle, no stall), so the wrapper forwards the write
//    data on that collision.
//  * Everything in the read path loads only on a read, so read data holds while
//    the read port is idle.
module regfile_wrap (
    input  wire        clk,
    input  wire        rst_n,
    input  wire        wr_en,
    input  wire [4:0]  wr_addr,
    input  wire [31:0] wr_data,
    input  wire        rd_en,
    input  wire [4:0]  rd_addr,
    output wire [31:0] rd_data
);
    reg  [31:0] valid;
    reg         rd_valid;
    reg         fwd;
    reg  [31:0] fwd_data;
    wire [31:0] q;

    sram_2p #(.DEPTH(32), .WIDTH(32), .AW(5)) u_regs (
        .CLK (clk),
        .WENA(~wr_en),
        .AA  (wr_addr),
        .DA  (wr_data),
        .CENB(~rd_en),
        .AB  (rd_addr),
        .QB  (q)
    );

    always @(posedge clk or negedge rst_n) begin
        if (!rst_n)
            valid <= 32'b0;
        else if (wr_en)
            valid[wr_addr] <= 1'b1;
    end

    always @(posedge clk) begin
        if (rd_en) begin
            fwd      <= wr_en && (wr_addr == rd_addr);
            fwd_data <= wr_data;
            rd_valid <= valid[rd_addr];
        end
    end

    assign rd_data = fwd ? fwd_data : (rd_valid ? q : 32'b0);
endmodule
