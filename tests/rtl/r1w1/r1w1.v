// Test fixture: a 16 x 8 memory with a write port and a read-only port on one clock (invented).
// `BUG_READ_ADDR` drops address bit 1 on the read-only port.
module r1w1 (
  input clk, input we, input [3:0] waddr, input [7:0] wdata,
  input re, input [3:0] raddr, output reg [7:0] rdata
);
  reg [7:0] mem [0:15];
`ifdef BUG_READ_ADDR
  wire [3:0] ra = {raddr[3:2], 1'b0, raddr[0]};
`else
  wire [3:0] ra = raddr;
`endif
  always @(posedge clk) begin
    if (we) mem[waddr] <= wdata;
    if (re) rdata <= mem[ra];
  end
endmodule
