// Test fixture: a 16 x 8 power-gated macro model (invented). slp (active high): retention sleep,
// accesses ignored. sd_n (active low): shutdown, every word lost. Both sampled by the rising edge;
// shutdown dominates; read data is X after an edge that sampled either asserted, and the first edge
// that samples both deasserted again (one wake-up cycle) makes no access.
// `BUG_SLEEP_WRITE`: a write is still performed at an edge that samples sleep asserted.
// `BUG_NO_WAKE`: no wake-up cycle (the first edge after sleep already accesses).
module pwr_mem (
  input clk, input slp, input sd_n,
  input en, input we, input [3:0] addr, input [7:0] wdata, output reg [7:0] q
);
  reg [7:0] mem [0:15];
  reg waking;
  integer i;
  always @(posedge clk) begin
    if (!sd_n) begin
      for (i = 0; i < 16; i = i + 1) mem[i] <= 8'bx;
      q <= 8'bx;
      waking <= 1'b1;
    end else if (slp) begin
`ifdef BUG_SLEEP_WRITE
      if (en && we) mem[addr] <= wdata;
`endif
      q <= 8'bx;
      waking <= 1'b1;
    end else if (waking) begin
      waking <= 1'b0;
`ifdef BUG_NO_WAKE
      if (en) begin
        if (we) mem[addr] <= wdata;
        else q <= mem[addr];
      end
`else
      q <= 8'bx;
`endif
    end else if (en) begin
      if (we) mem[addr] <= wdata;
      else q <= mem[addr];
    end
  end
  initial waking = 1'b0;
endmodule
