// Test fixture: a true dual-port RAM, 32 x 16, each port on its own clock (invented).
// Port a: writes when wea is set, else reads (read data registered, held while idle or writing).
// Port b: the same on clkb. Edges of both clocks at one instant: both always blocks run in one
// time step; a read sees the word before the other port's nonblocking write (IEEE 1364-2005,
// 11.4: nonblocking updates happen after every active process of the time step), so a same-instant
// read and write of one word reads the old data. `BUG_B_ADDR` injects a read-address bug on port b.
module tdp_dual (
  input clka, input ena, input wea, input [4:0] addra, input [15:0] dina, output reg [15:0] douta,
  input clkb, input enb, input web, input [4:0] addrb, input [15:0] dinb, output reg [15:0] doutb
);
  reg [15:0] mem [0:31];
`ifdef BUG_B_ADDR
  wire [4:0] rb = {addrb[4:3], 1'b0, addrb[1:0]};  // address bit 2 lost on port b's reads
`else
  wire [4:0] rb = addrb;
`endif
  always @(posedge clka)
    if (ena) begin
      if (wea) mem[addra] <= dina;
      else douta <= mem[addra];
    end
  always @(posedge clkb)
    if (enb) begin
      if (web) mem[addrb] <= dinb;
      else doutb <= mem[rb];
    end
endmodule
