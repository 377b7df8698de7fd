"""The bank of 0-1 inputs that guides a repair search (:mod:`sortcheck.explain.repair`).

The bank holds inputs in the property's scope, packed 64 to a machine word
per channel: all of them when the property speaks about few inputs, else
the first counterexample, failing inputs sorted on the parts of the network
that the ``sat`` engine's split proves to sort (:func:`frontier_failures`),
the failing inputs a bit-parallel search finds around them (Hamming distance
1 and 2 of every failing input found, random inputs of the same number of
ones) and random inputs.  Every input in it is a
real input in scope, so a network that fails one of them is really broken.
"""

from __future__ import annotations

from itertools import combinations, islice
from typing import Iterator, Sequence

import numpy as np

from sortcheck.engines import Budget
from sortcheck.engines.networks.bitslice import AllVectors, MergeInputs, apply_network, failure_mask
from sortcheck.engines.networks.sat import proved_frontier
from sortcheck.engines.networks.split import SortedParts
from sortcheck.engines.solving import Interrupted
from sortcheck.model import ComparatorNetwork, Merges, Property, Sorts
from sortcheck.model.semantics import applies

Comparator = tuple[int, int]

#: Most inputs run on the network in one round of the search for failing inputs.
_POOL = 16384
#: Inputs sorted on the proved parts tried for failing ones (:func:`frontier_failures`), and the most seconds
#: spent proving the parts (merge exchange 256: 0.2 s).
FRONTIER_INPUTS = 16384
FRONTIER_SECONDS = 10.0


class Bank:
    """0-1 inputs in the property's scope, packed 64 to a word per channel."""

    def __init__(self, channels: int):
        self.channels = channels
        self.vectors: list[tuple[int, ...]] = []
        self._seen: set[tuple[int, ...]] = set()
        self._rows: np.ndarray | None = None
        self.initial = 0  # how many vectors the bank had before the search started

    def add(self, vector: Sequence[int]) -> bool:
        vector = tuple(int(bit) for bit in vector)
        if vector in self._seen:
            return False
        self._seen.add(vector)
        self.vectors.append(vector)
        self._rows = None
        return True

    def rows(self) -> np.ndarray:
        if self._rows is None:
            self._rows = pack(self.vectors, self.channels)
        return self._rows


