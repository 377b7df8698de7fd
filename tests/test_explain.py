"""Minimal counterexamples, shrinking, traces and diagnoses, checked by brute force with Python's ``sorted``."""

from __future__ import annotations

import itertools

import numpy as np

from hypothesis import given, settings, strategies as st

from sortcheck.engines import Budget, Status, check
from sortcheck.explain import diagnose_network, minimize_network_counterexample, permutation_of, trace_network
from sortcheck.explain.shrink import shrink, word_measure, zero_one_measure, ZERO_ONE_PASSES
from sortcheck.model import ComparatorNetwork, Merges, Sorts
from sortcheck.model.families import build_family
from reference import breaks, run
from strategies import networks, nearly_sorting, properties_for


def brute_force_minimum(network, prop):
    """The least measure (ones or zeros, whichever fewer) over all failing 0-1 inputs, or None."""
    measures = [min(sum(v), len(v) - sum(v)) for v in itertools.product((0, 1), repeat=network.channels)
                if breaks(prop, list(v), run(network.comparators, v))]
    return min(measures, default=None)


def minimized(network, prop):
    verdict = check(network, prop, engine="enumerate")
    if verdict.status != Status.REFUTED:
        return None
    return minimize_network_counterexample(network, prop, verdict.counterexample, Budget())


@settings(max_examples=120, deadline=None)
@given(st.one_of(networks(max_channels=10), nearly_sorting()), st.data())
def test_the_reported_counterexample_is_minimal(network, data):
    prop = data.draw(st.sampled_from(properties_for(network.channels)))
    example = minimized(network, prop)
    expected = brute_force_minimum(network, prop)
    if example is None:
        assert expected is None
        return
    assert example.minimal is True
    assert example.ones == zero_one_measure(example.input) == expected
    assert run(network.comparators, example.input) == list(example.output)
    assert breaks(prop, list(example.input), list(example.output))
    if not isinstance(prop, Merges) or sorted(example.permutation) == list(example.permutation):
        # The permutation has the same order pattern, so it fails too (0-1 principle, Knuth TAOCP 5.3.4);
        # for merges it is only an input in scope when its runs stay ascending.
        permutation = list(example.permutation)
        assert sorted(permutation) == list(range(network.channels))
        assert breaks(prop, permutation, run(network.comparators, permutation))


def test_single_exception_network_has_its_one_counterexample_found():
    # Remove the last comparator of a sorting network: it then fails on few inputs, which must be found
    # and be minimal.
    network = build_family("merge-exchange", 12)
    broken = ComparatorNetwork(12, network.comparators[:-1])
    example = minimized(broken, Sorts())
    assert example.ones == brute_force_minimum(broken, Sorts())


def test_minimal_counterexamples_on_24_channels_match_exhaustive_enumeration():
    network = build_family("merge-exchange", 24)
    for index in (30, 77, 120):
        broken = ComparatorNetwork(24, network.comparators[:index] + network.comparators[index + 1:])
        example = minimized(broken, Sorts())
        assert example.minimal
        assert breaks(Sorts(), list(example.input), run(broken.comparators, example.input))
        assert example.ones == least_failing_measure_of_all(broken)


def least_failing_measure_of_all(network):
    """Every one of the 2^n 0-1 inputs, evaluated bit-sliced here (64 inputs per word, written for this
    test): the fewest ones or zeros of an input the network does not sort ascending."""
    n = network.channels
    words = np.arange(1 << max(0, n - 6), dtype=np.uint64)
    lanes = np.arange(64, dtype=np.uint64)
    wires = []
    for channel in range(n):  # input index = word * 64 + lane; bit `channel` of the index is the channel's value
        if channel < 6:
            mask = sum(1 << int(lane) for lane in lanes if (int(lane) >> channel) & 1)
            wires.append(np.full(words.shape, mask, dtype=np.uint64))
        else:
            wires.append(np.where((words >> np.uint64(channel - 6)) & np.uint64(1), ~np.uint64(0), np.uint64(0)))
    for a, b in network.comparators:
        wires[a], wires[b] = wires[a] & wires[b], wires[a] | wires[b]
    failing = np.zeros(words.shape, dtype=np.uint64)
    for k in range(n - 1):
        failing |= wires[k] & ~wires[k + 1]
    word_weights = np.array([bin(int(w)).count("1") for w in words])
    best = n
    for lane in range(64):
        selected = ((failing >> np.uint64(lane)) & np.uint64(1)).astype(bool)
        if selected.any():
            ones = word_weights[selected] + bin(lane).count("1")
            best = min(best, int(np.minimum(ones, n - ones).min()))
    return best


def test_shrink_passes_reach_a_local_minimum():
    fails = lambda v: v[2] == 1 and v[5] == 0  # noqa: E731
    result = shrink((1, 1, 1, 0, 1, 0, 1, 0), fails, ZERO_ONE_PASSES)
    assert fails(result) and zero_one_measure(result) == 1
    assert word_measure((5, 0, -1), width=3) == 2 + 0 + 3


def test_trace_follows_the_network_layer_by_layer():
    network = build_family("bitonic", 8)
    values = [7, 3, 5, 1, 0, 6, 2, 4]
    trace = trace_network(network, values)
    assert trace.values[0] == tuple(values) and list(trace.values[-1]) == sorted(values)
    wires = list(values)
    for layer, members in enumerate(network.layers):
        before = list(wires)
        for a, b in members:
            if wires[a] > wires[b]:
                wires[a], wires[b] = wires[b], wires[a]
        assert list(trace.values[layer + 1]) == wires
        assert len(trace.swaps[layer]) == sum(1 for a, b in members if before[a] > before[b])


@settings(max_examples=80, deadline=None)
@given(nearly_sorting())
def test_diagnosis_names_an_out_of_order_pair_that_never_moves_after_the_sealing_comparator(network):
    verdict = check(network, Sorts())
    if verdict.status != Status.REFUTED:
        return
    inputs = list(verdict.counterexample.input)
    diagnosis = diagnose_network(network, Sorts(), inputs)
    first, second = diagnosis.outputs
    permutation = permutation_of(inputs)
    outputs = run(network.comparators, permutation)
    assert first < second and outputs[first] > outputs[second]
    assert permutation[diagnosis.inputs[0]] == outputs[first] and permutation[diagnosis.inputs[1]] == outputs[second]
    sealed = diagnosis.sealed_at if diagnosis.sealed_at is not None else -1
    wires = list(permutation)
    for index, (a, b) in enumerate(network.comparators):
        if wires[a] > wires[b]:
            if index > sealed:
                assert {wires[a], wires[b]}.isdisjoint({outputs[first], outputs[second]})
            wires[a], wires[b] = wires[b], wires[a]
