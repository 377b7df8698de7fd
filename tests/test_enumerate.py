"""The enumerate engine against an independent evaluator built on Python's ``sorted``.

The reference here applies the network value by value and judges the outputs
with ``sorted`` alone; it shares no code with the engine, the bit-sliced
conditions or ``sortcheck.model.semantics``.
"""

from __future__ import annotations

import itertools
import random

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from sortcheck.engines import Budget, Options, Status, StopReason, check
from sortcheck.engines.networks.bitslice import AllVectors, MergeInputs, apply_network, at_least, failure_mask
from sortcheck.engines.networks.enumeration import EnumerateEngine
from sortcheck.model import ComparatorNetwork, Merges, Sorts
from sortcheck.model.families import build_family
from reference import breaks, run
from strategies import nearly_sorting, networks, properties_for, reference_holds


def zero_one_inputs(n):
    return itertools.product((0, 1), repeat=n)


def assert_agrees(network, prop):
    verdict = check(network, prop, engine="enumerate")
    expected = reference_holds(network, prop)
    assert verdict.status == (Status.PROVED if expected else Status.REFUTED), (network, prop)
    if not expected:
        example = verdict.counterexample
        assert list(example.output) == run(network.comparators, example.input)
        assert breaks(prop, list(example.input), list(example.output))
        assert set(example.input) <= {0, 1}


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(networks(), st.data())
def test_random_networks_agree_with_sorted(network, data):
    prop = data.draw(st.sampled_from(properties_for(network.channels)))
    assert_agrees(network, prop)


@settings(max_examples=100, deadline=None)
@given(nearly_sorting(), st.data())
def test_mutated_sorters_agree_with_sorted(network, data):
    prop = data.draw(st.sampled_from(properties_for(network.channels)))
    assert_agrees(network, prop)


@pytest.mark.parametrize("n", [1, 2, 5, 6, 7, 12])
def test_every_property_of_a_sorter_holds(n):
    network = build_family("merge-exchange", n)
    for prop in properties_for(n):
        if isinstance(prop, Sorts) and prop.order == "descending" and n > 1:
            assert check(network, prop).status == Status.REFUTED
        else:
            assert check(network, prop).status == Status.PROVED, prop


def test_unsorted_zero_one_vectors_number_two_to_the_n_minus_n_minus_one():
    # A 0-1 vector is sorted exactly when it is 0^a 1^(n-a): n + 1 of the 2^n vectors.
    for n in range(1, 15):
        source = AllVectors(n, block_words=8)
        failing = 0
        for number in range(source.blocks):
            rows = [np.empty(source.words, dtype=np.uint64) for _ in range(n)]
            block = source.fill(number, rows)
            mask = failure_mask(Sorts(), rows)
            bits = np.unpackbits(mask.view(np.uint8), bitorder="little")[:block.vectors]
            failing += int(bits.sum())
        assert failing == 2 ** n - n - 1


def test_all_vectors_source_holds_every_vector_once_in_index_order():
    n = 13
    source = AllVectors(n, block_words=16)
    seen = []
    for number in range(source.blocks):
        rows = [np.empty(source.words, dtype=np.uint64) for _ in range(n)]
        block = source.fill(number, rows)
        bits = [np.unpackbits(row.view(np.uint8), bitorder="little") for row in rows]
        for lane in range(block.vectors):
            seen.append(sum(int(bits[channel][lane]) << channel for channel in range(n)))
    assert seen == list(range(2 ** n))


@pytest.mark.parametrize("n, split", [(2, 1), (7, 3), (9, 1), (10, 5), (12, 11)])
def test_merge_inputs_are_exactly_the_vectors_with_two_ascending_runs(n, split):
    source = MergeInputs(n, split, block_words=1)
    produced = []
    for number in range(source.blocks):
        rows = [np.empty(source.words, dtype=np.uint64) for _ in range(n)]
        block = source.fill(number, rows)
        bits = [np.unpackbits(row.view(np.uint8), bitorder="little") for row in rows]
        produced += [tuple(int(bits[c][lane]) for c in range(n)) for lane in range(block.vectors)]
        assert [source.vector(block.start + lane) for lane in range(block.vectors)] == produced[-block.vectors:]
    expected = {v for v in zero_one_inputs(n)
                if list(v[:split]) == sorted(v[:split]) and list(v[split:]) == sorted(v[split:])}
    assert len(produced) == len(expected) == (split + 1) * (n - split + 1)
    assert set(produced) == expected


def test_at_least_matches_popcount():
    rng = np.random.default_rng(7)
    for count in (1, 2, 5, 8, 17):
        rows = [rng.integers(0, 2 ** 63, size=4, dtype=np.uint64) * 2 + rng.integers(0, 2, size=4, dtype=np.uint64)
                for _ in range(count)]
        bits = np.array([np.unpackbits(r.view(np.uint8), bitorder="little") for r in rows])
        ones = bits.sum(axis=0)
        for threshold in range(0, count + 2):
            got = np.unpackbits(at_least(rows, threshold).view(np.uint8), bitorder="little")
            assert (got == (ones >= threshold)).all(), (count, threshold)


