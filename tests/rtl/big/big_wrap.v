// Test fixture: single-port 65,536 x 8 RAM, read latency 1, read data holds while idle or writing.
// BUG 1: bit 2 of word 0xFFF0 is stuck at 0 (found only by a sweep that reaches the last rows).
module big_wrap #(parameter BUG = 0) (
    input  wire        clk,
    input  wire        en,
    input  wire        we,
    input  wire [15:0] addr,
    input  wire [7:0]  wdata,
    output reg  [7:0]  rdata
);
    reg [7:0] mem [0:65535];
    wire [7:0] stored = (BUG == 1 && addr == 16'hFFF0) ? (wdata & 8'hFB) : wdata;
    always @(posedge clk) if (en) begin
        if (we) mem[addr] <= stored;
        else rdata <= mem[addr];
    end
endmodule
