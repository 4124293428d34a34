// Test fixture: a combinational loop that oscillates in zero time once address 5 is selected,
// so simulated time stops advancing (a stalled simulation).
module stall_wrap (
    input  wire       clk,
    input  wire       en,
    input  wire       we,
    input  wire [3:0] addr,
    input  wire [7:0] wdata,
    output reg  [7:0] rdata
);
    reg [7:0] mem [0:15];
    wire trigger = en && addr == 4'd5;
    wire osc;
    assign osc = trigger ? ~osc : 1'b0;
    always @(posedge clk) if (en) begin
        if (we) mem[addr] <= wdata;
        rdata <= mem[addr] ^ {7'b0, osc};
    end
endmodule
