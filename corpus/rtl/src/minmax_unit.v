// Compare-exchange unit of W-bit unsigned words: lo gets the smaller word, hi the larger.
module minmax_unit #(parameter W = 16) (
    input  wire [W-1:0] a,
    input  wire [W-1:0] b,
    output wire [W-1:0] lo,
    output wire [W-1:0] hi
);
    wire swap = a > b;
    assign lo = swap ? b : a;
    assign hi = swap ? a : b;
endmodule
