"""Equivalence of two netlists, checked against direct evaluation on every input.

References: the comparators applied value by value (``tests/reference.py``,
independent of the package) on every 0-1 input and on every permutation of
distinct values; for lowered gate circuits, the same comparators on every
input of small words.
"""

from __future__ import annotations

import itertools
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from reference import run
from sortcheck.engines import Budget, Status
from sortcheck.engines.equivalence import equivalent
from sortcheck.errors import UsageError
from sortcheck.model import ComparatorNetwork, Gate, GateCircuit, OutputWord
from sortcheck.model.families import build_family
from sortcheck.model.lowering import lower_network
from strategies import networks


def same_function(first, second, n):
    """Reference: equal on every permutation of n distinct values (which covers every order pattern up to ties)
    and on every 0-1 input."""
    inputs = itertools.chain(itertools.permutations(range(n)), itertools.product((0, 1), repeat=n))
    return all(run(first.comparators, list(v)) == run(second.comparators, list(v)) for v in inputs)


@st.composite
def network_pairs(draw):
    first = draw(networks(max_channels=6, max_size=12, min_channels=2))
    if draw(st.booleans()):
        second = draw(networks(max_channels=first.channels, max_size=12, min_channels=first.channels))
    else:  # a small edit of the first: swap two neighbours or drop one comparator
        comparators = list(first.comparators)
        if len(comparators) >= 2:
            i = draw(st.integers(0, len(comparators) - 2))
            comparators[i], comparators[i + 1] = comparators[i + 1], comparators[i]
        second = ComparatorNetwork(first.channels, tuple(comparators))
    return first, second


@settings(max_examples=120, deadline=None)
@given(network_pairs())
def test_networks_agree_with_exhaustive_evaluation(pair):
    first, second = pair
    answer = equivalent(first, second, Budget())
    assert (answer.status == Status.PROVED) == same_function(first, second, first.channels)
    if answer.status == Status.REFUTED:
        assert run(first.comparators, list(answer.input)) != run(second.comparators, list(answer.input))
        assert answer.outputs == (tuple(run(first.comparators, list(answer.input))),
                                  tuple(run(second.comparators, list(answer.input))))


def test_two_different_sorters_lowered_in_different_styles_are_equal():
    # Both sort (Knuth, TAOCP vol. 3, 5.3.4: merge exchange and bitonic sorters), so both compute sorted(x).
    first = lower_network(build_family("merge-exchange", 4), 3, style="and-or")
    second = lower_network(build_family("bitonic", 4), 3, style="xor")
    answer = equivalent(first, second, Budget())
    assert answer.status == Status.PROVED and answer.method == "lifted networks, 0-1 miter (SAT)"
    for values in itertools.product(range(8), repeat=4):  # the reference: Python's sorted on every input
        assert first.evaluate(values) == sorted(values) == second.evaluate(values)


def test_a_counting_sorter_and_a_lowered_network_are_compared_by_sat_sweeping():
    from sortcheck.model.counting import counting_sorter

    counting = counting_sorter(4, 2)
    lowered = lower_network(build_family("odd-even-transposition", 4), 2, style="and-or")
    answer = equivalent(counting, lowered, Budget())
    assert answer.status == Status.PROVED and answer.method == "SAT sweeping"
    for values in itertools.product(range(4), repeat=4):  # Python's sorted as the reference
        assert counting.evaluate(values) == sorted(values) == lowered.evaluate(values)


def test_two_synthesis_flows_of_one_design_are_proved_equal_by_sat_sweeping():
    # corpus/rtl: one Verilog merge exchange sorter through Yosys and ABC into gates (BLIF) and into an
    # and-inverter graph (AIGER); most signals of one are signals of the other, so sweeping comes before
    # lifting. Reference: the independent netlist evaluator finds the two equal, and both sorted (Python's sorted).
    import numpy as np

    import netlist_reference as independent
    from sortcheck.load import read_netlist

    rtl = Path(__file__).resolve().parent.parent / "corpus" / "rtl"
    names = ("merge_exchange_sort16x8.blif", "merge_exchange_sort16x8.aig")
    gates, aig = (read_netlist(rtl / name) for name in names)
    answer = equivalent(gates, aig, Budget())
    assert answer.status == Status.PROVED and answer.method == "SAT sweeping", answer.scope
    assert answer.figures["sweep"]["sweep"]["candidates_proved"] > 0 and answer.figures["likeness"] >= 0.5
    inputs = np.random.default_rng(3).integers(0, 256, size=(200, 16))
    first, second = (independent.run_words(independent.read_netlist(rtl / name), inputs, 8) for name in names)
    np.testing.assert_array_equal(first, second)
    np.testing.assert_array_equal(first, np.sort(inputs, axis=1))


