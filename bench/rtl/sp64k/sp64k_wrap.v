// Benchmark wrapper: 65,536 x 64 single-port RAM, read latency 1, read-during-write returns the
// old word, read data holds while the port is idle.
module sp64k_wrap (
    input  wire        clk,
    input  wire        en,
    input  wire        we,
    input  wire [15:0] addr,
    input  wire [63:0] wdata,
    output reg  [63:0] rdata
);
    reg [63:0] mem [0:65535];
    always @(posedge clk) if (en) begin
        if (we) mem[addr] <= wdata;
        rdata <= mem[addr];
    end
endmodule
