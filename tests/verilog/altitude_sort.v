// Sorts four signed altitude offsets of a (made-up) drone formation, lowest first.
// SIGNED = 0 compares them as unsigned numbers by mistake.
module altitude_sort #(parameter W = 6, parameter SIGNED = 1) (
  input signed [W-1:0] h0, h1, h2, h3,
  output signed [W-1:0] o0, o1, o2, o3
);
  function automatic below(input signed [W-1:0] a, input signed [W-1:0] b);
    below = SIGNED ? (a < b) : ($unsigned(a) < $unsigned(b));
  endfunction
  wire signed [W-1:0] a0, a1, a2, a3, b0, b1, b2, b3;
  assign {a0, a1} = below(h1, h0) ? {h1, h0} : {h0, h1};
  assign {a2, a3} = below(h3, h2) ? {h3, h2} : {h2, h3};
  assign {b0, b2} = below(a2, a0) ? {a2, a0} : {a0, a2};
  assign {b1, b3} = below(a3, a1) ? {a3, a1} : {a1, a3};
  assign o0 = b0;
  assign o3 = b3;
  assign {o1, o2} = below(b2, b1) ? {b2, b1} : {b1, b2};
endmodule
