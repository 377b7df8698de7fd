"""The least failing input found over the counts of ones of the proved sorting parts, against brute force.

Every check compares with an evaluation of all 2^n 0-1 inputs written here (numpy, bit-sliced), and the
witnesses are run through ``tests/reference.py`` (comparators applied value by value, judged with ``sorted``).
The networks are Batcher's merge exchange and bitonic sorters (Knuth, TAOCP vol. 3, 5.3.4) with comparators
removed.
"""

from __future__ import annotations

import functools
import time

import numpy as np
import pytest

from sortcheck.engines import Budget, check
from sortcheck.explain import minimal_structure
from sortcheck.explain.minimal import minimize_network_counterexample
from sortcheck.explain.minimal_structure import search_by_structure
from sortcheck.model import ComparatorNetwork, Selects, Sorts
from sortcheck.model.families import bitonic, merge_exchange
from reference import breaks, run


def all_inputs(n: int) -> list[np.ndarray]:
    """Channel c of input i holds bit c of i: one uint64 row per channel, input i in lane i % 64 of word i // 64
    (written for this test)."""
    words = np.arange(1 << (n - 6), dtype=np.uint64)
    rows = []
    for channel in range(n):
        if channel < 6:
            mask = sum(1 << lane for lane in range(64) if lane >> channel & 1)
            rows.append(np.full(words.shape, mask, dtype=np.uint64))
        else:
            rows.append(np.where(words >> np.uint64(channel - 6) & np.uint64(1), ~np.uint64(0), np.uint64(0)))
    return rows


@functools.lru_cache(maxsize=None)
def least_failing_measure(network: ComparatorNetwork, prop) -> int:
    """Over every 0-1 input: the fewest ones or zeros of one whose outputs break ``prop`` (n + 1 if none)."""
    n = network.channels
    wires = all_inputs(n)
    for a, b in network.comparators:  # min to a, max to b (b < a: a descending comparator)
        wires[a], wires[b] = wires[a] & wires[b], wires[a] | wires[b]
    failing = np.zeros_like(wires[0])
    if isinstance(prop, Sorts) and prop.order == "ascending":
        for k in range(n - 1):
            failing |= wires[k] & ~wires[k + 1]
    elif isinstance(prop, Sorts):
        for k in range(n - 1):
            failing |= wires[k + 1] & ~wires[k]
    else:  # selects t, unsorted: a 1 among the first t outputs while a 0 lies after them
        first = np.bitwise_or.reduce(wires[:prop.count])
        rest = np.bitwise_and.reduce(wires[prop.count:])
        failing = first & ~rest
    words = np.flatnonzero(failing)  # only words holding a failing input are looked into, input by input
    best = n + 1
    for word in words:
        for lane in range(64):
            if int(failing[word]) >> lane & 1:
                ones = bin(int(word) * 64 + lane).count("1")
                best = min(best, ones, n - ones)
    return best


def without(network: ComparatorNetwork, *indices: int) -> ComparatorNetwork:
    return ComparatorNetwork(network.channels, tuple(c for i, c in enumerate(network.comparators) if i not in indices))


def descending(network: ComparatorNetwork) -> ComparatorNetwork:
    """The same network with every comparator turned round: it sorts descending."""
    return ComparatorNetwork(network.channels, tuple((b, a) for a, b in network.comparators))


def structural(network: ComparatorNetwork, prop) -> tuple[tuple[int, ...], int]:
    example = check(network, prop, engine="sat").counterexample
    assert example is not None
    found = search_by_structure(network, prop, 0, tuple(example.input), Budget())
    assert found is not None
    return found


CASES = ([(merge_exchange(16), (i,)) for i in (0, 7, 20, 33, 45, 58)]
         + [(merge_exchange(20), (i,)) for i in (11, 40, 70)]
         + [(merge_exchange(24), (90,))]
         + [(merge_exchange(16), (3, 50))]
         + [(bitonic(16), (i,)) for i in (0, 17, 35, 60, 79)])


@pytest.mark.parametrize("network, removed", CASES, ids=lambda v: getattr(v, "name", str(v)))
@pytest.mark.parametrize("sat", [False, True], ids=["enumerated", "sat"])
def test_the_minimum_over_part_counts_is_the_least_failing_measure(network, removed, sat, monkeypatch):
    if sat:  # the solver path, on networks small enough to brute-force
        monkeypatch.setattr(minimal_structure, "ENUMERATION_LIMIT", 0)
    broken = without(network, *removed)
    found, covered = structural(broken, Sorts())
    expected = least_failing_measure(broken, Sorts())
    assert covered == expected == min(sum(found), len(found) - sum(found))
    assert breaks(Sorts(), list(found), run(broken.comparators, found))


@pytest.mark.parametrize("removed", [4, 30])
def test_descending_sorters(removed):
    broken = descending(without(merge_exchange(16), removed))
    found, covered = structural(broken, Sorts("descending"))
    assert covered == least_failing_measure(broken, Sorts("descending"))
    assert breaks(Sorts("descending"), list(found), run(broken.comparators, found))


@pytest.mark.parametrize("removed", [4, 20])
def test_selection(removed):
    selects = Selects(4)
    broken = without(merge_exchange(16), removed)
    found, covered = structural(broken, selects)
    assert covered == least_failing_measure(broken, selects)
    assert breaks(selects, list(found), run(broken.comparators, found))


def test_minimize_uses_the_parts_beyond_the_weight_search():
    broken = without(merge_exchange(16), 45)
    first = check(broken, Sorts(), engine="sat").counterexample
    example = minimize_network_counterexample(broken, Sorts(), first, Budget.of(60), max_vectors=0)
    assert example.minimal and example.ones == least_failing_measure(broken, Sorts())


@pytest.mark.parametrize("removed", [1000, 3000])
def test_merge_exchange_256_gets_a_proved_minimum(removed):
    broken = without(merge_exchange(256), removed)
    first = check(broken, Sorts(), engine="sat").counterexample
    started = time.perf_counter()
    example = minimize_network_counterexample(broken, Sorts(), first, Budget.of(120))
    print(f"merge exchange 256 without {removed}: measure {example.ones}, minimal {example.minimal}, "
          f"{time.perf_counter() - started:.2f} s")
    assert example.minimal
    assert breaks(Sorts(), list(example.input), run(broken.comparators, example.input))
    assert example.ones == min(sum(example.input), 256 - sum(example.input))
