// Telemetry logger (an invented design): stamps 64-bit records into a 512 x 64 buffer
// (the packet buffer example wrapper, instance u_buf) and reads them back into a running
// checksum. Its own traffic drives the buffer's pins: whole-word record writes, read-backs
// and idle cycles chosen by a 16-bit LFSR over the first 32 records, and at step PATCH_AT a
// one-byte patch (byte lane 0 only) of the record at PATCH_ADDR, written whole one step
// before and read back one step after.
//
// Timing: with rst_n sampled high from rising edge R on, step s is decided at edge R + s and
// its operation reaches the buffer's pins for edge R + s + 1.
module telemetry_logger #(
    parameter integer   PATCH_AT   = 600,
    parameter [8:0]     PATCH_ADDR = 9'd5
) (
    input  wire        clk,
    input  wire        rst_n,
    output reg  [63:0] checksum
);
    reg  [15:0] lfsr;
    reg  [15:0] step;
    reg         cs_n;
    reg         we;
    reg  [7:0]  be;
    reg  [8:0]  addr;
    reg  [63:0] wdata;
    wire [63:0] rdata;

    pktbuf_wrap u_buf (
        .clk(clk), .cs_n(cs_n), .we(we), .be(be), .addr(addr), .wdata(wdata), .rdata(rdata)
    );

    always @(posedge clk) begin
        if (!rst_n) begin
            lfsr <= 16'hACE1;
            step <= 16'd0;
            cs_n <= 1'b1;
            we <= 1'b0;
            be <= 8'h00;
            addr <= 9'd0;
            wdata <= 64'd0;
            checksum <= 64'd0;
        end else begin
            step <= step + 16'd1;
            lfsr <= {lfsr[14:0], lfsr[15] ^ lfsr[13] ^ lfsr[12] ^ lfsr[10]};
            checksum <= checksum ^ rdata;
            if (step == PATCH_AT - 1) begin          // the record, whole
                cs_n <= 1'b0; we <= 1'b1; be <= 8'hff; addr <= PATCH_ADDR;
                wdata <= {16'h7e1e, 32'h0bad_cafe, step};
            end else if (step == PATCH_AT) begin    // a one-byte patch of it
                cs_n <= 1'b0; we <= 1'b1; be <= 8'h01; addr <= PATCH_ADDR;
                wdata <= 64'h0000_0000_0000_00a5;
            end else if (step == PATCH_AT + 1) begin // read it back
                cs_n <= 1'b0; we <= 1'b0; be <= 8'h00; addr <= PATCH_ADDR;
            end else begin                           // ordinary traffic
                cs_n <= (lfsr[2:0] == 3'd0);
                we <= lfsr[3];
                be <= 8'hff;
                addr <= {4'd0, lfsr[8:4]};
                wdata <= {lfsr, ~lfsr, lfsr ^ step, step};
            end
        end
    end
endmodule
