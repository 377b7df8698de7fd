// Counting sorter of N keys of W bits with no comparators: count each key value, add the counts up,
// and give output position i the key value whose range of positions holds i.
module counting_sort #(parameter N = 16, parameter W = 2) (
    input  wire [N*W-1:0] keys_in,    // key k in bits W*k+W-1..W*k
    output reg  [N*W-1:0] keys_out    // ascending
);
    localparam K = 1 << W;            // the number of key values
    localparam C = $clog2(N + 1);     // bits of a count up to N
    reg [C-1:0] count [0:K-1];        // how many keys have value v
    reg [C-1:0] start [0:K];          // value v fills positions start[v] .. start[v+1]-1
    integer i, v;

    always @* begin
        for (v = 0; v < K; v = v + 1) begin
            count[v] = {C{1'b0}};
            for (i = 0; i < N; i = i + 1)
                if (keys_in[i*W +: W] == v)
                    count[v] = count[v] + 1'b1;
        end
        start[0] = {C{1'b0}};
        for (v = 0; v < K; v = v + 1)
            start[v+1] = start[v] + count[v];
        keys_out = {N*W{1'b0}};
        for (i = 0; i < N; i = i + 1)
            for (v = 0; v < K; v = v + 1)
                if (start[v] <= i && i < start[v+1])   // the ranges do not overlap
                    keys_out[i*W +: W] = keys_out[i*W +: W] | v;
    end
endmodule

// Sorts the 2-bit traffic classes of 16 queued packets.
module counting_sort16x2 (input wire [31:0] class_in, output wire [31:0] class_out);
    counting_sort #(.N(16), .W(2)) sorter (.keys_in(class_in), .keys_out(class_out));
endmodule

// Sorts 8 three-bit quality grades.
module counting_sort8x3 (input wire [23:0] grade_in, output wire [23:0] grade_out);
    counting_sort #(.N(8), .W(3)) sorter (.keys_in(grade_in), .keys_out(grade_out));
endmodule

// Sorts the 2-bit traffic classes of 32 queued packets.
module counting_sort32x2 (input wire [63:0] class_in, output wire [63:0] class_out);
    counting_sort #(.N(32), .W(2)) sorter (.keys_in(class_in), .keys_out(class_out));
endmodule

// Sorts the 2-bit traffic classes of 64 queued packets.
module counting_sort64x2 (input wire [127:0] class_in, output wire [127:0] class_out);
    counting_sort #(.N(64), .W(2)) sorter (.keys_in(class_in), .keys_out(class_out));
endmodule

// Sorts 8 two-bit traffic classes (small enough to check on every input).
module counting_sort8x2 (input wire [15:0] class_in, output wire [15:0] class_out);
    counting_sort #(.N(8), .W(2)) sorter (.keys_in(class_in), .keys_out(class_out));
endmodule
