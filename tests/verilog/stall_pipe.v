// Two-stage 4-word sorter of a (made-up) sensor hub: an asynchronous reset, and a clock enable that
// stalls the whole pipeline (both stages register only while advance is high).
module stall_pipe #(parameter W = 5) (
  input clk, input clear, input advance,
  input [W-1:0] s0, s1, s2, s3,
  output reg [W-1:0] m0, m1, m2, m3
);
  wire [W-1:0] a0, a1, a2, a3, b0, b1, b2, b3, c1, c2;
  reg  [W-1:0] p0, p1, p2, p3;
  cas_unit #(W) u0 (s0, s1, a0, a1);
  cas_unit #(W) u1 (s2, s3, a2, a3);
  cas_unit #(W) u2 (a0, a2, b0, b2);
  cas_unit #(W) u3 (a1, a3, b1, b3);
  always @(posedge clk or posedge clear)
    if (clear) begin p0 <= 0; p1 <= 0; p2 <= 0; p3 <= 0; end
    else if (advance) begin p0 <= b0; p1 <= b1; p2 <= b2; p3 <= b3; end
  cas_unit #(W) u4 (p1, p2, c1, c2);
  always @(posedge clk or posedge clear)
    if (clear) begin m0 <= 0; m1 <= 0; m2 <= 0; m3 <= 0; end
    else if (advance) begin m0 <= p0; m1 <= c1; m2 <= c2; m3 <= p3; end
endmodule