def test_sat_sweeping_tells_apart_circuits_that_differ_on_one_input():
    # A counting sorter whose output bit 0 of word 0 is forced to 0 on exactly one input (all words 3) of 2^32:
    # random simulation is unlikely to hit it; the sweep must find it.
    from sortcheck.model.counting import counting_sorter

    counting = counting_sorter(16, 2)
    gates = list(counting.gates)
    all_ones = [bit for word in counting.inputs for bit in (f"{word.name}[0]", f"{word.name}[1]")]
    gates.append(Gate("__all_ones", "and", tuple(all_ones)))
    first = counting.outputs[0].bits[0]
    gates.append(Gate("__not_all_ones", "not", ("__all_ones",)))
    gates.append(Gate("__patched", "and", (first, "__not_all_ones")))
    outputs = (OutputWord(counting.outputs[0].name, ("__patched",) + tuple(counting.outputs[0].bits[1:])),
               *counting.outputs[1:])
    patched = GateCircuit(counting.inputs, tuple(gates), outputs)
    answer = equivalent(counting, patched, Budget())
    assert answer.status == Status.REFUTED
    assert answer.method == "SAT sweeping"
    assert answer.input == (3,) * 16  # the only input where they differ (by construction)
    assert counting.evaluate(answer.input) != patched.evaluate(answer.input)


def test_two_lifted_networks_that_differ_give_words_that_tell_the_circuits_apart():
    network = build_family("merge-exchange", 6)
    broken = ComparatorNetwork(6, network.comparators[:3] + network.comparators[4:])
    first, second = lower_network(network, 5, style="mux"), lower_network(broken, 5, style="xor", signed=False)
    answer = equivalent(first, second, Budget())
    assert answer.status == Status.REFUTED
    assert run(network.comparators, list(answer.input)) != run(broken.comparators, list(answer.input))


def test_a_flipped_gate_is_told_apart_with_an_input_that_really_differs():
    network = build_family("merge-exchange", 4)
    circuit = lower_network(network, 3, style="mux")
    for index in range(0, len(circuit.gates), 7):
        gate = circuit.gates[index]
        if gate.op == "mux":
            continue
        flipped = {"and": "or", "or": "and", "xor": "xnor", "xnor": "xor", "not": "not"}[gate.op]
        if flipped == gate.op:
            continue
        gates = circuit.gates[:index] + (Gate(gate.out, flipped, gate.inputs),) + circuit.gates[index + 1:]
        mutant = GateCircuit(circuit.inputs, gates, circuit.outputs)
        answer = equivalent(circuit, mutant, Budget())
        differs = any(mutant.evaluate(v) != sorted(v) for v in itertools.product(range(8), repeat=4))
        assert (answer.status == Status.REFUTED) == differs
        if differs:
            assert mutant.evaluate(answer.input) != run(network.comparators, list(answer.input))


def test_a_network_against_a_gate_circuit_is_compared_at_the_circuit_width():
    network = build_family("odd-even-transposition", 4)
    circuit = lower_network(build_family("merge-exchange", 4), 2, style="and-or")
    assert equivalent(network, circuit, Budget()).status == Status.PROVED
    broken = ComparatorNetwork(4, network.comparators[:-1])
    answer = equivalent(broken, circuit, Budget())
    assert answer.status == Status.REFUTED
    assert run(broken.comparators, list(answer.input)) != sorted(answer.input)


def test_netlists_of_different_shapes_are_refused_with_both_names():
    with pytest.raises(UsageError, match="b.json: a comparator network of 5 channels, but a.json is a comparator "
                                         "network of 4 channels"):
        equivalent(build_family("insertion", 4), build_family("insertion", 5), Budget(), sources=("a.json", "b.json"))
    with pytest.raises(UsageError, match="3 bits"):
        equivalent(lower_network(build_family("insertion", 4), 2), lower_network(build_family("insertion", 4), 3),
                   Budget())


def test_two_large_sorters_are_equal_because_both_are_proved_to_sort():
    # Merge exchange and bitonic sorters sort (Knuth, TAOCP vol. 3, 5.3.4), so both compute sorted order.
    first, second = build_family("merge-exchange", 64), build_family("bitonic", 64)
    answer = equivalent(first, second, Budget())
    assert answer.status == Status.PROVED and answer.method == "both proved to sort"
    broken = ComparatorNetwork(64, second.comparators[:100] + second.comparators[101:])
    answer = equivalent(first, broken, Budget())
    assert answer.status == Status.REFUTED
    assert run(broken.comparators, list(answer.input)) != sorted(answer.input) == list(answer.outputs[0])
