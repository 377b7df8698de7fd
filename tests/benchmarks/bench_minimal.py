"""Seconds to a proved-minimal counterexample: the search over the proved parts' counts against the
whole-network SAT search it comes before.

Run: ``python tests/benchmarks/bench_minimal.py [budget seconds]``.  Each row is merge exchange 256
(Batcher's network) with one comparator removed; both paths start from the ``sat`` engine's
counterexample and get the same budget.  ``measure`` is the least count of ones or zeros found, ``*``
marks a proved minimum.
"""

from __future__ import annotations

import sys
import time

from sortcheck.engines import Budget, check
from sortcheck.explain.minimal import minimize_network_counterexample
from sortcheck.model import ComparatorNetwork, Sorts
from sortcheck.model.families import merge_exchange

INDICES = (300, 1000, 2000, 3000, 3500, 3838)


def timed(broken: ComparatorNetwork, example, seconds: float, structure: bool):
    started = time.perf_counter()
    found = minimize_network_counterexample(broken, Sorts(), example, Budget.of(seconds), structure=structure)
    return time.perf_counter() - started, found


def main() -> None:
    seconds = float(sys.argv[1]) if len(sys.argv) > 1 else 120.0
    network = merge_exchange(256)
    print(f"budget {seconds:.0f} s per path")
    print(f"{'network':30} {'check s':>8} {'parts s':>9} {'measure':>8} {'whole-SAT s':>12} {'measure':>8} "
          f"{'ratio':>7}")
    for index in INDICES:
        broken = ComparatorNetwork(256, network.comparators[:index] + network.comparators[index + 1:])
        started = time.perf_counter()
        example = check(broken, Sorts(), engine="sat").counterexample
        checked = time.perf_counter() - started
        ours, found = timed(broken, example, seconds, True)
        theirs, baseline = timed(broken, example, seconds, False)
        mark = lambda e: f"{e.ones}{'*' if e.minimal else ' '}"  # noqa: E731
        ratio = f"{theirs / ours:6.1f}x" if baseline.minimal else f">{theirs / ours:5.1f}x"
        print(f"{'merge exchange 256 without ' + str(index):30} {checked:8.2f} {ours:9.2f} {mark(found):>8} "
              f"{theirs:12.2f} {mark(baseline):>8} {ratio:>7}")


if __name__ == "__main__":
    main()
