// Shortlist of a route selector: the 4 smallest of 16 path costs of 8 bits, in order, by insertion into a list.
module smallest4_of16x8 (
    input  wire [127:0] cost_in,     // cost k in bits 8k+7..8k
    output reg  [31:0]  best_out     // the 4 smallest costs, ascending, the smallest in bits 7..0
);
    reg [7:0] best [0:3];
    reg [7:0] c;
    integer i, k;

    always @* begin
        for (k = 0; k < 4; k = k + 1)
            best[k] = 8'hff;
        c = 8'd0;
        for (i = 0; i < 16; i = i + 1) begin
            c = cost_in[8*i +: 8];
            // insert c: entries larger than c move one place up, the last one drops out
            for (k = 3; k > 0; k = k - 1)
                if (c < best[k-1])
                    best[k] = best[k-1];
                else if (c < best[k])
                    best[k] = c;
            if (c < best[0])
                best[0] = c;
        end
        for (k = 0; k < 4; k = k + 1)
            best_out[8*k +: 8] = best[k];
    end
endmodule
