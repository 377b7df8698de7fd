"""The order-relation test is sound: whenever it says a network sorts, exhaustive enumeration agrees."""

from __future__ import annotations

from hypothesis import given, settings

from sortcheck.engines import Budget, Status, check
from sortcheck.engines.order import relations_prove_sorted
from sortcheck.model import Sorts
from sortcheck.model.families import build_family
from reference import breaks, run
from strategies import nearly_sorting, networks, reference_holds


@settings(max_examples=300, deadline=None)
@given(networks(max_channels=8, max_size=40))
def test_a_proof_by_relations_is_never_wrong_on_random_networks(network):
    for descending in (False, True):
        if relations_prove_sorted(network.channels, network.comparators, descending, Budget()):
            assert reference_holds(network, Sorts(order="descending" if descending else "ascending"))


@settings(max_examples=200, deadline=None)
@given(nearly_sorting())
def test_a_proof_by_relations_is_never_wrong_on_nearly_sorting_networks(network):
    if relations_prove_sorted(network.channels, network.comparators, False, Budget()):
        assert reference_holds(network, Sorts())


def test_relations_prove_the_adjacent_comparator_families():
    for family in ("odd-even-transposition", "insertion"):
        for n in (2, 5, 16, 64):
            network = build_family(family, n)
            assert relations_prove_sorted(n, network.comparators, False, Budget())
            broken = network.comparators[:-1]
            assert not relations_prove_sorted(n, broken, False, Budget()) or n == 2


def test_the_sat_engine_uses_them_on_large_transposition_networks():
    verdict = check(build_family("odd-even-transposition", 300), Sorts(), engine="sat")
    assert verdict.status == Status.PROVED and verdict.figures["decided"] == "order relations"
    values = list(range(300, 0, -1))
    assert not breaks(Sorts(), values, run(build_family("odd-even-transposition", 300).comparators, values))
