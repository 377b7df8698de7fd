// Sorter of 8 signed 8-bit sample offsets (two's complement) on one packed bus, insertion style with $signed.
module insertion_sort8x8_signed (
    input  wire [63:0] offset_in,    // offset k in bits 8k+7..8k
    output reg  [63:0] offset_out    // ascending as signed numbers
);
    reg [7:0] v [0:7];
    reg [7:0] t;
    integer i, j;

    always @* begin
        t = 8'd0;
        for (i = 0; i < 8; i = i + 1)
            v[i] = offset_in[8*i +: 8];
        for (i = 1; i < 8; i = i + 1)
            for (j = i; j > 0; j = j - 1)
                if ($signed(v[j-1]) > $signed(v[j])) begin
                    t = v[j-1]; v[j-1] = v[j]; v[j] = t;
                end
        for (i = 0; i < 8; i = i + 1)
            offset_out[8*i +: 8] = v[i];
    end
endmodule