def test_apply_network_matches_value_evaluation_on_random_blocks():
    rng = random.Random(3)
    network = build_family("merge-exchange", 10)
    comparators = [tuple(rng.sample(range(10), 2)) for _ in range(25)]
    rows = [np.array([rng.getrandbits(64) for _ in range(3)], dtype=np.uint64) for _ in range(10)]
    bits = [np.unpackbits(r.view(np.uint8), bitorder="little") for r in rows]
    apply_network(rows, comparators + list(network.comparators), np.empty(3, dtype=np.uint64))
    out_bits = [np.unpackbits(r.view(np.uint8), bitorder="little") for r in rows]
    for lane in range(192):
        vector = [int(bits[c][lane]) for c in range(10)]
        assert run(comparators + list(network.comparators), vector) == [int(out_bits[c][lane]) for c in range(10)]


def test_a_deep_single_fault_on_24_channels_is_found():
    network = build_family("merge-exchange", 24)
    for index in (network.size // 2, network.size - 1):
        broken = ComparatorNetwork(24, network.comparators[:index] + network.comparators[index + 1:])
        verdict = check(broken, Sorts())
        assert verdict.status == Status.REFUTED
        example = verdict.counterexample
        assert run(broken.comparators, example.input) == list(example.output) != sorted(example.input)


def test_reversed_comparators_are_understood():
    # (1, 0) puts the larger value on channel 1's partner: channel 1 gets the min.
    network = ComparatorNetwork(2, ((1, 0),))
    assert check(network, Sorts(order="descending")).status == Status.PROVED
    verdict = check(network, Sorts())
    assert verdict.status == Status.REFUTED
    assert verdict.counterexample.input == (1, 0) and verdict.counterexample.output == (1, 0)


def test_a_timeout_gives_unknown_with_what_was_covered():
    # Without the reduction (which proves this network in milliseconds) 2^30 inputs take seconds.
    network = build_family("merge-exchange", 30)
    verdict = EnumerateEngine(reduction=False).check(network, Sorts(), Budget.of(0.01))
    assert verdict.status == Status.UNKNOWN and verdict.stop == StopReason.TIMEOUT
    assert verdict.figures["vectors_evaluated"] < 2 ** 30
    assert "nothing is proved" in verdict.scope


def test_beyond_the_size_limit_the_engine_refuses_and_points_to_sat():
    # One layer of 4 disjoint comparators on 11 channels: each pair leaves 3 of its 4 0-1 values, the 3 other
    # channels 2, so 3^4 * 2^3 = 648 vectors remain (counted by hand), and nothing reduces them further.
    layer = ComparatorNetwork(11, ((0, 1), (2, 3), (4, 5), (6, 7)))
    verdict = EnumerateEngine(max_vectors=2 ** 9).check(layer, Sorts(), Budget())
    assert verdict.status == Status.UNKNOWN and verdict.stop == StopReason.SIZE_LIMIT
    assert "2^11" in verdict.scope and "648 vectors left after the reduction" in verdict.scope
    assert "2^9" in verdict.scope and "SAT" in verdict.scope
    assert EnumerateEngine(max_vectors=2 ** 10).check(layer, Sorts(), Budget()).status == Status.REFUTED
    # Merge exchange 11 (a sorter: Knuth, TAOCP vol. 3, 5.3.4): its first layer alone would leave 648 vectors,
    # but the reduction through the whole network leaves fewer than 2^9, so the same limit admits it.
    verdict = EnumerateEngine(max_vectors=2 ** 9).check(build_family("merge-exchange", 11), Sorts(), Budget())
    assert verdict.status == Status.PROVED and verdict.figures["vectors_after_reduction"] <= 2 ** 9
    # A merge check needs only (m+1)(n-m+1) inputs, so the same limit admits many more channels.
    engine = EnumerateEngine(max_vectors=2 ** 10)
    assert engine.check(build_family("merge-exchange", 40), Merges(split=20), Budget()).status == Status.PROVED


def test_the_limit_looks_at_what_the_reduction_leaves():
    # Merge exchange 36: its first layer's bound is 21,743,271,936 vectors, beyond the default 2^34, but the
    # reduction leaves 144; counting failing inputs then counts none (it sorts: Knuth, TAOCP vol. 3, 5.3.4).
    network = build_family("merge-exchange", 36)
    verdict = check(network, Sorts(), engine="enumerate", options=Options(count=True))
    assert verdict.status == Status.PROVED and verdict.figures["failing_inputs"] == 0
    assert verdict.figures["vectors_after_reduction"] == 144


def test_default_limit_refuses_large_networks_without_running():
    # 32 disjoint comparators on 64 channels leave 3^32 vectors, beyond 2^34 whatever the reduction does.
    layer = ComparatorNetwork(64, tuple((2 * k, 2 * k + 1) for k in range(32)))
    verdict = check(layer, Sorts(), engine="enumerate")
    assert verdict.status == Status.UNKNOWN and verdict.stop == StopReason.SIZE_LIMIT
    assert verdict.seconds < 5


def test_auto_hands_networks_beyond_enumeration_to_sat():
    verdict = check(build_family("merge-exchange", 128), Sorts())
    assert verdict.status == Status.PROVED and verdict.engine == "sat"
    assert "sat" in verdict.engine_reason


def test_mergers_of_many_channels_are_cheap():
    network = build_family("bitonic", 256)
    assert check(network, Merges(split=128)).status == Status.PROVED
    assert check(network, Merges(split=100)).status == Status.PROVED
