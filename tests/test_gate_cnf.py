"""The Tseitin encoding of gate circuits agrees with a direct evaluation on every input.

The reference is the gate evaluator of ``tests/gate_reference.py`` (every op's
truth table written out there, independent of the project's evaluator),
applied to random circuits over every op, constants included.
"""

from __future__ import annotations

import itertools

from hypothesis import given, settings
from hypothesis import strategies as st
from pysat.solvers import Solver

from gate_reference import run_gates
from sortcheck.engines.gates.cnf import CnfBuilder, encode_circuit
from sortcheck.model import Gate, GateCircuit, OutputWord, Word

OPS = ("and", "or", "nand", "nor", "xor", "xnor", "not", "mux")


@st.composite
def circuits(draw):
    words = draw(st.integers(1, 3))
    width = draw(st.integers(1, 2))
    signals = [f"x{w}[{i}]" for w in range(words) for i in range(width)]
    gates = []
    for index in range(draw(st.integers(1, 12))):
        op = draw(st.sampled_from(OPS))
        arity = {"not": 1, "mux": 3}.get(op) or draw(st.integers(2, 4))
        sources = tuple(draw(st.sampled_from(signals + [0, 1])) for _ in range(arity))
        gates.append(Gate(f"g{index}", op, sources))
        signals.append(f"g{index}")
    picks = [draw(st.sampled_from(signals + [0, 1])) for _ in range(draw(st.integers(1, 4)))]
    outputs = tuple(OutputWord(f"y{i}", (bit,)) for i, bit in enumerate(picks))
    return GateCircuit(tuple(Word(f"x{w}", width) for w in range(words)), tuple(gates), outputs)


def direct(circuit, bits):
    """The output bits for the input bits ``bits`` (word after word, low bit first), by the reference evaluator."""
    width = circuit.inputs[0].width
    words = [sum(bit << i for i, bit in enumerate(bits[start:start + width])) for start in range(0, len(bits), width)]
    return run_gates(circuit, words)


@settings(max_examples=150, deadline=None)
@given(circuits())
def test_encoding_agrees_with_direct_evaluation_on_every_input(circuit):
    builder = CnfBuilder()
    encoded = encode_circuit(builder, circuit)
    names = [f"{word.name}[{i}]" for word in circuit.inputs for i in range(word.width)]
    literals = [literal for word in encoded.inputs for literal in word]
    with Solver(name="minisat22", bootstrap_with=builder.clauses) as solver:
        for values in itertools.product((0, 1), repeat=len(names)):
            assumptions = [literal if value else -literal for literal, value in zip(literals, values)]
            assert solver.solve(assumptions=assumptions)
            model = set(solver.get_model())
            got = [int(word[0] in model) for word in encoded.outputs]
            assert got == direct(circuit, values)


def test_structural_hashing_shares_equal_nodes_between_two_copies():
    circuit = GateCircuit((Word("a", 1), Word("b", 1)),
                          (Gate("t", "nand", ("a[0]", "b[0]")), Gate("u", "xor", ("b[0]", "a[0]"))),
                          (OutputWord("y0", ("t",)), OutputWord("y1", ("u",))))
    builder = CnfBuilder()
    first = encode_circuit(builder, circuit)
    clauses = len(builder.clauses)
    second = encode_circuit(builder, circuit, inputs=first.inputs)
    assert second.outputs == first.outputs and len(builder.clauses) == clauses
    assert builder.asked == 4 and builder.encoded == 2


def test_constants_fold_away():
    builder = CnfBuilder()
    x = builder.variable("x")
    assert builder.op("nor", [x, builder.true]) == builder.false
    assert builder.op("xnor", [x, x, x]) == -x
    assert builder.op("mux", [builder.true, x, builder.false]) == builder.false
    assert builder.encoded == 0


def test_word_comparisons_agree_with_python_on_every_pair_of_three_bit_words():
    from sortcheck.engines.gates.cnf import constant_word, equal_words, less_than

    def signed(value):
        return value - 8 if value >= 4 else value

    builder = CnfBuilder()
    for a, b in itertools.product(range(8), repeat=2):
        left, right = constant_word(builder, a, 3), constant_word(builder, b, 3)
        assert less_than(builder, left, right) == builder.constant(a < b)
        assert less_than(builder, left, right, or_equal=True) == builder.constant(a <= b)
        assert less_than(builder, left, right, signed=True) == builder.constant(signed(a) < signed(b))
        assert equal_words(builder, left, right) == builder.constant(a == b)


def test_symbolic_comparison_has_the_right_models():
    from sortcheck.engines.gates.cnf import less_than

    builder = CnfBuilder()
    left = [builder.variable(("l", i)) for i in range(3)]
    right = [builder.variable(("r", i)) for i in range(3)]
    out = less_than(builder, left, right, signed=True)
    with Solver(name="minisat22", bootstrap_with=builder.clauses) as solver:
        for a, b in itertools.product(range(8), repeat=2):
            bits = [lit if (a >> i) & 1 else -lit for i, lit in enumerate(left)]
            bits += [lit if (b >> i) & 1 else -lit for i, lit in enumerate(right)]
            assert solver.solve(assumptions=bits)
            expected = (a - 8 * (a >= 4)) < (b - 8 * (b >= 4))
            assert (out in solver.get_model()) == expected
