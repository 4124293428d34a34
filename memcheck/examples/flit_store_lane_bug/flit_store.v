// Flit store of an invented network-on-chip router: 512 words of 76 bits, each word eight
// 9-bit lanes (a byte and its parity bit, lanes 0..7 in bits 71:0) plus a 4-bit spare
// lane (bits 75:72) that the router's repair logic uses to remap a faulty column.
//
// Wrapper job: the router has no write-enable pin. An access (req high) with any lane
// enable set writes those lanes; an access with no lane enable set is a read. The nine
// lane enables are expanded to the macro's 76-bit write mask.
//
// DELIBERATE BUG: the write data is re-packed for the macro (a leftover of an earlier
// layout with the parity bits gathered at the top), and lane 3's slice is taken from
// lane 2's bits (a copy-paste slip): lane 3 stores the byte written to lane 2.
`timescale 1ns/1ps
module flit_store (
    input  wire        clk,
    input  wire        req,
    input  wire [8:0]  lane_we,
    input  wire [8:0]  addr,
    input  wire [75:0] wdata,
    output wire [75:0] rdata
);
    wire [75:0] bwe;
    wire [75:0] d;

    assign d[26:0]  = wdata[26:0];
    assign d[35:27] = wdata[26:18];
    assign d[75:36] = wdata[75:36];

    genvar lane;
    generate
        for (lane = 0; lane < 8; lane = lane + 1) begin : g_lane
            assign bwe[lane*9 +: 9] = {9{lane_we[lane]}};
        end
    endgenerate
    assign bwe[75:72] = {4{lane_we[8]}};

    sram_bw76 #(.DEPTH(512), .WIDTH(76), .AW(9)) u_ram (
        .CLK(clk),
        .CE (req),
        .WE (|lane_we),
        .A  (addr),
        .D  (d),
        .BWE(bwe),
        .Q  (rdata)
    );
endmodule
