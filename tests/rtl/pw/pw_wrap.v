// Test fixture: single-port 1024 x 16 wrapper with a two-entry posted-write buffer. Writes wait in
// the buffer (reads see through it, newest entry first); a third write commits the oldest entry to
// the RAM. BUG 1: the commit uses the newest entry's address (a pointer off by one), so a word
// shows stale contents once two more writes have followed the write to it.
module pw_wrap #(parameter BUG = 0) (
    input  wire        clk,
    input  wire        en,
    input  wire        we,
    input  wire [9:0]  addr,
    input  wire [15:0] wdata,
    output reg  [15:0] rdata
);
    reg [15:0] mem [0:1023];
    reg        v0 = 1'b0, v1 = 1'b0;  // entry 0 is the oldest
    reg [9:0]  a0, a1;
    reg [15:0] d0, d1;
    wire [15:0] seen = (v1 && a1 == addr) ? d1 : (v0 && a0 == addr) ? d0 : mem[addr];
    always @(posedge clk) begin
        if (en && !we) rdata <= seen;
        if (en && we) begin
            if (v1) begin
                mem[BUG ? a1 : a0] <= d0;
                a0 <= a1;
                d0 <= d1;
                a1 <= addr;
                d1 <= wdata;
            end else if (v0) begin
                v1 <= 1'b1;
                a1 <= addr;
                d1 <= wdata;
            end else begin
                v0 <= 1'b1;
                a0 <= addr;
                d0 <= wdata;
            end
        end
    end
endmodule
