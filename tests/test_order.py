"""The order-relation test is sound: whenever it says a network sorts, exhaustive enumeration agrees."""

from __future__ import annotations

from hypothesis import given, settings

from sortcheck.engines import Budget, Status, check
from sortcheck.engines.networks.order import relations_prove_sorted
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


def recorded_relations(monkeypatch):
    """Record the networks the sat engine asks the relation test about (the real test still answers)."""
    from sortcheck.engines.networks import sat

    asked = []

    def recording(channels, comparators, descending, budget):
        asked.append(channels)
        return relations_prove_sorted(channels, comparators, descending, budget)

    monkeypatch.setattr(sat, "relations_prove_sorted", recording)
    return asked


def test_shallow_networks_are_left_to_the_structural_split(monkeypatch):
    # merge exchange 256 has depth 36 <= log2(256)^2 = 64 (Knuth, TAOCP vol. 3, 5.3.4: depth k(k+1)/2, n = 2^k)
    asked = recorded_relations(monkeypatch)
    verdict = check(build_family("merge-exchange", 256), Sorts(), engine="sat")
    assert verdict.status is Status.PROVED and verdict.figures["decided"] == "split" and asked == []


def test_deep_networks_try_relations_first(monkeypatch):
    asked = recorded_relations(monkeypatch)
    verdict = check(build_family("insertion", 80), Sorts(), engine="sat")  # depth 2n - 3 = 157 > 7^2
    assert verdict.status is Status.PROVED and verdict.figures["decided"] == "order relations" and asked == [80]


def test_relations_are_tried_once_before_the_sat_call_on_the_property(monkeypatch):
    from sortcheck.engines.networks.sat import SatEngine

    asked = recorded_relations(monkeypatch)
    # without the split, merge exchange 32 is one question of 2^32 vectors: relations (which fail on it) come
    # before the SAT call, once
    verdict = SatEngine(split=False).check(build_family("merge-exchange", 32), Sorts(), Budget())
    assert verdict.status is Status.PROVED and verdict.figures["decided"] == "sat" and asked == [32]
