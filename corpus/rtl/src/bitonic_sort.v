// Bitonic sorter of N words of W bits (N a power of two) built from minmax_unit in generate loops, ascending.
module bitonic_sort #(parameter N = 32, parameter W = 16) (
    input  wire [N*W-1:0] keys_in,   // word k in bits W*k+W-1..W*k
    output wire [N*W-1:0] keys_out   // ascending: the smallest word in the low bits
);
    localparam LOG_N = $clog2(N);
    localparam STEPS = LOG_N * (LOG_N + 1) / 2;
    // net holds the N words before step 0, after step 0, ..., after step STEPS-1
    wire [(STEPS+1)*N*W-1:0] net;
    assign net[N*W-1:0] = keys_in;
    assign keys_out = net[STEPS*N*W +: N*W];

    genvar p, q, i;
    generate
        // merge p joins bitonic runs into sorted runs of 2^(p+1) words, at distances 2^p, ..., 2, 1
        for (p = 0; p < LOG_N; p = p + 1) begin : merge
            for (q = 0; q <= p; q = q + 1) begin : step
                localparam S = p * (p + 1) / 2 + q;   // the number of this step
                localparam D = 1 << (p - q);          // the distance of its pairs
                for (i = 0; i < N; i = i + 1) begin : pair
                    if ((i & D) == 0) begin : unit
                        if ((i & (2 << p)) == 0) begin : up     // this run ascends
                            minmax_unit #(.W(W)) cx (
                                .a (net[(S*N + i)*W +: W]), .b (net[(S*N + i + D)*W +: W]),
                                .lo(net[((S+1)*N + i)*W +: W]), .hi(net[((S+1)*N + i + D)*W +: W]));
                        end else begin : down                   // this run descends
                            minmax_unit #(.W(W)) cx (
                                .a (net[(S*N + i)*W +: W]), .b (net[(S*N + i + D)*W +: W]),
                                .lo(net[((S+1)*N + i + D)*W +: W]), .hi(net[((S+1)*N + i)*W +: W]));
                        end
                    end
                end
            end
        end
    endgenerate
endmodule

// The 32 x 16 bitonic sorter of a sorting unit for 16-bit flow deadlines.
module bitonic_sort32x16 (
    input  wire [511:0] deadlines_in,
    output wire [511:0] deadlines_out
);
    bitonic_sort #(.N(32), .W(16)) sorter (.keys_in(deadlines_in), .keys_out(deadlines_out));
endmodule

// A small instance of the same sorter: 8 words of 4 bits.
module bitonic_sort8x4 (
    input  wire [31:0] keys_in,
    output wire [31:0] keys_out
);
    bitonic_sort #(.N(8), .W(4)) sorter (.keys_in(keys_in), .keys_out(keys_out));
endmodule
