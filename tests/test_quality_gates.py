"""Quality of explanations on hard cases, judged by references outside the package.

Gate circuits: one op flipped in a sorter lowered to gates (and-or, mux and
xor styles, 4 to 8 words of 3 or 4 bits) or in a counting sorter.  The
minimal counterexample must match a brute force by weight
(``tests/gate_reference.least_failing_weight``: the ops' truth tables and
``numpy.sort``), and a verified repair must be found whose circuit sorts
every input by the same reference, with the flipped gate among the first
three suspects.

Comparator networks: single-exception networks (exactly one unsorted 0-1
input fails, found by evaluating every 0-1 input with numpy here) must get
exactly that input; a 256-channel sorting network with one comparator
removed must get a proved-minimal counterexample, with nothing of smaller
measure failing (checked by the 0-1 principle, Knuth TAOCP vol. 3, 5.3.4,
on every input of smaller measure).
"""

from __future__ import annotations

import itertools
import time

import numpy as np
import pytest

from gate_reference import least_failing_weight, sorts_everywhere
from reference import run
from sortcheck.engines import Budget, check
from sortcheck.explain import minimize_network_counterexample
from sortcheck.explain.gate_minimal import minimize_circuit_counterexample
from sortcheck.explain.gate_repair import change_ops, repair_circuit
from sortcheck.model import ComparatorNetwork, Sorts
from sortcheck.model.circuit_builds import build_circuit
from sortcheck.model.families import build_family

FLIP = {"and": "or", "or": "and", "xor": "xnor", "xnor": "xor", "mux": "xor"}

#: (family, words, width, style, which flippable gates, as fractions of their list)
GATE_CASES = [
    ("merge-exchange", 4, 3, "and-or", (0.3, 0.7)),
    ("bitonic", 4, 4, "xor", (0.4, 0.8)),
    ("merge-exchange", 5, 3, "mux", (0.5, 0.9)),
    ("odd-even-transposition", 6, 3, "xor", (0.6,)),
    ("merge-exchange", 8, 3, "mux", (0.55,)),
    ("counting", 4, 3, None, (0.25, 0.75)),
    ("counting", 5, 3, None, (0.5,)),
]


def flipped_mutant(circuit, fraction):
    """The first mutant at or after ``fraction`` of the flippable gates that fails (by the reference) on an input
    of at most 4 one bits."""
    indices = [i for i, gate in enumerate(circuit.gates) if gate.op in FLIP]
    for index in indices[int(fraction * len(indices)):]:
        gate = circuit.gates[index]
        mutant = change_ops(circuit, {gate.out: FLIP[gate.op]})
        if least_failing_weight(mutant, up_to=4) is not None:
            return gate.out, mutant
    raise AssertionError("no breaking mutant")


@pytest.mark.parametrize("family, words, width, style, fractions", GATE_CASES)
def test_gate_mutants_get_minimal_counterexamples_and_verified_repairs(family, words, width, style, fractions):
    circuit = build_circuit(family, words, width, style=style)
    for fraction in fractions:
        flipped, mutant = flipped_mutant(circuit, fraction)
        verdict = check(mutant, Sorts())
        assert verdict.status.value == "refuted"
        example = minimize_circuit_counterexample(mutant, Sorts(), verdict.counterexample, Budget.of(60))
        assert example.minimal is True
        assert example.ones == least_failing_weight(mutant)
        outcome = repair_circuit(mutant, Sorts(), Budget.of(120))
        assert outcome.status == "repaired" and outcome.verified, outcome.reason
        assert outcome.network == circuit or sorts_everywhere(outcome.network)
        assert flipped in [suspect.gate for suspect in outcome.suspects[:3]]


def failing_zero_one_rows(network):
    """Indices (bit ``j`` of the index is channel ``j``) of the 0-1 inputs the network does not sort."""
    n = network.channels
    values = ((np.arange(1 << n)[:, None] >> np.arange(n)) & 1).astype(np.int8)
    expected = np.sort(values, axis=1)
    for a, b in network.comparators:
        low, high = np.minimum(values[:, a], values[:, b]), np.maximum(values[:, a], values[:, b])
        values[:, a], values[:, b] = low, high
    return np.flatnonzero((values != expected).any(axis=1))


@pytest.mark.parametrize("family, channels, removed", [
    ("bitonic", 16, 48), ("odd-even-transposition", 16, 113), ("insertion", 16, 42),
])
def test_single_exception_networks_get_their_one_failing_input(family, channels, removed):
    network = build_family(family, channels)
    broken = ComparatorNetwork(channels, network.comparators[:removed] + network.comparators[removed + 1:])
    failing = failing_zero_one_rows(broken)
    assert len(failing) == 1  # exactly one unsorted 0-1 input fails
    only = tuple(int(failing[0] >> j) & 1 for j in range(channels))
    verdict = check(broken, Sorts())
    example = minimize_network_counterexample(broken, Sorts(), verdict.counterexample, Budget.of(60))
    assert example.input == only and example.minimal is True
    assert run(broken.comparators, example.input) != sorted(example.input)


def sorted_everywhere_below(network, measure):
    """Whether every 0-1 input with fewer than ``measure`` ones, or fewer than ``measure`` zeros, comes out sorted.

    Evaluated here with numpy, one row per channel and one column per input.
    """
    n = network.channels
    for weight in range(measure):
        combos = list(itertools.combinations(range(n), weight))
        combos = np.array(combos, dtype=np.int64).reshape(len(combos), weight)
        for bit in (1, 0):
            wires = np.full((n, len(combos)), 1 - bit, dtype=np.int8)
            for column in range(weight):
                wires[combos[:, column], np.arange(len(combos))] = bit
            for a, b in network.comparators:
                low = np.minimum(wires[a], wires[b])
                wires[b] = np.maximum(wires[a], wires[b])
                wires[a] = low
            if (np.diff(wires, axis=0) < 0).any():
                return False
    return True


@pytest.mark.parametrize("removed", [300, 3838])
def test_a_256_channel_network_missing_one_comparator_gets_a_proved_minimal_counterexample(removed):
    network = build_family("merge-exchange", 256)
    broken = ComparatorNetwork(256, network.comparators[:removed] + network.comparators[removed + 1:])
    started = time.perf_counter()
    verdict = check(broken, Sorts(), timeout=60)
    assert verdict.status.value == "refuted"
    example = minimize_network_counterexample(broken, Sorts(), verdict.counterexample, Budget.of(60))
    seconds = time.perf_counter() - started
    print(f"256 channels, comparator {removed} removed: measure {example.ones}, proved in {seconds:.2f} s")
    assert example.minimal is True and example.ones >= 2
    assert run(broken.comparators, example.input) != sorted(example.input)
    # By the 0-1 principle it is enough that every 0-1 input of smaller measure is sorted.
    assert sorted_everywhere_below(broken, example.ones)
