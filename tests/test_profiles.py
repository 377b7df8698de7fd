"""Parts on two sorted runs decided on monotone profiles, against references outside the package.

References: ``tests/reference.py`` (comparators applied value by value, properties judged with Python's
``sorted``) on every pair of runs, and an evaluator written here on every 0-1 input at once (one
Python integer per channel, bit ``x`` of channel ``i`` being bit ``i`` of input ``x``; the method of
``tests/test_families.py``).  Every counterexample is replayed with ``tests/reference.py``.  The
families sort (Knuth, TAOCP vol. 3, 5.3.4; Parberry 1992), which the exhaustive evaluator confirms.
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings, strategies as st

from sortcheck.engines import check
from sortcheck.engines.base import Budget, Status
from sortcheck.engines.networks import sat_profiles
from sortcheck.engines.networks.profiles import TwoRuns, check_profiles
from sortcheck.engines.networks.sat import SatEngine
from sortcheck.model import ComparatorNetwork, Merges, Sorts
from sortcheck.model.families import bitonic, merge_exchange, odd_even_merge, pairwise
from reference import breaks, run

FAMILIES = {"merge-exchange": merge_exchange, "bitonic": bitonic, "pairwise": pairwise,
            "odd-even-merge": odd_even_merge}


def run_vector(counts, groups, channels):
    """The 0-1 vector with ``counts[g]`` ones on group ``g``, written out from the definition of a sorted run."""
    values = [0] * channels
    for count, (members, order) in zip(counts, groups):
        ones = members[len(members) - count:] if order == "ascending" else members[:count]
        for channel in ones:
            values[channel] = 1
    return values


def sorts_every_input(network, descending=False):
    """Whether ``network`` sorts all 2^n 0-1 inputs, evaluated on all of them at once with big integers."""
    n = network.channels
    everything = (1 << (1 << n)) - 1
    wires = []
    for channel in range(n):
        block = 1 << channel
        pattern, width = ((1 << block) - 1) << block, 2 * block   # bit x set iff bit `channel` of x is set
        while width < 1 << n:
            pattern, width = pattern | pattern << width, 2 * width
        wires.append(pattern & everything)
    for a, b in network.comparators:
        wires[a], wires[b] = wires[a] & wires[b], wires[a] | wires[b]
    pairs = zip(wires[1:], wires[:-1]) if descending else zip(wires[:-1], wires[1:])
    return all(first & ~second == 0 for first, second in pairs)


@pytest.fixture
def always_profiles(monkeypatch):
    """Every question on two runs goes to profiles, however few its vectors."""
    monkeypatch.setattr(sat_profiles, "PROFILE_LIMIT", 0)


# --- check_profiles against every pair of runs, judged with sorted ---------------------------------------------

@st.composite
def two_run_questions(draw):
    s, t = draw(st.integers(1, 7)), draw(st.integers(1, 7))
    channels = list(range(s + t))
    first = tuple(sorted(draw(st.permutations(channels))[:s]))
    second = tuple(c for c in channels if c not in first)
    groups = [(first, draw(st.sampled_from(["ascending", "descending"]))),
              (second, draw(st.sampled_from(["ascending", "descending"])))]
    pair = st.tuples(st.sampled_from(channels), st.sampled_from(channels)).filter(lambda p: p[0] != p[1])
    comparators = draw(st.lists(pair, max_size=3 * (s + t)))
    order = draw(st.sampled_from(["ascending", "descending"]))
    return groups, comparators, order


@settings(max_examples=80, deadline=None)
@given(two_run_questions())
def test_profiles_decide_exactly_what_every_pair_of_runs_decides(question):
    groups, comparators, order = question
    channels = len(groups[0][0]) + len(groups[1][0])
    runs = TwoRuns(groups)
    point = check_profiles(comparators, runs, range(len(comparators)), [(tuple(range(channels)), order)])[0]
    # reference: every (a, b), in the order the profiles report them (axis count first)
    failing = []
    for a in range(runs.size + 1):
        for b in range(runs.tall + 1):
            counts = [0, 0]
            counts[runs.axis], counts[runs.height] = a, b
            values = run_vector(counts, groups, channels)
            outputs = run(comparators, values)
            if outputs != sorted(values, reverse=order == "descending"):
                failing.append((a, b))
    assert (point is None) == (not failing)
    if point is not None:
        assert point in failing and point[0] == failing[0][0]   # a real failure, of the least a
        assert list(runs.vector(point, channels)) == run_vector(
            [point[0] if g == runs.axis else point[1] for g in (0, 1)], groups, channels)


# --- the engine on the four families, non-powers of two, against every 0-1 input -------------------------------

CASES = [(name, n) for name in FAMILIES for n in (8, 13, 16, 19) if name != "bitonic" or n in (8, 16)]


@pytest.mark.parametrize("name, n", CASES)
def test_families_are_proved_through_profiles(always_profiles, name, n):
    network = FAMILIES[name](n)
    assert sorts_every_input(network)
    verdict = SatEngine(simulation_rounds=0).check(network, Sorts(), Budget())
    assert verdict.status == Status.PROVED
    assert verdict.figures["parts_profiled"] > 0
    assert "monotone profiles" in verdict.scope


def mutants(network, step):
    """The network with comparator k removed, and with it reversed, for every ``step``-th k."""
    for index in range(0, network.size, step):
        rest = network.comparators[:index] + network.comparators[index + 1:]
        a, b = network.comparators[index]
        yield ComparatorNetwork(network.channels, rest)
        yield ComparatorNetwork(network.channels, rest[:index] + ((b, a),) + rest[index:])


@pytest.mark.parametrize("name, n", [("merge-exchange", 13), ("bitonic", 16), ("pairwise", 14),
                                     ("odd-even-merge", 12)])
def test_mutants_get_the_verdict_of_every_input_and_real_counterexamples(always_profiles, name, n):
    refuted = 0
    for mutant in mutants(FAMILIES[name](n), 3):
        verdict = SatEngine(simulation_rounds=0).check(mutant, Sorts(), Budget())
        assert verdict.status == (Status.PROVED if sorts_every_input(mutant) else Status.REFUTED)
        if verdict.status == Status.REFUTED:
            refuted += 1
            example = list(verdict.counterexample.input)
            assert breaks(Sorts(), example, run(mutant.comparators, example))
    assert refuted > 0


def test_a_large_merge_exchange_uses_profiles_and_reuses_translated_parts():
    network = merge_exchange(300)   # parts of 128 + 128 channels and more have over 4,096 vectors
    verdict = SatEngine(simulation_rounds=0).check(network, Sorts(), Budget())
    assert verdict.status == Status.PROVED
    assert verdict.figures["parts_profiled"] > 0 and verdict.figures["parts_reused"] > 0
    assert verdict.figures["sat_calls"] == 0


@pytest.mark.parametrize("removed", [-1, -150, -400])
def test_a_broken_large_merge_is_refuted_with_an_input_that_fails(removed):
    network = odd_even_merge(300)
    comparators = list(network.comparators)
    del comparators[removed]
    broken = ComparatorNetwork(300, tuple(comparators))
    verdict = SatEngine(simulation_rounds=0).check(broken, Sorts(), Budget())
    assert verdict.status == Status.REFUTED
    example = list(verdict.counterexample.input)
    assert breaks(Sorts(), example, run(broken.comparators, example))


def test_merges_property_goes_through_profiles(always_profiles):
    merger = odd_even_merge(16)   # its last 25 comparators merge the two sorted halves of 8
    tail = ComparatorNetwork(16, merger.comparators[-25:])
    for network in (tail, ComparatorNetwork(16, tail.comparators[:-3] + tail.comparators[-2:])):
        verdict = SatEngine(simulation_rounds=0).check(network, Merges(split=8), Budget())
        judged = [breaks(Merges(split=8), v, run(network.comparators, v))
                  for a in range(9) for b in range(9) for v in [run_vector([a, b], [(tuple(range(8)), "ascending"),
                                                                                   (tuple(range(8, 16)), "ascending")],
                                                                    16)]]
        assert verdict.status == (Status.REFUTED if any(judged) else Status.PROVED)
        assert verdict.figures["parts_profiled"] == 1
        if verdict.status == Status.REFUTED:
            example = list(verdict.counterexample.input)
            assert breaks(Merges(split=8), example, run(network.comparators, example))


# --- random merge-like networks: profiles against plain enumeration ----------------------------------------------

@settings(max_examples=25, deadline=None)
@given(st.sampled_from(sorted(FAMILIES)), st.integers(9, 16), st.data())
def test_random_merge_like_networks_agree_with_enumeration(name, n, data):
    if name == "bitonic":
        n = 16
    network = FAMILIES[name](n)
    comparators = list(network.comparators)
    # change the last merge: drop, reverse or add a few comparators among its last ones
    for _ in range(data.draw(st.integers(1, 3))):
        index = data.draw(st.integers(max(0, len(comparators) - n), len(comparators) - 1))
        action = data.draw(st.sampled_from(["drop", "reverse", "add"]))
        a, b = comparators[index]
        if action == "drop":
            del comparators[index]
        elif action == "reverse":
            comparators[index] = (b, a)
        else:
            comparators.insert(index, tuple(sorted(data.draw(st.permutations(range(n)))[:2])))
    mutant = ComparatorNetwork(n, tuple(comparators))
    saved = sat_profiles.PROFILE_LIMIT
    sat_profiles.PROFILE_LIMIT = 0   # (hypothesis runs the examples inside one test: no fixture per example)
    try:
        verdict = SatEngine(simulation_rounds=0).check(mutant, Sorts(), Budget())
    finally:
        sat_profiles.PROFILE_LIMIT = saved
    expected = check(mutant, Sorts(), engine="enumerate").status
    assert verdict.status == expected
    if verdict.status == Status.REFUTED:
        example = list(verdict.counterexample.input)
        assert breaks(Sorts(), example, run(mutant.comparators, example))


# --- counts handed to two blocks by many sorted groups (count_intervals), against every configuration ----------

@st.composite
def groups_and_blocks(draw):
    channels = draw(st.integers(2, 9))
    order = draw(st.permutations(range(channels)))
    cuts = sorted(draw(st.sets(st.integers(1, channels - 1), max_size=4)))
    pieces = [order[i:j] for i, j in zip([0, *cuts], [*cuts, channels])]
    groups = [(tuple(sorted(p)), draw(st.sampled_from(["ascending", "descending"]))) for p in pieces]
    axis = tuple(sorted(draw(st.sets(st.sampled_from(range(channels)), min_size=1, max_size=channels - 1))))
    return channels, groups, axis


@settings(max_examples=80, deadline=None)
@given(groups_and_blocks())
def test_count_intervals_are_exactly_the_reachable_counts(case):
    import itertools
    from sortcheck.engines.networks.count_intervals import CountIntervals
    channels, groups, axis = case
    reachable = {}
    for ones in itertools.product(*[range(len(members) + 1) for members, _ in groups]):
        vector = run_vector(ones, groups, channels)
        x = sum(vector[c] for c in axis)
        reachable.setdefault((x, sum(vector) - x), ones)
    intervals = CountIntervals(groups, axis)
    low, high = intervals.bounds()
    described = {(x, y) for x in range(len(low)) for y in range(int(low[x]), int(high[x]) + 1)}
    assert described == set(reachable)
    for x, y in reachable:
        ones = intervals.witness(x, y)
        vector = run_vector(ones, groups, channels)
        assert sum(vector[c] for c in axis) == x and sum(vector) - x == y


class NoSampling(SatEngine):
    """No random vectors before the block step and no enumeration of all sorted vectors: the steps proper decide."""

    def _sample(self, *arguments):
        return None


def test_pairwise_after_its_blocks_is_decided_on_reachable_counts(always_profiles, monkeypatch):
    calls = []
    original = SatEngine._after_blocks_by_intervals
    monkeypatch.setattr(SatEngine, "_after_blocks_by_intervals",
                        lambda self, *arguments: calls.append(1) or original(self, *arguments))
    network = pairwise(24)
    assert sorts_every_input(network)
    engine = NoSampling(simulation_rounds=0, enumeration_limit=0)
    verdict = engine.check(network, Sorts(), Budget())
    assert verdict.status == Status.PROVED and verdict.figures["sub_networks_proved"] > 0 and calls
    refuted = 0
    for removed in (-1, -40, -90):
        comparators = list(network.comparators)
        del comparators[removed]
        broken = ComparatorNetwork(24, tuple(comparators))
        verdict = engine.check(broken, Sorts(), Budget())
        assert verdict.status == (Status.PROVED if sorts_every_input(broken) else Status.REFUTED)
        if verdict.status == Status.REFUTED:
            refuted += 1
            example = list(verdict.counterexample.input)
            assert breaks(Sorts(), example, run(broken.comparators, example))
    assert refuted > 0
