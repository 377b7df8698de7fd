// Orders 8 packet descriptors of 8 bits by their 3-bit priority field (bits 7..5); whole descriptors move.
module key_sort8x8_key3 (
    input  wire [63:0] desc_in,    // descriptor k in bits 8k+7..8k: {priority[2:0], id[4:0]}
    output reg  [63:0] desc_out    // ascending by priority; the ids ride along
);
    reg [7:0] v [0:7];
    reg [7:0] t;
    integer i, round;

    always @* begin
        t = 8'd0;
        for (i = 0; i < 8; i = i + 1)
            v[i] = desc_in[8*i +: 8];
        for (round = 0; round < 8; round = round + 1)
            for (i = round % 2; i < 7; i = i + 2)
                if (v[i][7:5] > v[i+1][7:5]) begin
                    t = v[i]; v[i] = v[i+1]; v[i+1] = t;
                end
        for (i = 0; i < 8; i = i + 1)
            desc_out[8*i +: 8] = v[i];
    end
endmodule
