"""The sat engine's step through independent sorting sub-networks, against exhaustive references.

References: ``tests/reference.py`` (comparators applied value by value, each
property's definition with Python's ``sorted``) over every 0-1 input, and,
from 13 channels on, the enumerate engine (every 0-1 input, bit-parallel).
Every counterexample is replayed with ``tests/reference.py``.  That Parberry's
pairwise network sorts is Parberry, "The pairwise sorting network", Parallel
Processing Letters 2 (1992).
"""

from __future__ import annotations

import itertools
import random

import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from sortcheck.engines import check
from sortcheck.engines.base import Budget, Status
from sortcheck.engines.networks.blocks import Reachable, find_blocks
from sortcheck.engines.networks.split import SortedParts
from sortcheck.engines.networks.sat import SatEngine
from sortcheck.model import ComparatorNetwork, Sorts
from sortcheck.model.families import insertion, merge_exchange, pairwise
from reference import breaks, run
from strategies import networks, properties_for, reference_holds


class NoSampling(SatEngine):
    """The engine without its random vectors before the solver, so failures must be found by the steps proper."""

    def _sample(self, *arguments):
        return None


#: Every question goes past enumeration of all sorted vectors: to the block step, else to the solver.
STEPPED = NoSampling(enumeration_limit=0, simulation_rounds=0)


def expected_holds(network, prop):
    if network.channels <= 12:
        return reference_holds(network, prop)
    return check(network, prop, engine="enumerate").status == Status.PROVED


def assert_right(network, prop, engine=STEPPED):
    verdict = engine.check(network, prop, Budget())
    assert verdict.status == (Status.PROVED if expected_holds(network, prop) else Status.REFUTED), network
    if verdict.status == Status.REFUTED:
        example = list(verdict.counterexample.input)
        assert set(example) <= {0, 1}
        assert breaks(prop, example, run(network.comparators, example))
    return verdict


def mutations(network):
    """The network with each comparator removed, and with each reversed."""
    comparators = network.comparators
    for index, (a, b) in enumerate(comparators):
        yield ComparatorNetwork(network.channels, comparators[:index] + comparators[index + 1:])
        yield ComparatorNetwork(network.channels, comparators[:index] + ((b, a),) + comparators[index + 1:])


# -- the pieces ------------------------------------------------------------------------------------------------

@st.composite
def partitions(draw, channels):
    """Channels in a random order cut into consecutive runs: disjoint groups, not necessarily contiguous."""
    order = draw(st.permutations(channels))
    cuts = sorted(draw(st.sets(st.integers(1, len(order) - 1), max_size=len(order) - 1))) if len(order) > 1 else []
    bounds = [0, *cuts, len(order)]
    return [tuple(sorted(order[i:j])) for i, j in zip(bounds, bounds[1:])]


@settings(max_examples=60, deadline=None)
@given(st.integers(1, 8).flatmap(lambda n: st.tuples(partitions(range(n)), partitions(range(n)),
                                                     st.lists(st.sampled_from(["ascending", "descending"]),
                                                              min_size=n, max_size=n))))
def test_reachable_counts_and_witnesses_match_brute_force(case):
    sources, blocks, orders = case
    groups = [(members, order) for members, order in zip(sources, orders)]
    parts = SortedParts(groups)
    n = sum(len(members) for members in sources)
    brute = {}
    for index in range(parts.total):
        vector = parts.vector(index, n)
        brute.setdefault(tuple(sum(vector[c] for c in block) for block in blocks), vector)
    reach = Reachable(groups, blocks)
    found = {tuple(int(c) for c in counts) for counts in zip(*reach.counts())}
    assert found == set(brute) and reach.total == len(brute)
    for counts in brute:
        vector = parts.vector_of_ones(reach.witness(counts), n)
        assert tuple(sum(vector[c] for c in block) for block in blocks) == counts
    unreachable = [c for c in itertools.product(*(range(len(b) + 1) for b in blocks)) if c not in brute]
    for counts in unreachable[:3]:
        with pytest.raises(ValueError):
            reach.witness(counts)


@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(networks(max_channels=8, max_size=24, min_channels=2))
def test_blocks_are_disjoint_sub_networks_in_an_equivalent_order(network):
    blocks = find_blocks(network.comparators, range(network.channels))
    if blocks is None:
        return
    assert sorted(c for channels in blocks.channels for c in channels) == list(range(network.channels))
    for channels, members in zip(blocks.channels, blocks.members):
        assert all(set(network.comparators[p]) <= set(channels) for p in members)
    order = [p for members in blocks.members for p in members] + list(blocks.after)
    assert sorted(order) == list(range(network.size))
    if blocks.after:  # the first comparator after the blocks joins two of them
        a, b = network.comparators[blocks.after[0]]
        assert not any({a, b} <= set(channels) for channels in blocks.channels)
    reordered = [network.comparators[p] for p in order]
    for vector in itertools.product((0, 1), repeat=network.channels):
        assert run(reordered, vector) == run(network.comparators, vector)


def test_pairwise_splits_into_its_interleaved_halves():
    network = pairwise(16)
    blocks = find_blocks(network.comparators[8:], range(16))  # the first layer is the 8 pairs (2i, 2i+1)
    assert set(blocks.channels) == {tuple(range(0, 16, 2)), tuple(range(1, 16, 2))}


