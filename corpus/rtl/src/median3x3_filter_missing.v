// Broken median unit: the 3x3 median filter with comparator 12 (channels 0 and 1) left out.
module median3x3_filter_missing (
    input  wire [71:0] window,  // pixel k (row-major) in bits 8k+7..8k
    output wire [7:0]  center   // the median of the 9 pixels
);
    wire [7:0] p0_0 = window[7:0];
    wire [7:0] p1_0 = window[15:8];
    wire [7:0] p2_0 = window[23:16];
    wire [7:0] p3_0 = window[31:24];
    wire [7:0] p4_0 = window[39:32];
    wire [7:0] p5_0 = window[47:40];
    wire [7:0] p6_0 = window[55:48];
    wire [7:0] p7_0 = window[63:56];
    wire [7:0] p8_0 = window[71:64];
    // comparator 0: channels 0 and 8, both outputs used later
    wire s0 = p0_0 > p8_0;
    wire [7:0] p0_1 = s0 ? p8_0 : p0_0;
    wire [7:0] p8_1 = s0 ? p0_0 : p8_0;
    // comparator 1: channels 1 and 5, both outputs used later
    wire s1 = p1_0 > p5_0;
    wire [7:0] p1_1 = s1 ? p5_0 : p1_0;
    wire [7:0] p5_1 = s1 ? p1_0 : p5_0;
    // comparator 2: channels 2 and 6, both outputs used later
    wire s2 = p2_0 > p6_0;
    wire [7:0] p2_1 = s2 ? p6_0 : p2_0;
    wire [7:0] p6_1 = s2 ? p2_0 : p6_0;
    // comparator 3: channels 3 and 7, both outputs used later
    wire s3 = p3_0 > p7_0;
    wire [7:0] p3_1 = s3 ? p7_0 : p3_0;
    wire [7:0] p7_1 = s3 ? p3_0 : p7_0;
    // comparator 4: channels 0 and 4, both outputs used later
    wire s4 = p0_1 > p4_0;
    wire [7:0] p0_2 = s4 ? p4_0 : p0_1;
    wire [7:0] p4_1 = s4 ? p0_1 : p4_0;
    // comparator 5: channels 1 and 3, both outputs used later
    wire s5 = p1_1 > p3_1;
    wire [7:0] p1_2 = s5 ? p3_1 : p1_1;
    wire [7:0] p3_2 = s5 ? p1_1 : p3_1;
    // comparator 6: channels 5 and 7, both outputs used later
    wire s6 = p5_1 > p7_1;
    wire [7:0] p5_2 = s6 ? p7_1 : p5_1;
    wire [7:0] p7_2 = s6 ? p5_1 : p7_1;
    // comparator 7: channels 4 and 8, both outputs used later
    wire s7 = p4_1 > p8_1;
    wire [7:0] p4_2 = s7 ? p8_1 : p4_1;
    wire [7:0] p8_2 = s7 ? p4_1 : p8_1;
    // comparator 8: channels 0 and 2, only the larger used later
    wire s8 = p0_2 > p2_1;
    wire [7:0] p2_2 = s8 ? p0_2 : p2_1;
    // comparator 9: channels 3 and 5, both outputs used later
    wire s9 = p3_2 > p5_2;
    wire [7:0] p3_3 = s9 ? p5_2 : p3_2;
    wire [7:0] p5_3 = s9 ? p3_2 : p5_2;
    // comparator 10: channels 4 and 6, both outputs used later
    wire s10 = p4_2 > p6_1;
    wire [7:0] p4_3 = s10 ? p6_1 : p4_2;
    wire [7:0] p6_2 = s10 ? p4_2 : p6_1;
    // comparator 11: channels 2 and 8, both outputs used later
    wire s11 = p2_2 > p8_2;
    wire [7:0] p2_3 = s11 ? p8_2 : p2_2;
    wire [7:0] p8_3 = s11 ? p2_2 : p8_2;
    // comparator 12: channels 2 and 4, both outputs used later
    wire s12 = p2_3 > p4_3;
    wire [7:0] p2_4 = s12 ? p4_3 : p2_3;
    wire [7:0] p4_4 = s12 ? p2_3 : p4_3;
    // comparator 13: channels 6 and 8, both outputs used later
    wire s13 = p6_2 > p8_3;
    wire [7:0] p6_3 = s13 ? p8_3 : p6_2;
    wire [7:0] p8_4 = s13 ? p6_2 : p8_3;
    // comparator 14: channels 2 and 3, only the larger used later
    wire s14 = p2_4 > p3_3;
    wire [7:0] p3_4 = s14 ? p2_4 : p3_3;
    // comparator 15: channels 4 and 5, only the smaller used later
    wire s15 = p4_4 > p5_3;
    wire [7:0] p4_5 = s15 ? p5_3 : p4_4;
    // comparator 16: channels 6 and 7, only the smaller used later
    wire s16 = p6_3 > p7_2;
    wire [7:0] p6_4 = s16 ? p7_2 : p6_3;
    // comparator 17: channels 1 and 8, only the smaller used later
    wire s17 = p1_2 > p8_4;
    wire [7:0] p1_3 = s17 ? p8_4 : p1_2;
    // comparator 18: channels 1 and 4, only the larger used later
    wire s18 = p1_3 > p4_5;
    wire [7:0] p4_6 = s18 ? p1_3 : p4_5;
    // comparator 19: channels 3 and 6, only the smaller used later
    wire s19 = p3_4 > p6_4;
    wire [7:0] p3_5 = s19 ? p6_4 : p3_4;
    // comparator 20: channels 3 and 4, only the larger used later
    wire s20 = p3_5 > p4_6;
    wire [7:0] p4_7 = s20 ? p3_5 : p4_6;
    assign center = p4_7;
endmodule
