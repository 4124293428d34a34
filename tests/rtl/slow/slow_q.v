// Test fixture: a 16 x 8 single-port memory whose read data is valid 11 ns after the clock edge
// (a behavioural clock-to-output delay, as macro models have); X until then. Invented.
`timescale 1ns/1ps
module slow_q (
  input clk, input en, input we, input [3:0] addr, input [7:0] wdata, output reg [7:0] q
);
  reg [7:0] mem [0:15];
  always @(posedge clk)
    if (en) begin
      if (we) mem[addr] <= wdata;
      else begin
        q <= 8'bx;
        q <= #11 mem[addr];
      end
    end
endmodule
