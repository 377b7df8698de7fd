// Sorter of 4 sensor readings of 5 bits, one port per reading, written as min/max assigns with `<`.
module sort4_ternary (
    input  wire [4:0] r0, r1, r2, r3,
    output wire [4:0] s0, s1, s2, s3     // s0 the smallest
);
    // layer 1: (0,2) (1,3)
    wire [4:0] a0 = (r0 < r2) ? r0 : r2;
    wire [4:0] a2 = (r0 < r2) ? r2 : r0;
    wire [4:0] a1 = (r1 < r3) ? r1 : r3;
    wire [4:0] a3 = (r1 < r3) ? r3 : r1;
    // layer 2: (0,1) (2,3)
    wire [4:0] b1 = (a0 < a1) ? a1 : a0;
    wire [4:0] b2 = (a2 < a3) ? a2 : a3;
    assign s0 = (a0 < a1) ? a0 : a1;
    assign s3 = (a2 < a3) ? a3 : a2;
    // layer 3: (1,2)
    assign s1 = (b1 < b2) ? b1 : b2;
    assign s2 = (b1 < b2) ? b2 : b1;
endmodule
