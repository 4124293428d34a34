// Image line buffer for a 3x3 filter on 640-pixel lines of 30-bit RGB (10 bits per
// colour). Each pixel clock the filter reads the pixel one line above at column x
// and, on the same edge, overwrites that column with the current pixel, so the
// buffer always holds exactly one line. That only works because a same-address
// read and write return the old (previous line) pixel.
//
// Wrapper job: the read port streams every cycle (no enable); the macro output is
// registered once more to meet the filter's input timing, so reads have a
// latency of two cycles.
module linebuf_wrap (
    input  wire        clk,
    input  wire        wr_en,
    input  wire [9:0]  wr_x,
    input  wire [29:0] wr_pix,
    input  wire [9:0]  rd_x,
    output reg  [29:0] rd_pix
);
    wire [29:0] q;

    sram_tp #(.DEPTH(640), .WIDTH(30), .AW(10)) u_line (
        .CLK(clk),
        .WE (wr_en),
        .AA (wr_x),
        .DA (wr_pix),
        .RE (1'b1),
        .AB (rd_x),
        .QB (q)
    );

    always @(posedge clk)
        rd_pix <= q;
endmodule
