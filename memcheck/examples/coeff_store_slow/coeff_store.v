// Coefficient store of an invented audio codec's equaliser: 128 x 24-bit filter
// coefficients, loaded by the control processor and read by the filter datapath.
//
// Wrapper job: active-low chip select and write strobe. The macro is slow (read data valid
// 11 ns after the edge), so the codec runs this store at 50 MHz (20 ns) and the datapath
// samples the read data 15 ns after the edge. No `timescale here either: the contract's
// [timing] timescale applies to both files.
module coeff_store (
    input  wire        clk,
    input  wire        cs_n,
    input  wire        wr_n,
    input  wire [6:0]  addr,
    input  wire [23:0] wdata,
    output wire [23:0] rdata
);
    sram_slow #(.DEPTH(128), .WIDTH(24), .AW(7), .T_HOLD(1), .T_ACC(11)) u_ram (
        .CLK(clk),
        .CE (~cs_n),
        .WE (~wr_n),
        .A  (addr),
        .D  (wdata),
        .Q  (rdata)
    );
endmodule
