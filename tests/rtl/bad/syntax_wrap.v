// Test fixture: does not compile (missing semicolon after the port list).
module syntax_wrap (input wire clk, input wire [3:0] addr, output reg [7:0] rdata)
    always @(posedge clk) rdata <= addr;
endmodule
