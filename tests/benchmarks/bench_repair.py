"""Repair search with the bank of failing inputs against a plain baseline: every candidate fully checked in order;
then repairs of merge exchange 128 and 256 with one comparator removed, through the command line.

Run: ``python tests/benchmarks/bench_repair.py`` (``--large`` for the second part alone).  In the first part both
find the same first proved one-change repair.  In the second, each case is a new ``sortcheck repair --format
json`` process (start-up, loading and the first check included) on a network without comparator ``i``: the
first, a middle one, the last, and random ones (seeded); it prints the seconds, the change, the full checks
and the engine that proved the repaired network, and asserts a verified repair of one change.
"""

from __future__ import annotations

import json
import random
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from sortcheck.engines import Budget, Status, check
from sortcheck.explain.repair import all_candidates, apply_changes, guide_for, repair_network, search_space
from sortcheck.load import write_netlist
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


def large_rows() -> None:
    """Merge exchange 128 and 256 without one comparator, repaired through the command line."""
    print(f"\n{'network':30} {'seconds':>8} {'checks':>6}  change, engine")
    with tempfile.TemporaryDirectory() as folder:
        for n in (128, 256):
            network = merge_exchange(n)
            rng = random.Random(n)
            indices = [0, network.size // 2, network.size - 1] + sorted(rng.sample(range(network.size), 4))
            for index in indices:
                broken = ComparatorNetwork(n, network.comparators[:index] + network.comparators[index + 1:])
                path = Path(folder) / f"merge-exchange-{n}-without-{index}.json"
                write_netlist(broken, path)
                started = time.perf_counter()
                done = subprocess.run([sys.executable, "-m", "sortcheck", "repair", str(path), "--format", "json",
                                       "--quiet"], capture_output=True, text=True)
                seconds = time.perf_counter() - started
                repair = json.loads(done.stdout)["results"][0]["repair"]
                assert done.returncode == 0 and repair["verified"] and len(repair["changes"]) == 1, done.stdout
                change = repair["changes"][0]
                print(f"{network.name + f' without {index}':30} {seconds:8.2f} {repair['verifications']:6}  "
                      f"{change['kind']} {change['comparator']} at {change['index']}, {repair['engine']}")


def main() -> None:
    if "--large" in sys.argv:
        large_rows()
        return
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
    large_rows()


if __name__ == "__main__":
    main()
