"""The smt engine on gate circuits against an exhaustive evaluation that shares nothing with the package.

Every circuit here is small enough to run on all of its inputs: ``tests/gate_reference.py``
evaluates the gates on every input at once (numpy arrays of 0/1, one per signal, gates taken in
whatever order their inputs become known, every op's truth table written out there), and the
properties are judged with ``sorted`` (``tests/reference.py``; partial sorts and one-word
medians defined in ``gate_reference.breaks_words`` in the same way).  The circuits are
comparator networks lowered to gates in the and-or, mux and xor styles, counting sorters, and
their mutants (a gate's op flipped, two output bits swapped, a gate input dropped), plus random
circuits.
"""

from __future__ import annotations

import dataclasses
import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from sortcheck.engines import Budget, Status, StopReason
from sortcheck.engines.base import Options
from sortcheck.engines.smt import SmtEngine, smtlib_text
from sortcheck.engines.gates.smt import MAX_GATES
from sortcheck.model import (ComparatorNetwork, Gate, GateCircuit, Median, Merges, OutputWord, PartialSort, Selects,
                             Sorts, Word)
from sortcheck.model.counting import counting_sorter
from sortcheck.model.families import merge_exchange, odd_even_transposition
from sortcheck.model.lowering import lower_network
from gate_reference import OPS, breaks_words, run_everywhere, run_gates, signed_values

ENGINE = SmtEngine()

def reference_breaks(prop, inputs, outputs, width):
    """The property's definition with ``sorted``, on the values the unsigned words stand for."""
    values = signed_values(inputs, width, prop.signed)
    return breaks_words(prop, values, signed_values(outputs, width, prop.signed), width)


def reference_holds(circuit, prop):
    inputs, outputs = run_everywhere(circuit)
    width = circuit.inputs[0].width
    return not any(reference_breaks(prop, list(map(int, row_in)), list(map(int, row_out)), width)
                   for row_in, row_out in zip(inputs, outputs))


def assert_agrees(circuit, prop):
    """smt's verdict is the exhaustive one; a counterexample replays and breaks the property."""
    verdict = ENGINE.check(circuit, prop, Budget.of(120))
    holds = reference_holds(circuit, prop)
    assert verdict.status == (Status.PROVED if holds else Status.REFUTED), (circuit.name, prop, verdict.scope)
    width = circuit.inputs[0].width
    if not holds:
        example = verdict.counterexample
        low, high = (-(1 << (width - 1)), 1 << (width - 1)) if prop.signed else (0, 1 << width)
        assert all(low <= value < high for value in example.input), example
        computed = run_gates(circuit, [v % (1 << width) for v in example.input])
        assert list(example.output) == signed_values(computed, width, prop.signed)
        assert reference_breaks(prop, [v % (1 << width) for v in example.input], computed, width), example
    else:
        assert f"{len(circuit.inputs)} " in verdict.scope and f"of {width} bits" in verdict.scope
        assert "is covered" in verdict.scope and "smt" in verdict.scope and "z3" in verdict.scope
    return verdict


# Mutations: each gives a circuit that differs from the original in one place.
FLIPPED = {"and": "or", "or": "and", "nand": "nor", "nor": "nand", "xor": "xnor", "xnor": "xor", "not": "not",
           "mux": "mux"}


def flip_gate(circuit, index):
    gate = circuit.gates[index % len(circuit.gates)]
    if gate.op == "not":
        changed = Gate(gate.out, "and", (gate.inputs[0], gate.inputs[0]))  # a buffer instead of an inverter
    elif gate.op == "mux":
        changed = Gate(gate.out, "mux", (gate.inputs[0], gate.inputs[2], gate.inputs[1]))  # the data swapped
    else:
        changed = Gate(gate.out, FLIPPED[gate.op], gate.inputs)
    return _replace_gate(circuit, gate, changed)


def drop_input(circuit, index):
    gate = circuit.gates[index % len(circuit.gates)]
    if gate.op == "mux":
        changed = Gate(gate.out, "and", (gate.inputs[1], gate.inputs[1]))  # the select dropped: always when0
    elif len(gate.inputs) > 2:
        changed = Gate(gate.out, gate.op, gate.inputs[1:])
    elif gate.op == "not":
        changed = Gate(gate.out, "or", (0, 0))  # its only input dropped: a constant
    else:
        changed = Gate(gate.out, gate.op, (gate.inputs[0], gate.inputs[0]))
    return _replace_gate(circuit, gate, changed)


def swap_output_bits(circuit, first, second):
    bits = [bit for word in circuit.outputs for bit in word.bits]
    first, second = first % len(bits), second % len(bits)
    bits[first], bits[second] = bits[second], bits[first]
    width = circuit.outputs[0].width
    outputs = tuple(OutputWord(word.name, tuple(bits[i * width:(i + 1) * width]))
                    for i, word in enumerate(circuit.outputs))
    return dataclasses.replace(circuit, outputs=outputs, name=f"{circuit.name} bits {first},{second} swapped")


