"""Repairs of large comparator networks, and the pruning that makes them quick.

The one-change stage drops, before running them, the candidates that leave a
failing bank input unchanged at their position (``sortcheck/explain/repair_scan.py``).
The first test checks that this drops nothing the bank run would keep: the
survivors with the pruning equal those without it.  The repairs of merge
exchange 128 (Knuth, TAOCP vol. 3, 5.3.4, Algorithm M: it sorts) without one
comparator are judged again outside the search: a fresh ``sat`` check of the
repaired network, and random inputs with ties run through the independent
evaluator of ``tests/reference.py`` against Python's ``sorted``.
"""

from __future__ import annotations

import random

import numpy as np
import pytest

from reference import run
from sortcheck.engines import Budget, check
from sortcheck.explain import repair_scan
from sortcheck.explain.repair import apply_changes, repair_network
from sortcheck.explain.repair_bank import seed_bank
from sortcheck.explain.repair_candidates import _Counts, all_candidates, guide_for, search_space
from sortcheck.model import ComparatorNetwork, Selects, Sorts
from sortcheck.model.families import bitonic, merge_exchange


def without(network: ComparatorNetwork, *indices: int) -> ComparatorNetwork:
    return ComparatorNetwork(network.channels, tuple(c for i, c in enumerate(network.comparators)
                                                     if i not in indices))


def reversed_at(network: ComparatorNetwork, index: int) -> ComparatorNetwork:
    a, b = network.comparators[index]
    return ComparatorNetwork(network.channels, network.comparators[:index] + ((b, a),)
                             + network.comparators[index + 1:])


BROKEN = [(without(merge_exchange(16), 20), Sorts()), (without(merge_exchange(12), 3, 30), Sorts()),
          (reversed_at(bitonic(16), 50), Sorts()), (without(merge_exchange(10), 9), Selects(count=3)),
          (without(merge_exchange(32), 100), Sorts())]


@pytest.mark.parametrize("network, prop", BROKEN, ids=[f"case-{number}" for number in range(len(BROKEN))])
@pytest.mark.parametrize("bank_size", [1, 512])
def test_the_pruning_drops_only_candidates_that_fail_the_bank(monkeypatch, network, prop, bank_size):
    example = check(network, prop).counterexample.input
    bank = seed_bank(network, prop, example, limit=bank_size, random_inputs=bank_size // 2, complete=0)
    guide = guide_for(network.comparators, network.channels, prop, example)
    space, _ = search_space(network, prop, guide, float("inf"))

    def survivors():
        counts = _Counts()
        found = repair_scan.scan(network.comparators, prop, bank.rows(), 0, space, guide, counts, Budget())
        return found, counts.tried

    real = repair_scan.failing_words
    assert real(network.comparators, prop, bank.rows()).any()  # there is something to prune with
    pruned, tried = survivors()
    monkeypatch.setattr(repair_scan, "failing_words", lambda *args: np.zeros_like(real(*args)))
    every, every_tried = survivors()
    assert pruned == every and tried == every_tried
    assert tried == len(all_candidates(network.comparators, space, guide))


def assert_sorts_independently(network: ComparatorNetwork, seed: int) -> None:
    """A fresh sat proof, and random inputs with ties through tests/reference.py against Python's sorted."""
    assert check(network, Sorts(), engine="sat").status.value == "proved"
    rng = random.Random(seed)
    for _ in range(300):
        values = [rng.randrange(network.channels // 4) for _ in range(network.channels)]
        assert run(network.comparators, values) == sorted(values)


@pytest.mark.parametrize("index", [700, random.Random(128).randrange(1471)])
def test_merge_exchange_128_without_a_comparator_is_repaired_with_one_change(index):
    sorter = merge_exchange(128)
    assert sorter.size == 1471
    broken = without(sorter, index)
    outcome = repair_network(broken, Sorts(), Budget.of(60))
    assert outcome.status == "repaired" and outcome.verified and len(outcome.changes) == 1, outcome.reason
    assert outcome.verdict.engine == "sat" and outcome.searched == "every network within one change"
    assert outcome.network == apply_changes(broken, outcome.changes)
    assert_sorts_independently(outcome.network, index)


def test_repair_has_a_default_budget_and_says_so(capsys):
    from sortcheck.cli import REPAIR_SECONDS, build_parser

    assert build_parser().parse_args(["repair", "broken.json"]).timeout == REPAIR_SECONDS == 300
    with pytest.raises(SystemExit):
        build_parser().parse_args(["repair", "--help"])
    assert "(default: 300 s)" in " ".join(capsys.readouterr().out.split())
