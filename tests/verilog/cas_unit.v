// Compare-exchange unit shared by the pipelined sorters below.
module cas_unit #(parameter W = 8) (input [W-1:0] a, b, output [W-1:0] lo, hi);
  wire swap = b < a;
  assign lo = swap ? b : a;
  assign hi = swap ? a : b;
endmodule
