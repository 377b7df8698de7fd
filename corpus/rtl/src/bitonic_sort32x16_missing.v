// Broken 32 x 16 bitonic sorter: the last merge's distance-4 step lacks its unit for words 17 and 21.
module bitonic_sort32x16_missing (
    input  wire [511:0] deadlines_in,
    output wire [511:0] deadlines_out
);
    localparam N = 32;
    localparam W = 16;
    localparam LOG_N = 5;
    localparam STEPS = 15;
    wire [(STEPS+1)*N*W-1:0] net;
    assign net[N*W-1:0] = deadlines_in;
    assign deadlines_out = net[STEPS*N*W +: N*W];

    genvar p, q, i;
    generate
        for (p = 0; p < LOG_N; p = p + 1) begin : merge
            for (q = 0; q <= p; q = q + 1) begin : step
                localparam S = p * (p + 1) / 2 + q;
                localparam D = 1 << (p - q);
                for (i = 0; i < N; i = i + 1) begin : pair
                    if ((i & D) == 0) begin : unit
                        if (p == LOG_N - 1 && D == 4 && i == 17) begin : left_out   // the bug
                            assign net[((S+1)*N + i)*W +: W] = net[(S*N + i)*W +: W];
                            assign net[((S+1)*N + i + D)*W +: W] = net[(S*N + i + D)*W +: W];
                        end else if ((i & (2 << p)) == 0) begin : up
                            minmax_unit #(.W(W)) cx (
                                .a (net[(S*N + i)*W +: W]), .b (net[(S*N + i + D)*W +: W]),
                                .lo(net[((S+1)*N + i)*W +: W]), .hi(net[((S+1)*N + i + D)*W +: W]));
                        end else begin : down
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
