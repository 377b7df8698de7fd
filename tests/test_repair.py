"""Repairs of broken comparator networks, each re-checked here independently of the project's engines.

A repair is judged by :func:`holds_everywhere`: every 0-1 input (for merges,
every input of two ascending 0-1 runs) is run through the repaired
comparators value by value (``tests/reference.run``) and judged with the
property's definition written with Python's ``sorted`` (``tests/reference.breaks``);
by the 0-1 principle (Knuth, TAOCP vol. 3, 5.3.4, exercise 5.3.4-36 for
selection) that covers every input.  Networks of more than 12 channels are
evaluated as a numpy 0-1 matrix against ``numpy.sort`` of the rows instead
(same definition, vectorised, still no project code).
"""

from __future__ import annotations

import itertools
import json
from pathlib import Path

import numpy as np
import pytest

from reference import breaks, run
from sortcheck.engines import Budget
from sortcheck.explain.repair import (KINDS, Change, RepairOptions, apply_changes, repair_network, replacements)
from sortcheck.load import read_netlist
from sortcheck.model import ComparatorNetwork, Median, Merges, Selects, Sorts, restrict_to_outputs
from sortcheck.model.families import bitonic, insertion, merge_exchange, odd_even_transposition

CORPUS = Path(__file__).resolve().parent.parent / "corpus"


def zero_one_inputs(channels, prop):
    if isinstance(prop, Merges):
        m = prop.split
        return [tuple([0] * a + [1] * (m - a) + [0] * c + [1] * (channels - m - c))
                for a in range(m + 1) for c in range(channels - m + 1)]
    return list(itertools.product((0, 1), repeat=channels))


def holds_everywhere(network: ComparatorNetwork, prop) -> bool:
    """The property on every 0-1 input in scope, by an evaluator that shares no code with sortcheck."""
    n = network.channels
    if n <= 12 or isinstance(prop, Merges):
        return not any(breaks(prop, list(v), run(network.comparators, v)) for v in zero_one_inputs(n, prop))
    assert isinstance(prop, Sorts) and prop.order == "ascending"
    wires = ((np.arange(1 << n)[:, None] >> np.arange(n)) & 1).astype(np.int8)
    expected = np.sort(wires, axis=1)
    for a, b in network.comparators:
        low, high = np.minimum(wires[:, a], wires[:, b]), np.maximum(wires[:, a], wires[:, b])
        wires[:, a], wires[:, b] = low, high
    return bool((wires == expected).all())


def without(network: ComparatorNetwork, *indices: int) -> ComparatorNetwork:
    kept = tuple(c for i, c in enumerate(network.comparators) if i not in indices)
    return ComparatorNetwork(network.channels, kept, claim=network.claim)


def assert_verified_repair(broken: ComparatorNetwork, prop, outcome, changes: int = 1):
    assert outcome.status == "repaired", outcome.reason
    assert outcome.verified and outcome.verdict.status.value == "proved"
    assert len(outcome.changes) == changes
    assert outcome.network == apply_changes(broken, outcome.changes)
    assert holds_everywhere(outcome.network, prop)
    assert all(change.kind in KINDS for change in outcome.changes)


SMALL = [(merge_exchange, 8), (bitonic, 8), (odd_even_transposition, 6), (odd_even_transposition, 7),
         (insertion, 5), (insertion, 6)]
LARGER = [(merge_exchange, 10), (merge_exchange, 12), (merge_exchange, 14), (merge_exchange, 16), (bitonic, 16),
          (odd_even_transposition, 8), (odd_even_transposition, 9), (insertion, 7), (insertion, 8)]


@pytest.mark.parametrize("family, n", SMALL, ids=lambda x: getattr(x, "__name__", x))
def test_every_missing_comparator_of_a_small_sorter_is_repaired_with_one_change(family, n):
    network = family(n)
    assert holds_everywhere(network, Sorts())
    for index in range(network.size):
        broken = without(network, index)
        if holds_everywhere(broken, Sorts()):
            continue  # a redundant comparator: nothing to repair
        assert_verified_repair(broken, Sorts(), repair_network(broken, Sorts(), Budget.of(30)))