# -- pairwise networks and their mutations ----------------------------------------------------------------------

@pytest.mark.parametrize("n", range(2, 21))
def test_pairwise_networks_are_proved(n):
    verdict = assert_right(pairwise(n), Sorts())
    if n >= 6:  # the solver still refutes parts of the split that do not sort; the property needs no solver
        assert verdict.figures["sub_networks_proved"] >= 2


@pytest.mark.parametrize("n", [5, 8, 11, 12, 16])
def test_every_single_mutation_of_small_pairwise_networks(n):
    decided = set()
    for broken in mutations(pairwise(n)):
        verdict = assert_right(broken, Sorts())
        decided.add((verdict.status, verdict.figures["decided"]))
    assert (Status.REFUTED, "split") in decided  # some failures are traced back through the sub-networks


@pytest.mark.parametrize("n", [19, 20])
def test_mutations_of_pairwise_networks_up_to_20_channels(n):
    for broken in itertools.islice(mutations(pairwise(n)), n % 2, None, 5):  # every fifth, removed and reversed
        assert_right(broken, Sorts())


@pytest.mark.parametrize("n", [8, 13, 16])
def test_reversed_pairwise_networks_sort_descending_through_descending_sub_networks(n):
    reversed_network = ComparatorNetwork(n, tuple((b, a) for a, b in pairwise(n).comparators))
    verdict = assert_right(reversed_network, Sorts(order="descending"))
    assert verdict.status == Status.PROVED and verdict.figures["sub_networks_proved"] >= 2
    assert assert_right(reversed_network, Sorts()).status == Status.REFUTED


@settings(max_examples=40, deadline=None)
@given(st.integers(3, 9), st.data())
def test_every_property_on_pairwise_and_mutated_pairwise(n, data):
    network = data.draw(st.sampled_from([pairwise(n), *mutations(pairwise(n))]))
    assert_right(network, data.draw(st.sampled_from(properties_for(n))))


# -- sorters on scattered channels, between random comparators ----------------------------------------------------

def scattered_network(seed):
    """Random comparators, then sorters on random disjoint channel sets (some descending), then more comparators.

    Returns the network and whether its last stage is a full sorter (then the whole network sorts).
    """
    rng = random.Random(seed)
    n = rng.randint(5, 10)
    channels = list(range(n))
    rng.shuffle(channels)
    cut = rng.randint(2, n - 2)
    comparators = [tuple(rng.sample(range(n), 2)) for _ in range(rng.randint(0, 4))]
    for subset in (sorted(channels[:cut]), sorted(channels[cut:])):
        sorter = rng.choice([insertion, merge_exchange, pairwise])(len(subset))
        descending = rng.random() < 0.3
        comparators += [(subset[b], subset[a]) if descending else (subset[a], subset[b])
                        for a, b in sorter.comparators]
    sorts = rng.random() < 0.5
    if sorts:
        comparators += list(insertion(n).comparators)
    else:
        comparators += [tuple(sorted(rng.sample(range(n), 2))) for _ in range(rng.randint(1, 3 * n))]
    return ComparatorNetwork(n, tuple(comparators)), sorts


@pytest.mark.parametrize("seed", range(30))
def test_sorters_on_scattered_channel_sets(seed):
    network, sorts = scattered_network(seed)
    verdict = assert_right(network, Sorts())
    assert verdict.status == (Status.PROVED if sorts else verdict.status)


def test_the_step_is_used_on_scattered_sorters():
    used = sum(STEPPED.check(network, Sorts(), Budget()).figures["sub_networks_proved"] > 0
               for network, _ in map(scattered_network, range(30)))
    assert used >= 10


# -- large networks -----------------------------------------------------------------------------------------------

def test_large_pairwise_is_proved_without_the_solver():
    for n in (256, 300):
        verdict = SatEngine().check(pairwise(n), Sorts(), Budget.of(60))
        assert verdict.status == Status.PROVED, verdict.scope
        assert verdict.figures["sat_calls"] == 0 and verdict.figures["sub_networks_proved"] >= 2
        assert "independent sub-networks" in verdict.scope


def test_large_broken_pairwise_is_refuted_through_the_sub_networks():
    network = pairwise(256)
    index = network.size - 200  # in the final merging phase: the halves still sort, the merge does not
    broken = ComparatorNetwork(256, network.comparators[:index] + network.comparators[index + 1:])
    verdict = NoSampling(simulation_rounds=0).check(broken, Sorts(), Budget.of(60))
    assert verdict.status == Status.REFUTED and verdict.figures["decided"] == "split"
    example = list(verdict.counterexample.input)
    assert breaks(Sorts(), example, run(broken.comparators, example))


def test_without_the_step_the_solver_decides():
    verdict = NoSampling(enumeration_limit=0, simulation_rounds=0, blocks=False).check(pairwise(16), Sorts(),
                                                                                         Budget())
    assert verdict.status == Status.PROVED
    assert verdict.figures["sub_networks_proved"] == 0 and verdict.figures["sat_calls"] >= 1
