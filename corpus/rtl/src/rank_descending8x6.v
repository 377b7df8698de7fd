// Ranks 8 bids of 6 bits, the largest first: odd-even transposition of minmax_unit in generate loops.
module rank_descending8x6 (
    input  wire [47:0] bid_in,     // bid k in bits 6k+5..6k
    output wire [47:0] bid_out     // descending: the largest bid in bits 5..0
);
    localparam N = 8;
    localparam W = 6;
    wire [(N+1)*N*W-1:0] net;      // the words before round 0, after round 0, ..., after round N-1
    assign net[N*W-1:0] = bid_in;
    assign bid_out = net[N*N*W +: N*W];

    genvar r, i;
    generate
        for (r = 0; r < N; r = r + 1) begin : round
            // the word at either end passes through in odd rounds
            if (r % 2 == 1) begin : ends
                assign net[((r+1)*N)*W +: W] = net[(r*N)*W +: W];
                assign net[((r+1)*N + N-1)*W +: W] = net[(r*N + N-1)*W +: W];
            end
            for (i = r % 2; i + 1 < N; i = i + 2) begin : pair
                minmax_unit #(.W(W)) cx (
                    .a (net[(r*N + i)*W +: W]), .b (net[(r*N + i + 1)*W +: W]),
                    .lo(net[((r+1)*N + i + 1)*W +: W]), .hi(net[((r+1)*N + i)*W +: W]));
            end
        end
    endgenerate
endmodule
