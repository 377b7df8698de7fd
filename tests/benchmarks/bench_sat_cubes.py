"""Benchmark: can one hard SAT question of the ``sat`` engine be cut into cubes that workers answer faster?

Run from the repository root (a few minutes)::

    python tests/benchmarks/bench_sat_cubes.py            # 100 and 112 channels
    python tests/benchmarks/bench_sat_cubes.py 120        # other sizes

The networks are a butterfly on a shuffled order of the channels (every
level joins the halves of each group of the level below) followed by
Batcher's merge exchange network, which sorts (Knuth, TAOCP vol. 3, 5.3.4),
so the whole network sorts; the butterfly leaves the engine no sorting parts
to split along, so its check is one SAT call on the whole network (the
question measured here).  Two ways to cut that question, each a cover of
every 0-1 input:

* *input cubes*: two comparators of the first layer, their channels fixed to
  ``00``, ``01`` or ``11`` (``10`` gives the same vector as ``01`` after the
  comparator), 9 cubes;
* *weight cubes*: the number of ones of the input fixed (a totalizer from
  python-sat), one cube per weight 1 .. n-1 (weights 0 and n are sorted
  already), of which a few are timed.

Each cube is the whole network's CNF with the cube's clauses, on a fresh
glucose 4.  The rows give the whole call's time, the slowest cube's and the
sum, and so the best wall time any number of workers could reach (the
slowest cube) against the whole call.  Measured (2-core Xeon, 2026-12, at
100 / 112 / 144 / 176 channels, whole calls of 1.6 / 2.2 / 5.6 / 12.5 s): a
cube took 0.84-1.4x the whole call on average and the slowest 1.0-1.8x, so
no split beats the whole call even with unlimited workers; the project
offers no cubes for this reason (DEVELOPERS.md, "What splits").
"""

from __future__ import annotations

import random
import sys
import time

from pysat.card import CardEnc, EncType
from pysat.formula import IDPool
from pysat.solvers import Solver

from sortcheck.engines.networks.cnf import encode_network, violation_clauses
from sortcheck.model import ComparatorNetwork, Sorts
from sortcheck.model.families import build_family


def butterfly(channels: list[int]) -> list[tuple[int, int]]:
    """Comparators (low index first) joining the halves of ``channels``, recursively, halves first."""
    if len(channels) < 2:
        return []
    half = len(channels) // 2
    low, high = channels[:half], channels[half:]
    pairs = [tuple(sorted((low[i], high[i]))) for i in range(half)]
    if len(high) > half:
        pairs.append(tuple(sorted((low[-1], high[-1]))))
    return butterfly(low) + butterfly(high) + pairs


def unstructured(n: int, seed: int = 1) -> ComparatorNetwork:
    order = list(range(n))
    random.Random(seed).shuffle(order)
    return ComparatorNetwork(n, tuple(butterfly(order)) + build_family("merge-exchange", n).comparators)


def solve(clauses: list[list[int]]) -> tuple[bool, float]:
    started = time.perf_counter()
    with Solver(name="glucose4", bootstrap_with=clauses) as solver:
        answer = solver.solve()
    return answer, time.perf_counter() - started


def first_layer(network: ComparatorNetwork, count: int) -> list[tuple[int, int]]:
    touched, pairs = set(), []
    for a, b in network.comparators:
        if a not in touched and b not in touched:
            pairs.append((a, b))
        touched.update((a, b))
    return pairs[:count]


def main() -> None:
    sizes = [int(arg) for arg in sys.argv[1:]] or [100, 112]
    print(f"| channels | whole call | cubes | slowest cube | sum of cubes | best speed-up, any number of workers |\n"
          f"| --- | --- | --- | --- | --- | --- |")
    for n in sizes:
        network = unstructured(n)
        pool = IDPool()
        inputs = [pool.id(("input", c)) for c in range(n)]
        encoding = encode_network(network, pool, None, inputs)
        base = list(encoding.clauses) + violation_clauses(Sorts(), inputs, encoding.outputs, pool)
        answer, whole = solve(base)
        assert answer is False, "the network sorts, so the whole question is unsatisfiable"
        (a, b), (c, d) = first_layer(network, 2)
        patterns = [(0, 0), (0, 1), (1, 1)]
        times = []
        for first in patterns:
            for second in patterns:
                units = [[inputs[ch] if v else -inputs[ch]] for ch, v in zip((a, b, c, d), first + second)]
                answer, seconds = solve(base + units)
                assert answer is False
                times.append(seconds)
        print(f"| {n} | {whole:.2f} s | 9 input cubes | {max(times):.2f} s | {sum(times):.2f} s | "
              f"{whole / max(times):.2f}x |", flush=True)
        weights = [n // 10, n // 4, n // 2]
        times = []
        for weight in weights:
            card = CardEnc.equals(lits=inputs, bound=weight, top_id=pool.top, encoding=EncType.totalizer)
            answer, seconds = solve(base + card.clauses)
            assert answer is False
            times.append(seconds)
        print(f"| {n} | {whole:.2f} s | weight cubes {', '.join(map(str, weights))} of {n - 1} | "
              f"{max(times):.2f} s | {sum(times):.2f} s (3 of {n - 1}) | at most {whole / max(times):.2f}x |",
              flush=True)


if __name__ == "__main__":
    main()
