// Sorter of 5 queue depths of 4 bits; the comparison is written by hand, most significant bit first.
`define COMPARE_EXCHANGE(x, y) if (greater(v[x], v[y])) begin t = v[x]; v[x] = v[y]; v[y] = t; end
module sort5_msb_first (
    input  wire [19:0] depth_in,    // depth k in bits 4k+3..4k
    output reg  [19:0] depth_out    // ascending
);
    // 1 when a > b: the highest bit where a and b differ decides
    function greater(input [3:0] a, input [3:0] b);
        integer k;
        reg decided;
        begin
            greater = 1'b0;
            decided = 1'b0;
            for (k = 3; k >= 0; k = k - 1)
                if (!decided && a[k] != b[k]) begin
                    greater = a[k];
                    decided = 1'b1;
                end
        end
    endfunction

    reg [3:0] v [0:4];
    reg [3:0] t;
    integer i;

    always @* begin
        t = 4'd0;
        for (i = 0; i < 5; i = i + 1)
            v[i] = depth_in[4*i +: 4];
        `COMPARE_EXCHANGE(0, 4)
        `COMPARE_EXCHANGE(1, 3)
        `COMPARE_EXCHANGE(0, 2)
        `COMPARE_EXCHANGE(2, 4)
        `COMPARE_EXCHANGE(0, 1)
        `COMPARE_EXCHANGE(2, 3)
        `COMPARE_EXCHANGE(1, 4)
        `COMPARE_EXCHANGE(1, 2)
        `COMPARE_EXCHANGE(3, 4)
        for (i = 0; i < 5; i = i + 1)
            depth_out[4*i +: 4] = v[i];
    end
endmodule
`undef COMPARE_EXCHANGE
