// Merges two ascending runs of 4 timestamps of 8 bits (words 0-3 and 4-7): a bitonic merger of min/max assigns.
module merge_runs8x8 (
    input  wire [63:0] run_in,     // run A in words 0-3, run B in words 4-7, each ascending; word k in bits 8k+7..8k
    output wire [63:0] merged_out  // all 8 ascending
);
    localparam W = 8;
    // reversing run B makes the 8 words bitonic: ascending, then descending
    wire [8*W-1:0] s0 = {run_in[4*W +: W], run_in[5*W +: W], run_in[6*W +: W], run_in[7*W +: W], run_in[0 +: 4*W]};
    wire [8*W-1:0] s1, s2, s3;

    genvar i;
    generate
        for (i = 0; i < 8; i = i + 1) begin : half_cleaners
            if ((i & 4) == 0) begin : d4
                assign s1[i*W +: W]     = (s0[i*W +: W] < s0[(i+4)*W +: W]) ? s0[i*W +: W] : s0[(i+4)*W +: W];
                assign s1[(i+4)*W +: W] = (s0[i*W +: W] < s0[(i+4)*W +: W]) ? s0[(i+4)*W +: W] : s0[i*W +: W];
            end
            if ((i & 2) == 0) begin : d2
                assign s2[i*W +: W]     = (s1[i*W +: W] < s1[(i+2)*W +: W]) ? s1[i*W +: W] : s1[(i+2)*W +: W];
                assign s2[(i+2)*W +: W] = (s1[i*W +: W] < s1[(i+2)*W +: W]) ? s1[(i+2)*W +: W] : s1[i*W +: W];
            end
            if ((i & 1) == 0) begin : d1
                assign s3[i*W +: W]     = (s2[i*W +: W] < s2[(i+1)*W +: W]) ? s2[i*W +: W] : s2[(i+1)*W +: W];
                assign s3[(i+1)*W +: W] = (s2[i*W +: W] < s2[(i+1)*W +: W]) ? s2[(i+1)*W +: W] : s2[i*W +: W];
            end
        end
    endgenerate
    assign merged_out = s3;
endmodule
