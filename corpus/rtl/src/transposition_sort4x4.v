// Sorter of 4 bank-occupancy counters of 4 bits, odd-even transposition; ties swap (>=).
module transposition_sort4x4 (
    input  wire [15:0] count_in,
    output reg  [15:0] count_out
);
    reg [3:0] v [0:3];
    reg [3:0] t;
    integer i, round;

    always @* begin
        t = 4'd0;
        for (i = 0; i < 4; i = i + 1)
            v[i] = count_in[4*i +: 4];
        for (round = 0; round < 4; round = round + 1)
            for (i = round % 2; i < 3; i = i + 2)
                if (v[i] >= v[i+1]) begin
                    t = v[i]; v[i] = v[i+1]; v[i+1] = t;
                end
        for (i = 0; i < 4; i = i + 1)
            count_out[4*i +: 4] = v[i];
    end
endmodule
