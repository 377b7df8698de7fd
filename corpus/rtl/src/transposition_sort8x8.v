// Priority sorter of a packet scheduler: 8 priorities of 8 bits, odd-even transposition, smallest first.
module transposition_sort8x8 (
    input  wire [63:0] prio_in,   // priority k in bits 8k+7..8k
    output reg  [63:0] prio_out   // ascending: the smallest priority in bits 7..0
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
                if (v[i] > v[i+1]) begin
                    t = v[i]; v[i] = v[i+1]; v[i+1] = t;
                end
            end
        end
        for (i = 0; i < N; i = i + 1)
            prio_out[i*W +: W] = v[i];
    end
endmodule
