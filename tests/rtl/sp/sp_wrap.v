// Test fixture: single-port 64 x 16 RAM, two byte lanes, active-low select, read latency 1,
// read-during-write returns the old word, read data holds while idle.
module sp_wrap #(parameter DEPTH = 64, parameter BUG = 0) (
    input  wire        clk,
    input  wire        cs_n,
    input  wire        we,
    input  wire [5:0]  addr,
    input  wire [15:0] wdata,
    input  wire [1:0]  be,
    output reg  [15:0] rdata
);
    reg [15:0] mem [0:DEPTH-1];
    wire [1:0] lanes = (BUG == 1) ? {be[0], be[1]} : be;   // BUG 1: lanes swapped
    always @(posedge clk) begin
        if (!cs_n || BUG == 2) begin                      // BUG 2: ignores the select when writing
            if (we) begin
                if (lanes[0]) mem[addr][7:0]  <= wdata[7:0];
                if (lanes[1]) mem[addr][15:8] <= wdata[15:8];
            end
        end
        if (!cs_n) rdata <= mem[addr];
    end
endmodule