def pack(vectors: Sequence[Sequence[int]], channels: int) -> np.ndarray:
    """Channel rows ``(channels, words)`` of 0-1 vectors, lane ``i`` holding vector ``i``.

    Padding lanes hold the all-zero input, which no network gets wrong.

    >>> pack([(1, 0), (1, 1)], 2).tolist()
    [[3], [2]]
    """
    lanes = max(64, -(-len(vectors) // 64) * 64)
    bits = np.zeros((lanes, channels), dtype=np.uint8)
    if vectors:
        bits[:len(vectors)] = np.asarray(vectors, dtype=np.uint8)
    packed = np.ascontiguousarray(np.packbits(bits.T, axis=1, bitorder="little"))
    return packed.view("<u8")


def failing(comparators: Sequence[Comparator], prop: Property, rows: np.ndarray, count: int) -> np.ndarray:
    """Booleans: which of the first ``count`` packed vectors the comparators get wrong."""
    work = [row.copy() for row in rows]
    apply_network(work, comparators, np.empty_like(rows[0]))
    mask = failure_mask(prop, work)
    return np.unpackbits(mask.view(np.uint8), bitorder="little")[:count].astype(bool)


def _scope_size(channels: int, prop: Property) -> int:
    return (prop.split + 1) * (channels - prop.split + 1) if isinstance(prop, Merges) else 1 << channels


def _neighbours(vector: tuple[int, ...], rng: np.random.Generator, cap: int) -> Iterator[tuple[int, ...]]:
    """Vectors at Hamming distance 1, then 2 (a sample of ``cap`` when there are more)."""
    n = len(vector)
    for i in range(n):
        yield vector[:i] + (1 - vector[i],) + vector[i + 1:]
    if n * (n - 1) // 2 <= cap:
        pairs = list(combinations(range(n), 2))
    else:  # two distinct channels each: the second drawn from the n - 1 others
        first = rng.integers(0, n, cap)
        second = rng.integers(0, n - 1, cap)
        second += second >= first
        pairs = zip(first.tolist(), second.tolist())
    for i, j in pairs:
        flipped = list(vector)
        flipped[i], flipped[j] = 1 - flipped[i], 1 - flipped[j]
        yield tuple(flipped)


def _random_inputs(channels: int, prop: Property, rng: np.random.Generator, count: int,
                   ones: int | None = None) -> list[tuple[int, ...]]:
    """Random inputs in scope; with ``ones``, random inputs with that many ones."""
    if isinstance(prop, Merges):
        source = MergeInputs(channels, prop.split)
        return [source.vector(int(i)) for i in rng.integers(0, source.total, count)]
    if ones is None:
        return [tuple(row) for row in rng.integers(0, 2, (count, channels)).tolist()]
    vectors = []
    for _ in range(count):
        bits = [0] * channels
        for position in rng.choice(channels, ones, replace=False).tolist():
            bits[position] = 1
        vectors.append(tuple(bits))
    return vectors


def frontier_failures(network: ComparatorNetwork, prop: Property, rng: np.random.Generator, count: int,
                      budget: Budget) -> list[tuple[int, ...]]:
    """Failing inputs among ``count`` inputs sorted on the proved parts just below the split's root (all of them
    when fewer), in order; none when the budget runs out first.

    Such an input passes through the proved parts unchanged, so it meets the
    comparators after them as it is: these inputs exercise the part a fault
    broke as its own inputs would (a removed comparator of merge exchange 128
    fails none of 32,768 random inputs, but 2 % of these), and they differ
    from each other far more than the neighbours of one counterexample.

    >>> from sortcheck.model.families import merge_exchange
    >>> broken = ComparatorNetwork(16, merge_exchange(16).comparators[:-1])
    >>> found = frontier_failures(broken, Sorts(), np.random.default_rng(0), 4096, Budget())
    >>> len(found) > 0 and all(broken.apply(list(v)) != sorted(v) for v in found)
    True
    """
    try:
        groups, _ = proved_frontier(network, budget)
    except Interrupted:
        return []
    source = SortedParts(groups)
    lanes = 64 * -(-min(count, source.total) // 64)
    rows = np.empty((network.channels, lanes // 64), dtype=np.uint64)
    if source.total <= count:
        source.fill(0, lanes, rows)
    else:
        source.fill_ones(source.random_ones(rng, lanes), rows)
    flags = failing(network.comparators, prop, rows, lanes)
    found = []
    for lane in np.flatnonzero(flags).tolist():
        vector = tuple(((rows[:, lane // 64] >> np.uint64(lane % 64)) & np.uint64(1)).astype(int).tolist())
        if applies(prop, vector):
            found.append(vector)
    return list(dict.fromkeys(found))


def seed_bank(network: ComparatorNetwork, prop: Property, counterexample: Sequence[int], limit: int = 512,
              random_inputs: int = 256, complete: int = 1024, seed: int = 0, budget: Budget | None = None) -> Bank:
    """The initial bank: all inputs in scope when few, else failing inputs near the counterexample.

    >>> net = ComparatorNetwork(3, ((0, 1), (1, 2)))
    >>> len(seed_bank(net, Sorts(), (1, 1, 0)).vectors)
    8
    """
    n, bank = network.channels, Bank(network.channels)
    rng = np.random.default_rng(seed)
    total = _scope_size(n, prop)
    if total <= complete:
        source = MergeInputs(n, prop.split) if isinstance(prop, Merges) else AllVectors(n)
        for index in range(total):
            bank.add(source.vector(index))
        bank.initial = len(bank.vectors)
        return bank
    bank.add(counterexample)
    if not isinstance(prop, Merges) and limit > 1:
        remaining = None if budget is None else budget.remaining()
        spent = Budget.of(FRONTIER_SECONDS if remaining is None else min(FRONTIER_SECONDS, remaining))
        for vector in frontier_failures(network, prop, rng, FRONTIER_INPUTS, spent)[:limit // 2]:
            bank.add(vector)
    frontier, tried = list(bank.vectors), set(bank.vectors)
    while frontier and len(bank.vectors) < limit:
        near = (v for seed in frontier for v in _neighbours(seed, rng, 2048) if v not in tried and applies(prop, v))
        pool = list(islice(near, _POOL))  # made lazily: 500 failing inputs of 256 channels have 1.2 million neighbours
        pool += _random_inputs(n, prop, rng, 256, sum(counterexample))
        pool = [v for v in dict.fromkeys(pool) if v not in tried][:_POOL]
        tried.update(pool)
        if not pool:
            break
        flags = failing(network.comparators, prop, pack(pool, n), len(pool))
        frontier = [v for v, bad in zip(pool, flags) if bad][:limit - len(bank.vectors)]
        for vector in frontier:
            bank.add(vector)
    for vector in _random_inputs(n, prop, rng, random_inputs):
        bank.add(vector)
    bank.initial = len(bank.vectors)
    return bank
