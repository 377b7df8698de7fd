"""Repair search with the bank of failing inputs against a plain baseline: every candidate fully checked in order.

Run: ``python tests/benchmarks/bench_repair.py``.  Both find the same first proved one-change repair.
"""

from __future__ import annotations

import time

from sortcheck.engines import Budget, Status, check
from sortcheck.explain.repair import all_candidates, apply_changes, guide_for, repair_network, search_space
from sortcheck.model import ComparatorNetwork, Sorts
from sortcheck.model.families import bitonic, merge_exchange


def baseline(broken: ComparatorNetwork):
    """Every one-change candidate in the search order, each checked with the engine, until one is proved."""
    first = check(broken, Sorts())
    guide = guide_for(broken.comparators, broken.channels, Sorts(), first.counterexample.input)
    space, _ = search_space(broken, Sorts(), guide, 10 ** 9)
    for checks, (_, change) in enumerate(all_candidates(broken.comparators, space, guide), 1):
        if check(apply_changes(broken, [change]), Sorts()).status == Status.PROVED:
            return change, checks
    return None, 0


def main() -> None:
    print(f"{'network':28} {'repair s':>9} {'checks':>7} {'baseline s':>11} {'checks':>7} {'ratio':>7}")
    for family, n, index in [(merge_exchange, 12, 30), (merge_exchange, 16, 40), (bitonic, 16, 50)]:
        network = family(n)
        broken = ComparatorNetwork(n, network.comparators[:index] + network.comparators[index + 1:])
        started = time.perf_counter()
        outcome = repair_network(broken, Sorts(), Budget.of(600), max_changes=1)
        ours = time.perf_counter() - started
        started = time.perf_counter()
        change, checks = baseline(broken)
        theirs = time.perf_counter() - started
        assert outcome.changes == (change,), (outcome.changes, change)
        print(f"{network.name + f' without {index}':28} {ours:9.3f} {outcome.verifications:7} {theirs:11.3f} "
              f"{checks:7} {theirs / ours:6.1f}x")


if __name__ == "__main__":
    main()
