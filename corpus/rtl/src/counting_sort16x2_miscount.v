// Broken counting sorter of 16 two-bit traffic classes: the counting loop starts at key 1, so key 0 is never counted.
module counting_sort16x2_miscount (
    input  wire [31:0] class_in,
    output reg  [31:0] class_out
);
    localparam N = 16;
    localparam W = 2;
    localparam K = 4;
    localparam C = 5;
    reg [C-1:0] count [0:K-1];
    reg [C-1:0] start [0:K];
    integer i, v;

    always @* begin
        for (v = 0; v < K; v = v + 1) begin
            count[v] = {C{1'b0}};
            for (i = 1; i < N; i = i + 1)   // the bug: should start at 0
                if (class_in[i*W +: W] == v)
                    count[v] = count[v] + 1'b1;
        end
        start[0] = {C{1'b0}};
        for (v = 0; v < K; v = v + 1)
            start[v+1] = start[v] + count[v];
        class_out = {N*W{1'b0}};
        for (i = 0; i < N; i = i + 1)
            for (v = 0; v < K; v = v + 1)
                if (start[v] <= i && i < start[v+1])
                    class_out[i*W +: W] = class_out[i*W +: W] | v;
    end
endmodule
