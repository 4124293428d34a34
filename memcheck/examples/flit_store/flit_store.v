// Flit store of an invented network-on-chip router: 512 words of 76 bits, each word eight
// 9-bit lanes (a byte and its parity bit, lanes 0..7 in bits 71:0) plus a 4-bit spare
// lane (bits 75:72) that the router's repair logic uses to remap a faulty column.
//
// Wrapper job: the router has no write-enable pin. An access (req high) with any lane
// enable set writes those lanes; an access with no lane enable set is a read. The nine
// lane enables are expanded to the macro's 76-bit write mask.
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
        .D  (wdata),
        .BWE(bwe),
        .Q  (rdata)
    );
endmodule
