// Test fixture: a 16 x 8 1R1W memory, write port on clka (10 ns), read port on clkb (15 ns, phase
// 4 ns), an active-low asynchronous reset and a retention sleep pin sampled by both clocks, no
// wake-up cycles (invented). `BUG_SLEEP_WRITE`: a write is still performed at an edge that samples
// sleep asserted.
module pwr2 (
  input clka, input clkb, input rst_n, input slp,
  input we, input [3:0] waddr, input [7:0] wdata,
  input re, input [3:0] raddr, output reg [7:0] rdata
);
  reg [7:0] mem [0:15];
  always @(posedge clka)
`ifdef BUG_SLEEP_WRITE
    if (we) mem[waddr] <= wdata;
`else
    if (we && !slp) mem[waddr] <= wdata;
`endif
  always @(posedge clkb or negedge rst_n)
    if (!rst_n) rdata <= 8'b0;
    else if (slp) rdata <= 8'bx;
    else if (re) rdata <= mem[raddr];
endmodule
