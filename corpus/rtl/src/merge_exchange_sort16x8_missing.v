// Broken sorting unit: the 16 x 8 merge exchange with compare-exchange step 33 (words 7 and 13) left out.
module merge_exchange_sort16x8_missing (
    input  wire [127:0] tags_in,   // tag k in bits 8k+7..8k
    output reg  [127:0] tags_out   // ascending: the smallest tag in bits 7..0
);
    // {larger, smaller} of two tags
    function [15:0] order2(input [7:0] a, input [7:0] b);
        order2 = (a > b) ? {a, b} : {b, a};
    endfunction

    reg [7:0] v [0:15];
    integer i;

    always @* begin
        for (i = 0; i < 16; i = i + 1)
            v[i] = tags_in[8*i +: 8];
        {v[8], v[0]} = order2(v[0], v[8]);
        {v[9], v[1]} = order2(v[1], v[9]);
        {v[10], v[2]} = order2(v[2], v[10]);
        {v[11], v[3]} = order2(v[3], v[11]);
        {v[12], v[4]} = order2(v[4], v[12]);
        {v[13], v[5]} = order2(v[5], v[13]);
        {v[14], v[6]} = order2(v[6], v[14]);
        {v[15], v[7]} = order2(v[7], v[15]);
        {v[4], v[0]} = order2(v[0], v[4]);
        {v[5], v[1]} = order2(v[1], v[5]);
        {v[6], v[2]} = order2(v[2], v[6]);
        {v[7], v[3]} = order2(v[3], v[7]);
        {v[12], v[8]} = order2(v[8], v[12]);
        {v[13], v[9]} = order2(v[9], v[13]);
        {v[14], v[10]} = order2(v[10], v[14]);
        {v[15], v[11]} = order2(v[11], v[15]);
        {v[8], v[4]} = order2(v[4], v[8]);
        {v[9], v[5]} = order2(v[5], v[9]);
        {v[10], v[6]} = order2(v[6], v[10]);
        {v[11], v[7]} = order2(v[7], v[11]);
        {v[2], v[0]} = order2(v[0], v[2]);
        {v[3], v[1]} = order2(v[1], v[3]);
        {v[14], v[12]} = order2(v[12], v[14]);
        {v[15], v[13]} = order2(v[13], v[15]);
        {v[6], v[4]} = order2(v[4], v[6]);
        {v[7], v[5]} = order2(v[5], v[7]);
        {v[10], v[8]} = order2(v[8], v[10]);
        {v[11], v[9]} = order2(v[9], v[11]);
        {v[1], v[0]} = order2(v[0], v[1]);
        {v[15], v[14]} = order2(v[14], v[15]);
        {v[8], v[2]} = order2(v[2], v[8]);
        {v[9], v[3]} = order2(v[3], v[9]);
        {v[12], v[6]} = order2(v[6], v[12]);
        // step 33 (words 7 and 13) is missing
        {v[4], v[2]} = order2(v[2], v[4]);
        {v[5], v[3]} = order2(v[3], v[5]);
        {v[8], v[6]} = order2(v[6], v[8]);
        {v[9], v[7]} = order2(v[7], v[9]);
        {v[12], v[10]} = order2(v[10], v[12]);
        {v[13], v[11]} = order2(v[11], v[13]);
        {v[3], v[2]} = order2(v[2], v[3]);
        {v[5], v[4]} = order2(v[4], v[5]);
        {v[7], v[6]} = order2(v[6], v[7]);
        {v[9], v[8]} = order2(v[8], v[9]);
        {v[11], v[10]} = order2(v[10], v[11]);
        {v[13], v[12]} = order2(v[12], v[13]);
        {v[8], v[1]} = order2(v[1], v[8]);
        {v[10], v[3]} = order2(v[3], v[10]);
        {v[12], v[5]} = order2(v[5], v[12]);
        {v[14], v[7]} = order2(v[7], v[14]);
        {v[4], v[1]} = order2(v[1], v[4]);
        {v[6], v[3]} = order2(v[3], v[6]);
        {v[8], v[5]} = order2(v[5], v[8]);
        {v[10], v[7]} = order2(v[7], v[10]);
        {v[12], v[9]} = order2(v[9], v[12]);
        {v[14], v[11]} = order2(v[11], v[14]);
        {v[2], v[1]} = order2(v[1], v[2]);
        {v[4], v[3]} = order2(v[3], v[4]);
        {v[6], v[5]} = order2(v[5], v[6]);
        {v[8], v[7]} = order2(v[7], v[8]);
        {v[10], v[9]} = order2(v[9], v[10]);
        {v[12], v[11]} = order2(v[11], v[12]);
        {v[14], v[13]} = order2(v[13], v[14]);
        for (i = 0; i < 16; i = i + 1)
            tags_out[8*i +: 8] = v[i];
    end
endmodule