def _replace_gate(circuit, old, new):
    gates = tuple(new if gate is old else gate for gate in circuit.gates)
    return dataclasses.replace(circuit, gates=gates, name=f"{circuit.name} {old.out} {old.op}->{new.op}")


def mutants(circuit):
    gates = len(circuit.gates)
    yield circuit
    yield flip_gate(circuit, gates // 3)
    yield swap_output_bits(circuit, 0, circuit.outputs[0].width)  # low bits of the first two words
    yield drop_input(circuit, 2 * gates // 3)


def keep_outputs(circuit, positions):
    return dataclasses.replace(circuit, outputs=tuple(circuit.outputs[p] for p in positions))


SORTER_4 = merge_exchange(4)  # (0,2) (1,3) (0,1) (2,3) (1,2): sorts 4 values (Knuth TAOCP vol. 3, 5.3.4)
DESCENDING_4 = ComparatorNetwork(4, tuple((b, a) for a, b in SORTER_4.comparators))
MERGER_2_2 = ComparatorNetwork(4, ((0, 2), (1, 3), (1, 2)))  # Batcher's odd-even merge of two runs of 2
MINIMUM_4 = ComparatorNetwork(4, ((0, 1), (0, 2), (0, 3)))  # the smallest to position 0
TWO_SMALLEST_SWAPPED = ComparatorNetwork(4, SORTER_4.comparators + ((1, 0),))  # 2 smallest, larger first
SORTER_3 = ComparatorNetwork(3, ((0, 1), (1, 2), (0, 1)))

# (circuit, properties): every property with circuits for which it holds and, among the mutants, fails.
CASES = [
    (lower_network(SORTER_4, 3, style="and-or"), [Sorts(), Selects(count=2, sorted=True)]),
    (lower_network(SORTER_4, 3, style="mux"), [Sorts(), Merges(split=2)]),
    (lower_network(SORTER_4, 2, style="xor", signed=True), [Sorts(signed=True)]),
    (lower_network(DESCENDING_4, 3, style="mux"), [Sorts(order="descending")]),
    (lower_network(MERGER_2_2, 3, style="and-or"), [Merges(split=2), Sorts()]),
    (keep_outputs(lower_network(MINIMUM_4, 3, style="mux"), [0]), [Selects(count=1)]),
    (keep_outputs(lower_network(TWO_SMALLEST_SWAPPED, 3, style="and-or"), [0, 1, 2]),
     [Selects(count=2), Selects(count=2, sorted=True)]),
    (lower_network(SORTER_3, 3, style="mux"), [Median()]),
    (keep_outputs(lower_network(SORTER_3, 3, style="and-or", signed=True), [1]), [Median(signed=True)]),
    (lower_network(odd_even_transposition(4), 3, style="mux", key_bits=2),
     [PartialSort(key_bits=2, stable=True), PartialSort(key_bits=2)]),
    (lower_network(SORTER_4, 3, style="and-or", key_bits=1), [PartialSort(key_bits=1), PartialSort(key_bits=1, stable=True)]),
    (lower_network(odd_even_transposition(3), 3, style="and-or", signed=True, key_bits=2),
     [PartialSort(key_bits=2, stable=True, signed=True)]),
    (counting_sorter(4, 2), [Sorts(), Selects(count=3, sorted=True)]),
    (counting_sorter(3, 3, signed=True), [Sorts(signed=True), Median(signed=True)]),
]


@pytest.mark.parametrize("circuit, props", CASES, ids=[circuit.name for circuit, _ in CASES])
def test_circuits_and_their_mutants_agree_with_exhaustive_evaluation(circuit, props):
    for mutant in mutants(circuit):
        for prop in props:
            assert_agrees(mutant, prop)


def test_every_property_is_seen_holding_and_failing():
    # Without this the test above could pass with circuits that all hold, or all fail.
    seen = {}
    for circuit, props in CASES:
        for mutant in mutants(circuit):
            for prop in props:
                seen.setdefault(prop.short(), set()).add(reference_holds(mutant, prop))
    kinds = {"sorts", "sorts:desc", "sorts:signed", "merges:2", "selects:1", "selects:2", "selects:2:sorted",
             "median", "median:signed", "partial-sort:2", "partial-sort:2:stable", "partial-sort:1",
             "partial-sort:1:stable", "partial-sort:2:stable:signed"}
    assert kinds <= set(seen)
    assert all(seen[kind] == {True, False} for kind in kinds - {"partial-sort:1:stable"}), seen
    assert seen["partial-sort:1:stable"] == {False}  # merge exchange is not stable


@st.composite
def random_circuits(draw):
    """2 to 3 words of 1 to 2 bits, up to 12 gates of any op on earlier signals, outputs on any signals."""
    words, width = draw(st.integers(2, 3)), draw(st.integers(1, 2))
    signals = [f"x{i}[{j}]" for i in range(words) for j in range(width)] + [0, 1]
    gates = []
    for number in range(draw(st.integers(0, 12))):
        op = draw(st.sampled_from(sorted(OPS)))
        arity = {"not": 1, "mux": 3}.get(op) or draw(st.integers(2, 3))
        gates.append(Gate(f"g{number}", op, tuple(draw(st.sampled_from(signals)) for _ in range(arity))))
        signals.append(f"g{number}")
    outputs = tuple(OutputWord(f"y{i}", tuple(draw(st.sampled_from(signals)) for _ in range(width)))
                    for i in range(words))
    return GateCircuit(tuple(Word(f"x{i}", width) for i in range(words)), tuple(gates), outputs, name="random")


@st.composite
def nearly_sorting_circuits(draw):
    """A lowered sorter of 2 to 3 words in any style, maybe signed, with up to two mutations."""
    words, width = draw(st.integers(2, 3)), draw(st.integers(1, 2))
    network = odd_even_transposition(words)
    circuit = lower_network(network, width, style=draw(st.sampled_from(["and-or", "mux", "xor"])),
                            signed=draw(st.booleans()))
    for _ in range(draw(st.integers(0, 2))):
        mutate = draw(st.sampled_from([flip_gate, drop_input]))
        circuit = mutate(circuit, draw(st.integers(0, 10 ** 6)))
    return circuit


def circuit_properties(circuit):
    n, width = len(circuit.inputs), circuit.inputs[0].width
    props = [Sorts(), Sorts(order="descending")] + [Merges(split=m) for m in range(1, n)]
    props += [Selects(count=t, sorted=s) for t in range(1, n + 1) for s in (False, True)]
    props += [PartialSort(key_bits=k, stable=s) for k in range(1, width + 1) for s in (False, True)]
    if n % 2:
        props.append(Median())
    return props


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.one_of(random_circuits(), nearly_sorting_circuits()), st.data())
def test_random_circuits_agree_with_exhaustive_evaluation(circuit, data):
    prop = data.draw(st.sampled_from(circuit_properties(circuit)))
    if data.draw(st.booleans()):
        prop = dataclasses.replace(prop, signed=True)
    assert_agrees(circuit, prop)


def test_scope_of_a_proof_names_property_words_width_and_engine():
    circuit = lower_network(MERGER_2_2, 3, style="mux")
    verdict = ENGINE.check(circuit, Merges(split=2), Budget.of(60), Options(width=5))
    assert verdict.status == Status.PROVED
    assert verdict.scope.startswith("merges two ascending runs split at 2: every input of 4 unsigned words of 3 bits "
                                    "whose words 0..1 and 2..3 each ascend is covered")
    assert "z3, engine smt" in verdict.scope and "--width 5 does not apply to gate circuits" in verdict.scope
    assert verdict.figures["width"] == 3 and verdict.figures["gates_encoded"] == len(circuit.gates)
    same = ENGINE.check(circuit, Merges(split=2), Budget.of(60), Options(width=3))
    assert "--width" not in same.scope


def test_refusals_of_gate_circuits():
    mixed = GateCircuit((Word("a", 2), Word("b", 3)), (), (OutputWord("y0", ("a[0]", "a[1]")),
                                                          OutputWord("y1", ("b[0]", "b[1]", "b[2]"))))
    stop, reason = ENGINE.refusal(mixed, Sorts(), Options())
    assert stop == StopReason.UNSUPPORTED and "one width" in reason and "widths 2, 3" in reason
    circuit = lower_network(SORTER_4, 3)
    stop, reason = SmtEngine(max_gates=10).refusal(circuit, Sorts(), Options())
    assert stop == StopReason.SIZE_LIMIT and f"{len(circuit.gates)} gates" in reason
    assert ENGINE.refusal(circuit, Median(), Options())[0] == StopReason.UNSUPPORTED  # 4 words have no median
    assert ENGINE.refusal(circuit, PartialSort(key_bits=2), Options()) is None
    verdict = SmtEngine(max_gates=10).check(circuit, Sorts(), Budget(), Options())
    assert verdict.status == Status.UNKNOWN and verdict.scope.startswith("nothing was checked")
    large = lower_network(merge_exchange(16), 8, style="and-or")
    stop, reason = ENGINE.refusal(large, Sorts(), Options())
    assert len(large.gates) > MAX_GATES and stop == StopReason.SIZE_LIMIT and f"{MAX_GATES:,} gates" in reason


def test_smtlib_text_keeps_a_circuits_own_width():
    circuit = lower_network(SORTER_3, 2, style="mux")
    assert "(declare-fun x2 () (_ BitVec 2))" in smtlib_text(circuit, Sorts(), width=2)
    with pytest.raises(ValueError, match="own width 2"):
        smtlib_text(circuit, Sorts(), width=3)


def test_a_tiny_budget_gives_unknown():
    circuit = lower_network(merge_exchange(8), 8, style="and-or")
    verdict = ENGINE.check(circuit, Sorts(), Budget.of(0.5))
    assert verdict.status == Status.UNKNOWN and verdict.stop == StopReason.TIMEOUT
    assert "nothing is proved" in verdict.scope and "cases of the violation" in verdict.scope