@pytest.mark.parametrize("family, n", LARGER, ids=lambda x: getattr(x, "__name__", x))
def test_a_sample_of_missing_comparators_of_larger_sorters_is_repaired(family, n):
    network = family(n)
    for index in sorted({0, network.size // 3, (2 * network.size) // 3, network.size - 1}):
        broken = without(network, index)
        outcome = repair_network(broken, Sorts(), Budget.of(30))
        assert_verified_repair(broken, Sorts(), outcome)


@pytest.mark.parametrize("index", [0, 5, 12, 17, 23])
def test_a_reversed_comparator_is_repaired(index):
    network = bitonic(8)
    a, b = network.comparators[index]
    broken = ComparatorNetwork(8, network.comparators[:index] + ((b, a),) + network.comparators[index + 1:])
    assert not holds_everywhere(broken, Sorts())
    outcome = repair_network(broken, Sorts(), Budget.of(30))
    assert_verified_repair(broken, Sorts(), outcome)
    assert outcome.changes[0] == Change("reverse", index, (a, b), (b, a))  # reversals are tried first


def test_a_comparator_on_the_wrong_channel_is_repaired_by_a_move_or_otherwise():
    network = merge_exchange(16)
    a, b = network.comparators[40]
    moved = (a, (b + 1) % 16 if (b + 1) % 16 != a else (b + 2) % 16)
    broken = ComparatorNetwork(16, network.comparators[:40] + (tuple(sorted(moved)),) + network.comparators[41:])
    assert not holds_everywhere(broken, Sorts())
    assert_verified_repair(broken, Sorts(), repair_network(broken, Sorts(), Budget.of(30)))


@pytest.mark.parametrize("family, n, removed", [(merge_exchange, 8, (2, 15)), (merge_exchange, 12, (5, 30))],
                         ids=["merge-exchange-8", "merge-exchange-12"])
def test_two_missing_comparators_need_and_get_two_changes(family, n, removed):
    broken = without(family(n), *removed)
    one = repair_network(broken, Sorts(), Budget.of(30), max_changes=1)
    assert one.status == "none" and not one.verified and one.network is None and one.changes == ()
    outcome = repair_network(broken, Sorts(), Budget.of(60))
    assert_verified_repair(broken, Sorts(), outcome, changes=2)
    assert outcome.changes[0].index < outcome.changes[1].index


def test_a_correct_network_has_nothing_to_repair():
    network = merge_exchange(12)
    outcome = repair_network(network, Sorts())
    assert outcome.status == "holds" and outcome.changes == () and outcome.verified
    assert outcome.network == network and outcome.candidates_tried == 0


def test_budget_exhaustion_gives_status_budget():
    broken = without(merge_exchange(16), 10, 30, 50)
    assert repair_network(broken, Sorts(), Budget.of(0)).status == "budget"
    outcome = repair_network(broken, Sorts(), Budget.of(0.5))
    assert outcome.status == "budget" and not outcome.verified and outcome.network is None
    assert outcome.seconds < 5  # the search stops at the deadline, give or take one check


def test_the_repair_does_not_depend_on_the_bank_and_counterexamples_feed_back():
    """A bank of one input forces full checks that refute candidates; their counterexamples join the bank."""
    broken = without(merge_exchange(16), 24)
    default = repair_network(broken, Sorts())
    tiny = repair_network(broken, Sorts(), options=RepairOptions(bank_limit=1, random_inputs=0, complete_bank=0))
    assert tiny.changes == default.changes and tiny.verified
    assert tiny.counterexamples_added >= 1 and tiny.verifications > default.verifications
    assert default.verifications <= 3  # the default bank rules out nearly every wrong candidate


def test_the_same_input_gives_the_same_repair():
    broken = without(bitonic(16), 40)
    first, second = repair_network(broken, Sorts()), repair_network(broken, Sorts())
    assert first.changes == second.changes and first.candidates_tried == second.candidates_tried


def test_median_selects_and_merges_are_repaired():
    median = read_netlist(CORPUS / "broken" / "median-of-9-missing-comparator.json")
    assert_verified_repair(median, Median(), repair_network(median, Median(), Budget.of(30)))
    selector = restrict_to_outputs(merge_exchange(12), range(3))
    for prop in (Selects(count=3, sorted=True), Selects(count=3)):
        broken = without(selector, 7)
        if holds_everywhere(broken, prop):
            continue
        assert_verified_repair(broken, prop, repair_network(broken, prop, Budget.of(30)))
    merger = read_netlist(CORPUS / "broken" / "odd-even-merger-8-missing-comparator.json")
    assert_verified_repair(merger, Merges(split=4), repair_network(merger, Merges(split=4), Budget.of(30)))


def odd_even_merger(n: int) -> ComparatorNetwork:
    """Batcher's odd-even merger of two sorted halves (n a power of two), recursive form written from memory."""
    def merge(low, high, step):
        double = 2 * step
        if double < high - low:
            yield from merge(low, high, double)
            yield from merge(low + step, high, double)
            yield from ((i, i + step) for i in range(low + step, high - step, double))
        else:
            yield low, low + step
    return ComparatorNetwork(n, tuple(merge(0, n - 1, 1)))


def test_a_large_merger_is_repaired_with_a_partial_bank():
    """64 channels: 1,089 merge inputs, more than the complete bank takes, so the bank is searched for."""
    merger, prop = odd_even_merger(64), Merges(split=32)
    assert holds_everywhere(merger, prop)
    broken = without(merger, merger.size // 2)
    assert_verified_repair(broken, prop, repair_network(broken, prop, Budget.of(30)))


def test_a_descending_sorter_is_repaired_with_a_descending_comparator():
    network = merge_exchange(8)
    flipped = ComparatorNetwork(8, tuple((b, a) for a, b in network.comparators))
    prop = Sorts(order="descending")
    broken = without(flipped, 9)
    outcome = repair_network(broken, prop, Budget.of(30))
    assert_verified_repair(broken, prop, outcome)
    assert all(c.comparator[0] > c.comparator[1] for c in outcome.changes if c.kind == "insert")


def test_the_report_is_json():
    broken = without(insertion(6), 3)
    data = json.loads(json.dumps(repair_network(broken, Sorts()).to_json()))
    assert data["status"] == "repaired" and data["verified"] is True and data["engine"]
    assert data["changes"] and set(data["changes"][0]) == {"kind", "index", "comparator", "replaced"}
    assert data["verifications"] >= 1 and data["candidates_tried"] >= 1


def test_moves_keep_the_orientation():
    assert all(new is None or (new[0] < new[1]) for _, new in replacements((1, 3), 5)[1:])
    assert all(new is None or (new[0] > new[1]) for _, new in replacements((3, 1), 5)[1:])
    assert len(replacements((1, 3), 5)) == 1 + 2 * 3 + 1


def test_a_narrowed_search_says_so():
    """Every network within one change is searched whatever ``max_candidates`` says, unless even the candidates
    that change every failing bank input are too many: then only positions around the sealing comparator are
    searched, and the outcome says so."""
    far = without(merge_exchange(16), 33)  # its first counterexample is sealed far after the missing comparator
    outcome = repair_network(far, Sorts(), Budget.of(30), max_changes=1, options=RepairOptions(max_candidates=3000))
    assert outcome.searched == "every network within one change"
    assert_verified_repair(far, Sorts(), outcome)
    one_input = RepairOptions(max_candidates=50, bank_limit=1, random_inputs=0, complete_bank=0)
    outcome = repair_network(far, Sorts(), Budget.of(30), max_changes=1, options=one_input)
    assert outcome.status == "none" and outcome.searched in outcome.reason and "positions" in outcome.searched
    assert repair_network(far, Sorts(), Budget.of(30), max_changes=1).status == "repaired"
