// Pipelined 4-word sorter of a (made-up) telemetry aggregator: one register stage after each of its
// three layers, a synchronous active-low reset, one port per word.
module telemetry_pipe #(parameter W = 8) (
  input clk, input rst_n,
  input [W-1:0] s0, s1, s2, s3,
  output [W-1:0] m0, m1, m2, m3
);
  wire [W-1:0] a0, a1, a2, a3, b0, b1, b2, b3, c1, c2;
  reg  [W-1:0] p0, p1, p2, p3, q0, q1, q2, q3, r0, r1, r2, r3;
  cas_unit #(W) l0a (s0, s1, a0, a1);
  cas_unit #(W) l0b (s2, s3, a2, a3);
  always @(posedge clk)
    if (!rst_n) begin p0 <= 0; p1 <= 0; p2 <= 0; p3 <= 0; end
    else begin p0 <= a0; p1 <= a1; p2 <= a2; p3 <= a3; end
  cas_unit #(W) l1a (p0, p2, b0, b2);
  cas_unit #(W) l1b (p1, p3, b1, b3);
  always @(posedge clk) begin q0 <= b0; q1 <= b1; q2 <= b2; q3 <= b3; end
  cas_unit #(W) l2 (q1, q2, c1, c2);
  always @(posedge clk) begin r0 <= q0; r1 <= c1; r2 <= c2; r3 <= q3; end
  assign m0 = r0; assign m1 = r1; assign m2 = r2; assign m3 = r3;
endmodule
