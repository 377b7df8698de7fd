"""Tests of the sorting network families against outside references.

Sorting is checked with an evaluator written here (not the project's
engines): on all 0-1 inputs at once, one bit-packed integer per channel, and
on random integer inputs compared with Python's ``sorted``.  Sizes and depths
are checked against published formulas and tables, each named beside its use.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from sortcheck.errors import UsageError
from sortcheck.model.families import (
    FAMILIES, MAX_CHANNELS, bitonic, build_family, insertion, merge_exchange,
    odd_even_merge, odd_even_transposition, pairwise,
)
from sortcheck.model.network import ComparatorNetwork, restrict_to_outputs
from sortcheck.model.properties import Sorts

POWERS_OF_TWO = (1, 2, 4, 8, 16)
EXHAUSTIVE_CHANNELS = range(1, 21)


def family_cases(channel_counts):
    """(family name, n) pairs, bitonic only at powers of two."""
    return [(name, n) for name in FAMILIES for n in channel_counts
            if name != "bitonic" or n & (n - 1) == 0]


# --- an independent evaluator on all 0-1 inputs ---------------------------------

def input_masks(n: int) -> list[int]:
    """One integer per channel: bit ``x`` of channel ``i`` is bit ``i`` of input ``x``."""
    all_inputs = (1 << (1 << n)) - 1
    masks = []
    for i in range(n):
        block = 1 << i
        pattern = ((1 << block) - 1) << block  # block zeros, then block ones
        masks.append(pattern * (all_inputs // ((1 << (2 * block)) - 1)))
    return masks


def run_on_all_zero_one_inputs(comparators, n: int) -> list[int]:
    """Outputs of the comparators on all 2^n 0-1 inputs, as channel masks."""
    wires = input_masks(n)
    for a, b in comparators:
        wires[a], wires[b] = wires[a] & wires[b], wires[a] | wires[b]
    return wires


def sorted_masks_by_python_sorted(n: int) -> list[int]:
    """Channel masks of ``sorted(x)`` for every 0-1 input ``x``, one ``sorted`` call each."""
    masks = [0] * n
    for x in range(1 << n):
        for j, bit in enumerate(sorted((x >> i) & 1 for i in range(n))):
            masks[j] |= bit << x
    return masks


def sorted_masks_by_weight(n: int) -> list[int]:
    """Channel masks of the sorted 0-1 vectors: channel ``j`` is 1 iff weight >= n - j."""
    weights = np.bitwise_count(np.arange(1 << n, dtype=np.uint32))
    return [int.from_bytes(np.packbits(weights >= n - j, bitorder="little").tobytes(), "little")
            for j in range(n)]


def unsorted_inputs(outputs: list[int], expected: list[int]) -> int:
    """Mask of the inputs whose output differs from the expected one somewhere."""
    wrong = 0
    for got, want in zip(outputs, expected):
        wrong |= got ^ want
    return wrong


def first_unsorted_input(network: ComparatorNetwork) -> list[int] | None:
    """A 0-1 input the network does not sort, or None if it sorts them all."""
    n = network.channels
    expected = sorted_masks_by_python_sorted(n) if n <= 12 else sorted_masks_by_weight(n)
    wrong = unsorted_inputs(run_on_all_zero_one_inputs(network.comparators, n), expected)
    if wrong == 0:
        return None
    x = (wrong & -wrong).bit_length() - 1
    return [(x >> i) & 1 for i in range(n)]


def apply_comparators(comparators, values) -> list:
    """Run comparators on one input, written here independently of the model."""
    wires = list(values)
    for a, b in comparators:
        low, high = min(wires[a], wires[b]), max(wires[a], wires[b])
        wires[a], wires[b] = low, high
    return wires


def greedy_depth(comparators, n: int) -> int:
    """Depth of the earliest layering, computed here independently of the model."""
    ready = [0] * n
    for a, b in comparators:
        ready[a] = ready[b] = max(ready[a], ready[b]) + 1
    return max(ready)


# --- the evaluator itself --------------------------------------------------------

@pytest.mark.parametrize("n", range(1, 13))
def test_weight_rule_agrees_with_python_sorted(n):
    # The fast rule used above 12 channels must equal Python's sorted.
    assert sorted_masks_by_weight(n) == sorted_masks_by_python_sorted(n)


@pytest.mark.parametrize("n", range(1, 13))
def test_empty_network_leaves_2_to_the_n_minus_n_minus_1_inputs_unsorted(n):
    # A sorted 0-1 vector is 0^a 1^(n-a), a = 0..n, so n + 1 of the 2^n are sorted.
    outputs = run_on_all_zero_one_inputs((), n)
    wrong = unsorted_inputs(outputs, sorted_masks_by_python_sorted(n))
    assert bin(wrong).count("1") == 2 ** n - n - 1


def test_evaluator_finds_the_unsorted_input_of_a_broken_network():
    # (0, 1), (1, 2) only moves the largest value to channel 2: input 1 1 0 comes out 1 0 1.
    broken = ComparatorNetwork(3, ((0, 1), (1, 2)))
    counterexample = first_unsorted_input(broken)
    assert counterexample is not None
    assert apply_comparators(broken.comparators, counterexample) != sorted(counterexample)


@pytest.mark.parametrize("name, n", family_cases(range(2, 11)))
def test_dropping_the_last_comparator_breaks_every_family(name, n):
    # Shows the exhaustive check can fail on each family's own comparators.
    network = FAMILIES[name](n)
    truncated = ComparatorNetwork(n, network.comparators[:-1])
    assert first_unsorted_input(truncated) is not None


# --- every family sorts ---------------------------------------------------------

@pytest.mark.parametrize("name, n", family_cases(EXHAUSTIVE_CHANNELS))
def test_family_sorts_every_zero_one_input(name, n):
    # The 0-1 principle: sorting all 0-1 inputs means sorting all inputs.
    network = FAMILIES[name](n)
    assert first_unsorted_input(network) is None


@st.composite
def family_and_values(draw):
    name = draw(st.sampled_from(sorted(FAMILIES)))
    if name == "bitonic":
        n = 1 << draw(st.integers(0, 6))
    else:
        n = draw(st.integers(1, 64))
    values = draw(st.lists(st.integers(-8, 8), min_size=n, max_size=n))
    return name, values


@settings(max_examples=300, deadline=None)
@given(family_and_values())
def test_family_sorts_random_integers_with_duplicates(case):
    name, values = case
    network = FAMILIES[name](len(values))
    assert apply_comparators(network.comparators, values) == sorted(values)
    assert network.apply(values) == sorted(values)


@pytest.mark.parametrize("name", sorted(FAMILIES))
def test_family_metadata(name):
    network = build_family(name, 8)
    assert network.name == f"{name}-8"
    assert network.channels == 8
    assert network.claim == Sorts()
    assert network.description.endswith(".") and "8 channels" in network.description
    assert all(a < b for a, b in network.comparators)


# --- sizes and depths against published formulas -----------------------------

def batcher_size(t: int) -> int:
    # Knuth, TAOCP vol. 3, 5.3.4: Batcher's network for n = 2^t has (t^2 - t + 4) 2^(t-2) - 1 comparators.
    return (t * t - t + 4) * 2 ** t // 4 - 1


@pytest.mark.parametrize("t", range(0, 8))
def test_merge_exchange_size_and_depth_for_powers_of_two(t):
    # Knuth, TAOCP vol. 3, 5.3.4: size (t^2 - t + 4) 2^(t-2) - 1 and depth t(t+1)/2.
    network = merge_exchange(2 ** t)
    assert network.size == batcher_size(t)
    assert network.depth == greedy_depth(network.comparators, 2 ** t) == t * (t + 1) // 2


# Sizes of Batcher's merge exchange for n = 1..32, OEIS A006282 (values from memory).
A006282 = (0, 1, 3, 5, 9, 12, 16, 19, 26, 31, 37, 41, 48, 53, 59, 63,
           74, 82, 91, 97, 107, 114, 122, 127, 138, 146, 155, 161, 171, 178, 186, 191)


def test_remembered_a006282_agrees_with_the_power_of_two_formula():
    for t in range(0, 6):
        assert A006282[2 ** t - 1] == batcher_size(t)


@pytest.mark.parametrize("n", range(1, 33))
def test_merge_exchange_size_matches_a006282(n):
    assert merge_exchange(n).size == A006282[n - 1]


@pytest.mark.parametrize("t", range(0, 8))
def test_bitonic_size_and_depth(t):
    # Batcher's bitonic sorter on n = 2^t: n t (t+1) / 4 comparators, depth t(t+1)/2
    # (t(t+1)/2 layers of n/2 comparators; Knuth, TAOCP vol. 3, 5.3.4).
    n = 2 ** t
    network = bitonic(n)
    assert network.size == n * t * (t + 1) // 4
    assert network.depth == greedy_depth(network.comparators, n) == t * (t + 1) // 2


@pytest.mark.parametrize("t", range(0, 8))
def test_pairwise_matches_odd_even_merge_sort_for_powers_of_two(t):
    # Parberry 1992: the pairwise network has the size and depth of Batcher's odd-even
    # merge sort, (t^2 - t + 4) 2^(t-2) - 1 and t(t+1)/2 (Knuth, TAOCP vol. 3, 5.3.4).
    network = pairwise(2 ** t)
    assert network.size == batcher_size(t)
    assert network.depth == greedy_depth(network.comparators, 2 ** t) == t * (t + 1) // 2


@pytest.mark.parametrize("t", range(0, 8))
def test_odd_even_merge_size_and_depth_for_powers_of_two(t):
    # Batcher's odd-even merge sort on n = 2^t: (t^2 - t + 4) 2^(t-2) - 1 comparators and depth
    # t(t+1)/2 (Knuth, TAOCP vol. 3, 5.3.4).
    network = odd_even_merge(2 ** t)
    assert network.size == batcher_size(t)
    assert network.depth == greedy_depth(network.comparators, 2 ** t) == t * (t + 1) // 2


@pytest.mark.parametrize("n", range(1, 41))
def test_odd_even_transposition_size_and_depth(n):
    # n rounds of alternating adjacent comparators: n(n-1)/2 comparators in total
    # (Knuth, TAOCP vol. 3, 5.3.4).  Every comparator of a round shares a channel
    # with one of the previous round once n >= 3, so the depth is n; for n = 2 the
    # second round is empty (depth 1) and for n = 1 there is nothing (depth 0).
    network = odd_even_transposition(n)
    assert network.size == n * (n - 1) // 2
    assert network.depth == greedy_depth(network.comparators, n) == (n if n >= 3 else n - 1)


@pytest.mark.parametrize("n", range(1, 41))
def test_insertion_size_and_depth(n):
    # Knuth, TAOCP vol. 3, 5.3.4: the insertion network has n(n-1)/2 comparators and,
    # run in parallel, depth 2n - 3 for n >= 2.
    network = insertion(n)
    assert network.size == n * (n - 1) // 2
    assert network.depth == greedy_depth(network.comparators, n) == max(2 * n - 3, 0)


# Fewest comparators of a sorting network for n = 1..16 (values from memory):
# proven optimal for n <= 12 (OEIS A003075); for n = 13..16 these are the best
# known upper bounds, so going below them would be a new record, not a proof of
# error, but no classic family comes close.
BEST_KNOWN_SIZES = (0, 1, 3, 5, 9, 12, 16, 19, 25, 29, 35, 39, 45, 51, 56, 60)
# Optimal depth of a sorting network for n = 1..16, OEIS A067782 (values from memory).
OPTIMAL_DEPTHS = (0, 1, 3, 3, 5, 5, 6, 6, 7, 7, 8, 8, 9, 9, 9, 9)


@pytest.mark.parametrize("name, n", family_cases(range(1, 17)))
def test_no_family_beats_the_best_known_size_or_optimal_depth(name, n):
    network = FAMILIES[name](n)
    assert network.size >= BEST_KNOWN_SIZES[n - 1]
    assert network.depth >= OPTIMAL_DEPTHS[n - 1]


# --- pruning a sorting network to some outputs -------------------------------

def test_median_network_takes_the_median_of_every_zero_one_input():
    median = restrict_to_outputs(merge_exchange(9), [4])
    assert median.size < merge_exchange(9).size
    outputs = run_on_all_zero_one_inputs(median.comparators, 9)
    assert outputs[4] == sorted_masks_by_python_sorted(9)[4]


@settings(max_examples=300, deadline=None)
@given(st.lists(st.integers(-5, 5), min_size=9, max_size=9))
def test_median_network_takes_the_median_of_random_integers(values):
    median = restrict_to_outputs(merge_exchange(9), [4])
    assert apply_comparators(median.comparators, values)[4] == sorted(values)[4]


@pytest.mark.parametrize("count", range(1, 10))
def test_selector_puts_the_smallest_values_first_in_order(count):
    selector = restrict_to_outputs(merge_exchange(10), range(count))
    outputs = run_on_all_zero_one_inputs(selector.comparators, 10)
    assert outputs[:count] == sorted_masks_by_python_sorted(10)[:count]


@settings(max_examples=200, deadline=None)
@given(st.integers(1, 16), st.data())
def test_selector_on_random_integers(count, data):
    values = data.draw(st.lists(st.integers(-5, 5), min_size=16, max_size=16))
    selector = restrict_to_outputs(pairwise(16), range(count))
    assert apply_comparators(selector.comparators, values)[:count] == sorted(values)[:count]


# --- build_family errors ----------------------------------------------------------

def test_build_family_names_the_power_of_two_rule():
    with pytest.raises(UsageError, match=r"^bitonic needs a power of two, got 12$"):
        build_family("bitonic", 12)


def test_build_family_lists_the_known_families_for_an_unknown_one():
    with pytest.raises(UsageError) as raised:
        build_family("shell", 8)
    message = str(raised.value)
    assert "'shell'" in message
    assert all(name in message for name in FAMILIES)


@pytest.mark.parametrize("n", [0, -1, -16])
def test_build_family_rejects_fewer_than_one_channel(n):
    with pytest.raises(UsageError, match=rf"^insertion needs at least 1 channel, got {n}$"):
        build_family("insertion", n)


@pytest.mark.parametrize("n", [MAX_CHANNELS + 1, 2 ** 17, 10 ** 9])
def test_build_family_rejects_more_than_65536_channels(n):
    assert MAX_CHANNELS == 65536
    with pytest.raises(UsageError, match=rf"^merge-exchange is limited to 65536 channels, got {n}$"):
        build_family("merge-exchange", n)


@pytest.mark.parametrize("n", ["8", 8.0, True, None])
def test_build_family_rejects_a_channel_count_that_is_not_an_integer(n):
    with pytest.raises(UsageError, match="pairwise needs an integer channel count"):
        build_family("pairwise", n)


@pytest.mark.parametrize("name", sorted(FAMILIES))
def test_build_family_equals_the_builder(name):
    assert build_family(name, 16) == FAMILIES[name](16)
