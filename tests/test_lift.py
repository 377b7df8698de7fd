"""Gate circuits lifted to comparator networks, judged against evaluation outside the package.

The references: the gate evaluator of ``tests/gate_reference.py`` (independent
of ``GateCircuit.evaluate`` and of the simulation engine), ``tests/reference.py``
(comparators applied value by value, properties judged with ``sorted``) and
Python's ``sorted`` on every input of small circuits.  A lifting claims
"the circuit is this network" (after a fixed permutation of the inputs when
it relabels); that claim is checked here on every input of small widths.
"""

from __future__ import annotations

import dataclasses
import itertools
import json
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from sortcheck.engines.base import Budget, Status, StopReason
from sortcheck.engines.gates.lifting.engine import LiftEngine
from sortcheck.engines.gates.lifting.structural import lift_circuit
from sortcheck.load import parse_property
from sortcheck.model import ComparatorNetwork, Gate, Median, Merges, PartialSort, Selects, Sorts, in_layer_order
from sortcheck.model.counting import counting_sorter
from sortcheck.model.families import bitonic, merge_exchange, odd_even_transposition
from sortcheck.model.lowering import lower_network
from gate_reference import evaluation_order, holds_everywhere, run_gates, signed_values
from reference import breaks, run
from strategies import networks

GOLDEN = Path(__file__).resolve().parent.parent / "encodings" / "structural-lifting.golden.json"
STYLES = ("and-or", "mux", "xor")
FAMILIES = (merge_exchange, bitonic, odd_even_transposition)


# --- against the independent gate evaluator (tests/gate_reference.py) ------------------------

def every_input(circuit):
    return itertools.product(range(1 << circuit.width), repeat=circuit.words)


def sort_key(prop, width):
    """The order the property compares in: unsigned, two's complement, or the key bits."""
    shift = width - prop.key_bits if isinstance(prop, PartialSort) else 0
    return lambda value: signed_values([value], width, prop.signed)[0] >> shift


def circuit_breaks(circuit, prop):
    """Whether some input breaks ``prop``, by evaluating every input and judging with ``sorted``."""
    return not holds_everywhere(circuit, prop)


