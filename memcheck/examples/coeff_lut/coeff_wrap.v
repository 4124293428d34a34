// Coefficient table of a 24-tap FIR filter: 24 coefficients of 18 bits. The filter
// datapath reads one coefficient per cycle and needs it in the same cycle, so the
// table has a read latency of zero. Firmware rewrites coefficients through the same
// port between frames.
//
// Wrapper job: turn the macro's separate read and write addresses into one
// readwrite port. The read address is the port address whatever the port does, so
// read data always shows the word at the address pins (also while idle), and in a
// write cycle it shows the word as it was before the edge.
module coeff_wrap (
    input  wire        clk,
    input  wire        en,
    input  wire        we,
    input  wire [4:0]  addr,
    input  wire [17:0] wdata,
    output wire [17:0] rdata
);
    rf_async #(.DEPTH(24), .WIDTH(18), .AW(5)) u_coef (
        .CLK(clk),
        .WE (en & we),
        .WA (addr),
        .D  (wdata),
        .RA (addr),
        .Q  (rdata)
    );
endmodule
