// Test fixture: ends the simulation when address 7 is written.
module finish_wrap (
    input  wire       clk,
    input  wire       en,
    input  wire       we,
    input  wire [3:0] addr,
    input  wire [7:0] wdata,
    output reg  [7:0] rdata
);
    reg [7:0] mem [0:15];
    always @(posedge clk) if (en) begin
        if (we) mem[addr] <= wdata;
        if (we && addr == 4'd7) $finish;
        rdata <= mem[addr];
    end
endmodule
