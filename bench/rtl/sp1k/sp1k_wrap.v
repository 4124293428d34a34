// Benchmark wrapper: 1K x 32 single-port RAM, read latency 1, read-during-write returns the
// old word, read data holds while the port is idle.
module sp1k_wrap (
    input  wire        clk,
    input  wire        en,
    input  wire        we,
    input  wire [9:0]  addr,
    input  wire [31:0] wdata,
    output reg  [31:0] rdata
);
    reg [31:0] mem [0:1023];
    always @(posedge clk) if (en) begin
        if (we) mem[addr] <= wdata;
        rdata <= mem[addr];
    end
endmodule
