// The telemetry sorter's broken variants, for the front end's error messages.
// unbalanced: word 3 skips the second register stage.
module pipe_unbalanced #(parameter W = 4) (
  input clk, input [W-1:0] s0, s1, s2, s3, output [W-1:0] m0, m1, m2, m3);
  wire [W-1:0] a0, a1, a2, a3;
  reg  [W-1:0] p0, p1, p2, p3, q0, q1, q2;
  cas_unit #(W) u0 (s0, s1, a0, a1);
  cas_unit #(W) u1 (s2, s3, a2, a3);
  always @(posedge clk) begin p0 <= a0; p1 <= a1; p2 <= a2; p3 <= a3; end
  always @(posedge clk) begin q0 <= p0; q1 <= p1; q2 <= p2; end
  assign m0 = q0; assign m1 = q1; assign m2 = q2; assign m3 = p3;
endmodule

// feedback: a running minimum, which is state, not a pipeline.
module pipe_feedback #(parameter W = 4) (
  input clk, input [W-1:0] s0, s1, output [W-1:0] m0, m1);
  reg [W-1:0] lowest;
  always @(posedge clk) lowest <= (s0 < lowest) ? s0 : lowest;
  assign m0 = lowest; assign m1 = s1;
endmodule

// an enable made of logic: the stage holds its words while they are equal.
module pipe_hold #(parameter W = 4) (
  input clk, input [W-1:0] s0, s1, output reg [W-1:0] m0, m1);
  always @(posedge clk) if (s0 != s1) begin m0 <= (s0 < s1) ? s0 : s1; m1 <= (s0 < s1) ? s1 : s0; end
endmodule

// a latch: an always @* block that does not assign on every path.
module comb_latch #(parameter W = 4) (
  input [W-1:0] s0, s1, output reg [W-1:0] m0, m1);
  always @* begin
    if (s0 < s1) begin m0 = s0; m1 = s1; end
    else if (s0 > s1) begin m0 = s1; m1 = s0; end
  end
endmodule

// a memory: the words go through a small register file.
module pipe_memory #(parameter W = 4) (
  input clk, input [1:0] at, input [W-1:0] s0, output [W-1:0] m0);
  reg [W-1:0] store [0:3];
  always @(posedge clk) store[at] <= s0;
  assign m0 = store[at];
endmodule
