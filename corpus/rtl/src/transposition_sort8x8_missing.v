// Broken priority sorter: odd-even transposition of 8 x 8 bits whose last round skips its middle pair.
module transposition_sort8x8_missing (
    input  wire [63:0] prio_in,
    output reg  [63:0] prio_out
);
    localparam N = 8;
    localparam W = 8;
    reg [W-1:0] v [0:N-1];
    reg [W-1:0] t;
    integer i, round;

    always @* begin
        t = {W{1'b0}};
        for (i = 0; i < N; i = i + 1)
            v[i] = prio_in[i*W +: W];
        for (round = 0; round < N; round = round + 1) begin
            for (i = round % 2; i + 1 < N; i = i + 2) begin
                // the bug: the comparator of channels 3 and 4 in the last round was left out
                if (!(round == N - 1 && i == 3) && v[i] > v[i+1]) begin
                    t = v[i]; v[i] = v[i+1]; v[i+1] = t;
                end
            end
        end
        for (i = 0; i < N; i = i + 1)
            prio_out[i*W +: W] = v[i];
    end
endmodule