def assert_lifting_is_the_circuit(circuit, lifting, prop):
    """On every input, the circuit's outputs (in the blocks' order) are the lifted network run on the inputs."""
    network = lifting.network
    key = sort_key(prop, circuit.width)
    channels = lifting.input_channels or range(circuit.words)
    positions = [(circuit.words - 1) // 2] if isinstance(prop, Median) and len(circuit.outputs) == 1 \
        else range(len(circuit.outputs))
    order = evaluation_order(circuit)
    for words in every_input(circuit):
        network_input = [None] * circuit.words
        for i, channel in enumerate(channels):
            network_input[channel] = key(words[i])
        expected = run(network.comparators, network_input)
        assert [key(v) for v in run_gates(circuit, words, order)] == [expected[p] for p in positions], words


def same_on_zero_one(first, second):
    return all(run(first.comparators, v) == run(second.comparators, v)
               for v in itertools.product((0, 1), repeat=first.channels))


# --- lowered networks lift back to themselves ----------------------------------------------------

@pytest.mark.parametrize("style", STYLES)
@pytest.mark.parametrize("family", FAMILIES)
def test_lowered_sorters_lift_to_their_own_comparators(family, style):
    network = family(8)
    for signed, key_bits in ((False, None), (True, None), (False, 2), (True, 3)):
        circuit = lower_network(network, 4, style=style, signed=signed, key_bits=key_bits)
        prop = PartialSort(signed=signed, key_bits=key_bits) if key_bits else Sorts(signed=signed)
        lifting = lift_circuit(circuit, prop)
        assert lifting.lifted, lifting.failure
        assert lifting.input_channels is None and len(lifting.blocks) == network.size
        # The same comparators, up to their order within greedy layers.
        assert [set(layer) for layer in in_layer_order(lifting.network).layers] == [set(layer) for layer in
                                                                                   network.layers]
        assert all(block.how in ("sat", "shared", "hashing") for block in lifting.blocks)


@pytest.mark.parametrize("style", STYLES)
def test_reversed_comparators_lift_to_the_same_function(style):
    comparators = tuple((b, a) if i % 3 == 0 else (a, b) for i, (a, b) in enumerate(merge_exchange(6).comparators))
    network = ComparatorNetwork(6, comparators)
    circuit = lower_network(network, 2, style=style)
    lifting = lift_circuit(circuit, Sorts())
    assert lifting.lifted, lifting.failure
    assert same_on_zero_one(lifting.network, network)
    assert_lifting_is_the_circuit(circuit, lifting, Sorts())


@pytest.mark.parametrize("style", STYLES)
@pytest.mark.parametrize("signed", (False, True))
def test_lifted_verdict_matches_exhaustive_evaluation(style, signed):
    for network in (merge_exchange(4), ComparatorNetwork(4, merge_exchange(4).comparators[:-1])):
        circuit = lower_network(network, 3, style=style, signed=signed)
        prop = Sorts(signed=signed)
        verdict = LiftEngine().check(circuit, prop, Budget())
        expected = Status.REFUTED if circuit_breaks(circuit, prop) else Status.PROVED
        assert verdict.status is expected, verdict.scope
        if expected is Status.PROVED:
            assert "proved equal to the circuit on every input of 4 words of 3 bits by SAT sweeping" in verdict.scope
            assert "covers every input of 4 words of 3 bits" in verdict.scope
        else:
            example = verdict.counterexample
            raw = [value % 8 for value in example.input]
            assert signed_values(run_gates(circuit, raw), 3, signed) == list(example.output)
            assert breaks(Sorts(), list(example.input), list(example.output))


def test_key_only_blocks_give_a_partial_sort_exactly_when_the_keys_sort():
    # Worked example: odd-even transposition on 4 channels sorts; without its last round it does not.
    full = odd_even_transposition(4)
    for network in (full, ComparatorNetwork(4, full.comparators[:-1])):
        circuit = lower_network(network, 3, style="mux", key_bits=2)
        verdict = LiftEngine().check(circuit, PartialSort(key_bits=2), Budget())
        expected = Status.REFUTED if circuit_breaks(circuit, PartialSort(key_bits=2)) else Status.PROVED
        assert verdict.status is expected, verdict.scope
    stable = LiftEngine().check(circuit, PartialSort(key_bits=2, stable=True), Budget())
    assert stable.status is Status.UNKNOWN and "stable" in stable.scope


def test_merges_and_median_use_the_channel_positions():
    # Batcher's odd-even merge of two runs of 2 (Knuth, TAOCP vol. 3, 5.3.4, Fig. 49, from memory):
    # it merges at split 2 but does not sort.
    merger = ComparatorNetwork(4, ((0, 2), (1, 3), (1, 2)))
    circuit = lower_network(merger, 2, style="and-or")
    assert LiftEngine().check(circuit, Merges(split=2), Budget()).status is Status.PROVED
    refuted = LiftEngine().check(circuit, Sorts(), Budget())
    assert refuted.status is Status.REFUTED and not circuit_breaks(circuit, Merges(split=2))
    assert breaks(Sorts(), list(refuted.counterexample.input), list(refuted.counterexample.output))
    # The median of three as a circuit with one output word: the middle channel.
    lowered = lower_network(ComparatorNetwork(3, ((0, 1), (1, 2), (0, 1))), 2, style="mux")
    median = dataclasses.replace(lowered, outputs=(lowered.outputs[1],))
    lifting = lift_circuit(median, Median())
    assert lifting.lifted, lifting.failure
    assert_lifting_is_the_circuit(median, lifting, Median())
    assert LiftEngine().check(median, Median(), Budget()).status is Status.PROVED


def test_outputs_no_network_gives_in_that_order_are_relabelled_only_for_position_free_properties():
    # Three words sorted by a merge exchange network, a fourth passed through untouched and output second:
    # no choice of min sides puts the untouched word on channel 1, so the channels are relabelled.
    lowered = lower_network(ComparatorNetwork(4, merge_exchange(3).comparators), 2, style="mux")
    outputs = lowered.outputs
    shuffled = dataclasses.replace(lowered, outputs=(outputs[0], outputs[3], outputs[1], outputs[2]))
    for prop in (Selects(count=1), Selects(count=2, sorted=True), Sorts()):
        lifting = lift_circuit(shuffled, prop)
        assert lifting.lifted and lifting.input_channels is not None, lifting.failure
        assert_lifting_is_the_circuit(shuffled, lifting, prop)
        verdict = LiftEngine().check(shuffled, prop, Budget())
        assert circuit_breaks(shuffled, prop) and verdict.status is Status.REFUTED
        assert "fixed permutation of its input words" in verdict.scope
        example = verdict.counterexample
        assert run_gates(shuffled, list(example.input)) == list(example.output)
        assert breaks(prop, list(example.input), list(example.output))
    merges = lift_circuit(shuffled, Merges(split=2))
    assert not merges.lifted and "depends on input positions" in merges.failure
    assert LiftEngine().check(shuffled, Merges(split=2), Budget()).status is not Status.PROVED


def test_outputs_in_another_order_may_still_be_a_network_on_the_channels():
    lowered = lower_network(merge_exchange(4), 2, style="mux")
    rotated = dataclasses.replace(lowered, outputs=lowered.outputs[1:] + lowered.outputs[:1])
    lifting = lift_circuit(rotated, Merges(split=2))
    assert lifting.lifted and lifting.input_channels is None
    assert_lifting_is_the_circuit(rotated, lifting, Merges(split=2))
    verdict = LiftEngine().check(rotated, Merges(split=2), Budget())
    assert verdict.status is (Status.REFUTED if circuit_breaks(rotated, Merges(split=2)) else Status.PROVED)


def test_liftings_match_their_golden_file():
    cases = json.loads(GOLDEN.read_text())["cases"]
    assert {case["style"] for case in cases} == set(STYLES)
    for case in cases:
        network = ComparatorNetwork(4, tuple(map(tuple, case["network"])))
        prop = parse_property(case["property"])
        circuit = lower_network(network, case["width"], style=case["style"], signed=prop.signed,
                                key_bits=getattr(prop, "key_bits", None))
        lifting = lift_circuit(circuit, prop)
        assert lifting.order.describe() == case["order"]
        assert [list(pair) for pair in lifting.network.comparators] == case["lifted"]
        assert [{"words": list(b.words), "gates": b.gates, "how": b.how} for b in lifting.blocks] == case["blocks"]
        # Independently of the file: the lifted comparators run value by value equal the original network.
        assert same_on_zero_one(lifting.network, network)


# --- what does not lift ----------------------------------------------------------------------------

def test_a_counting_sorter_does_not_lift_and_says_why():
    circuit = counting_sorter(4, 2)
    lifting = lift_circuit(circuit, Sorts())
    assert not lifting.lifted and lifting.blocks == ()
    assert "is not a channel word" in lifting.failure and "in no proved min/max block" in lifting.failure
    verdict = LiftEngine().check(circuit, Sorts(), Budget())
    assert verdict.status is Status.UNKNOWN and verdict.stop is StopReason.UNSUPPORTED
    assert verdict.scope.startswith("nothing was proved")


def test_unsigned_blocks_are_not_lifted_for_a_signed_property():
    circuit = lower_network(merge_exchange(4), 3, style="mux")
    lifting = lift_circuit(circuit, Sorts(signed=True))
    assert not lifting.lifted and "does lift with blocks comparing unsigned words" in lifting.failure
    assert circuit_breaks(circuit, Sorts(signed=True))
    # Not lifted, so the engine tries sampled inputs, which find a failure: recomputed here, judged by sorted.
    verdict = LiftEngine().check(circuit, Sorts(signed=True), Budget())
    assert verdict.status is Status.REFUTED and "does not lift" in verdict.scope
    example = verdict.counterexample
    assert signed_values(run_gates(circuit, [v % 8 for v in example.input]), 3, True) == list(example.output)
    assert breaks(Sorts(), list(example.input), list(example.output))


def mutants(circuit, step=1):
    """The circuit with one gate changed: AND/OR swapped, XOR/XNOR swapped, NOT dropped, mux inputs swapped."""
    flip = {"and": "or", "or": "and", "nand": "nor", "nor": "nand", "xor": "xnor", "xnor": "xor"}
    for index in range(0, len(circuit.gates), step):
        gate = circuit.gates[index]
        if gate.op == "mux":
            select, when0, when1 = gate.inputs
            changed = Gate(gate.out, "mux", (select, when1, when0))
        elif gate.op == "not":
            changed = Gate(gate.out, "xor", (gate.inputs[0], 0))  # a buffer
        else:
            changed = Gate(gate.out, flip[gate.op], gate.inputs)
        yield index, dataclasses.replace(circuit, gates=circuit.gates[:index] + (changed,) + circuit.gates[index + 1:])


@pytest.mark.parametrize("style,step", [("mux", 1), ("and-or", 3), ("xor", 2)])
def test_a_circuit_with_one_gate_changed_is_never_proved_when_it_is_broken(style, step):
    circuit = lower_network(merge_exchange(4), 2, style=style)
    engine = LiftEngine()
    checked = broken = 0
    for index, mutant in mutants(circuit, step):
        verdict = engine.check(mutant, Sorts(), Budget())
        wrong = circuit_breaks(mutant, Sorts())
        broken += wrong
        checked += 1
        if wrong:
            assert verdict.status is not Status.PROVED, (index, verdict.scope)
        if verdict.status is Status.REFUTED:
            example = verdict.counterexample
            assert run_gates(mutant, list(example.input)) == list(example.output)
            assert breaks(Sorts(), list(example.input), list(example.output))
        elif verdict.status is Status.PROVED:
            assert not wrong
    assert broken > checked // 2


def test_a_spent_budget_stops_lifting():
    circuit = lower_network(merge_exchange(8), 4, style="mux")
    verdict = LiftEngine().check(circuit, Sorts(), Budget(deadline=0.0))
    assert verdict.status is Status.UNKNOWN and verdict.stop is StopReason.TIMEOUT


def test_the_engine_refuses_networks_and_circuits_below_its_size():
    engine = LiftEngine()
    reason = engine.refusal(merge_exchange(4), Sorts())
    assert reason is not None and reason[0] is StopReason.UNSUPPORTED
    assert engine.check(merge_exchange(4), Sorts(), Budget()).status is Status.UNKNOWN
    circuit = lower_network(merge_exchange(4), 3, style="mux")  # 12 input bits
    assert LiftEngine(min_input_bits=13).refusal(circuit, Sorts())[0] is StopReason.UNSUPPORTED
    assert LiftEngine(min_input_bits=12).refusal(circuit, Sorts()) is None


# --- random networks and styles ------------------------------------------------------------------

@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(networks(max_channels=5, max_size=10, min_channels=2), st.sampled_from(STYLES), st.integers(1, 2),
       st.booleans())
def test_random_lowered_networks_lift_to_circuits_they_are(network, style, width, signed):
    circuit = lower_network(network, width, style=style, signed=signed)
    prop = Sorts(signed=signed)
    lifting = lift_circuit(circuit, prop)
    assert lifting.lifted, lifting.failure
    assert_lifting_is_the_circuit(circuit, lifting, prop)
    verdict = LiftEngine().check(circuit, prop, Budget())
    assert verdict.status is (Status.REFUTED if circuit_breaks(circuit, prop) else Status.PROVED)
