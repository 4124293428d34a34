// Test fixture: a 512 x 8 memory behind a 10-bit (1024-deep) address pin (invented).
// Default: addresses at or above 512 are ignored (no write; read data X).
// `WRAP`: only the low 9 address bits decode, so address 512 + a is word a (aliasing).
module oor_mem (
  input clk, input en, input we, input [9:0] addr, input [7:0] wdata, output reg [7:0] rdata
);
  reg [7:0] mem [0:511];
`ifdef WRAP
  wire in_range = 1'b1;
`else
  wire in_range = !addr[9];
`endif
  always @(posedge clk)
    if (en) begin
      if (we) begin
        if (in_range) mem[addr[8:0]] <= wdata;
      end else rdata <= in_range ? mem[addr[8:0]] : 8'bx;
    end
endmodule
