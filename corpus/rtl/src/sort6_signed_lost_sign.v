// Broken temperature sorter: the wires after layer 1 were declared without `signed`, so later layers compare unsigned.
module sort6_signed_lost_sign (
    input  wire signed [5:0] t0, t1, t2, t3, t4, t5,
    output wire signed [5:0] u0, u1, u2, u3, u4, u5   // u0 the coldest
);
    // layer 1: (0,4) (1,5)
    wire [5:0] l1_0 = (t0 < t4) ? t0 : t4;
    wire [5:0] l1_4 = (t0 < t4) ? t4 : t0;
    wire [5:0] l1_1 = (t1 < t5) ? t1 : t5;
    wire [5:0] l1_5 = (t1 < t5) ? t5 : t1;
    // layer 2: (0,2) (1,3)
    wire signed [5:0] l2_0 = (l1_0 < t2) ? l1_0 : t2;
    wire signed [5:0] l2_2 = (l1_0 < t2) ? t2 : l1_0;
    wire signed [5:0] l2_1 = (l1_1 < t3) ? l1_1 : t3;
    wire signed [5:0] l2_3 = (l1_1 < t3) ? t3 : l1_1;
    // layer 3: (2,4) (3,5) (0,1)
    wire signed [5:0] l3_2 = (l2_2 < l1_4) ? l2_2 : l1_4;
    wire signed [5:0] l3_4 = (l2_2 < l1_4) ? l1_4 : l2_2;
    wire signed [5:0] l3_3 = (l2_3 < l1_5) ? l2_3 : l1_5;
    wire signed [5:0] l3_5 = (l2_3 < l1_5) ? l1_5 : l2_3;
    wire signed [5:0] l3_0 = (l2_0 < l2_1) ? l2_0 : l2_1;
    wire signed [5:0] l3_1 = (l2_0 < l2_1) ? l2_1 : l2_0;
    // layer 4: (2,3) (4,5)
    wire signed [5:0] l4_2 = (l3_2 < l3_3) ? l3_2 : l3_3;
    wire signed [5:0] l4_3 = (l3_2 < l3_3) ? l3_3 : l3_2;
    wire signed [5:0] l4_4 = (l3_4 < l3_5) ? l3_4 : l3_5;
    wire signed [5:0] l4_5 = (l3_4 < l3_5) ? l3_5 : l3_4;
    // layer 5: (1,4)
    wire signed [5:0] l5_1 = (l3_1 < l4_4) ? l3_1 : l4_4;
    wire signed [5:0] l5_4 = (l3_1 < l4_4) ? l4_4 : l3_1;
    // layer 6: (1,2) (3,4)
    wire signed [5:0] l6_1 = (l5_1 < l4_2) ? l5_1 : l4_2;
    wire signed [5:0] l6_2 = (l5_1 < l4_2) ? l4_2 : l5_1;
    wire signed [5:0] l6_3 = (l4_3 < l5_4) ? l4_3 : l5_4;
    wire signed [5:0] l6_4 = (l4_3 < l5_4) ? l5_4 : l4_3;
    assign u0 = l3_0;
    assign u1 = l6_1;
    assign u2 = l6_2;
    assign u3 = l6_3;
    assign u4 = l6_4;
    assign u5 = l4_5;
endmodule
