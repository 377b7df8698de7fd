"""Hypothesis strategies and helpers shared by the engine tests: random and nearly sorting networks."""

from __future__ import annotations

import itertools

from hypothesis import strategies as st

from sortcheck.model import ComparatorNetwork, Median, Merges, Selects, Sorts
from sortcheck.model.families import build_family
from reference import breaks, run


def reference_holds(network, prop):
    return not any(breaks(prop, list(v), run(network.comparators, v))
                   for v in itertools.product((0, 1), repeat=network.channels))


def properties_for(n):
    props = [Sorts(), Sorts(order="descending")]
    props += [Merges(split=m) for m in range(1, n)]
    props += [Selects(count=t, sorted=s) for t in range(1, n + 1) for s in (False, True)]
    if n % 2:
        props.append(Median())
    return props


@st.composite
def networks(draw, max_channels=8, max_size=30, min_channels=1):
    n = draw(st.integers(min_channels, max_channels))
    if n == 1:
        return ComparatorNetwork(1, ())
    pair = st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)).filter(lambda p: p[0] != p[1])
    return ComparatorNetwork(n, tuple(draw(st.lists(pair, max_size=max_size))))


@st.composite
def nearly_sorting(draw):
    """A family network with one comparator removed or reversed (or kept), and maybe reversed throughout."""
    family = draw(st.sampled_from(["merge-exchange", "odd-even-transposition", "insertion", "pairwise", "bitonic"]))
    n = draw(st.sampled_from([2, 4, 8])) if family == "bitonic" else draw(st.integers(2, 9))
    network = build_family(family, n)
    comparators = network.comparators
    if draw(st.booleans()):
        comparators = tuple((b, a) for a, b in comparators)  # a descending sorter
    index = draw(st.integers(0, len(comparators) - 1))
    a, b = comparators[index]
    replacement = draw(st.sampled_from([(), ((b, a),), ((a, b),)]))
    return ComparatorNetwork(n, comparators[:index] + replacement + comparators[index + 1:])
