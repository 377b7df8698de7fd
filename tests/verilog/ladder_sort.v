// Price-ladder sorter of a (made-up) market-data card: N keys of W bits in one packed bus,
// odd-even transposition, combinational.  Key 0 sits in the least significant W bits.
// ROUNDS below N leaves it unfinished (N - 2 rounds do not sort every input).
module ladder_sort #(parameter N = 8, parameter W = 8, parameter ROUNDS = N) (
  input  [N*W-1:0] keys,
  output reg [N*W-1:0] sorted
);
  reg [W-1:0] v [0:N-1];
  reg [W-1:0] t;
  integer round, i;
  always @* begin
    for (i = 0; i < N; i = i + 1) v[i] = keys[i*W +: W];
    for (round = 0; round < ROUNDS; round = round + 1)
      for (i = round % 2; i + 1 < N; i = i + 2)
        if (v[i] > v[i+1]) begin t = v[i]; v[i] = v[i+1]; v[i+1] = t; end
    for (i = 0; i < N; i = i + 1) sorted[i*W +: W] = v[i];
  end
endmodule
