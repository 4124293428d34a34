// Descriptor ring shared by a DMA engine (port a) and the host CPU (port b):
// 256 descriptors of 32 bits. Both sides read and write at any time; the DMA engine
// writes completion status while the CPU may be posting a new descriptor.
//
// Wrapper job: the macro stores X when both ports write one address on one edge.
// The ring protocol needs a defined result, so the wrapper gives the DMA engine
// priority: when both ports write the same address, port b's access is dropped
// (its chip enable is held off for that edge, so its read data also holds).
// Controls are active low on both ports, as the bus bridges drive them.
module ring_wrap (
    input  wire        clk,
    input  wire        ce_a_n,
    input  wire        we_a_n,
    input  wire [7:0]  addr_a,
    input  wire [31:0] wdata_a,
    output wire [31:0] rdata_a,
    input  wire        ce_b_n,
    input  wire        we_b_n,
    input  wire [7:0]  addr_b,
    input  wire [31:0] wdata_b,
    output wire [31:0] rdata_b
);
    wire both_write_same = !ce_a_n && !we_a_n && !ce_b_n && !we_b_n && addr_a == addr_b;

    sram_dp #(.DEPTH(256), .WIDTH(32), .AW(8)) u_ring (
        .CLK (clk),
        .CENA(ce_a_n),
        .WENA(we_a_n),
        .AA  (addr_a),
        .DA  (wdata_a),
        .QA  (rdata_a),
        .CENB(ce_b_n | both_write_same),
        .WENB(we_b_n),
        .AB  (addr_b),
        .DB  (wdata_b),
        .QB  (rdata_b)
    );
endmodule
