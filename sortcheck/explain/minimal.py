"""Provably minimal counterexamples for comparator networks.

The measure of a 0-1 input is its number of ones or of zeros, whichever is
smaller.  Minimisation runs in two phases:

1. shrink the engine's counterexample with the passes of
   :mod:`sortcheck.explain.shrink`, evaluating the candidates of each pass
   bit-parallel, which gives an upper bound ``u``;
2. prove it: evaluate every 0-1 input with ``w`` ones and every one with
   ``w`` zeros, for ``w = 0, 1, ..., u - 1`` in that order; the first failing
   one is the minimum, and if none fails the shrunk input is minimal.

Merges speak only of the ``(m+1)(n-m+1)`` inputs with two ascending runs,
so they are searched exhaustively.  When the inputs of phase 2 would exceed
``max_vectors``, the result keeps the best counterexample found, with
``minimal`` false.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import replace
from typing import Iterator, Sequence

import numpy as np

from sortcheck.engines.base import Budget, Counterexample
from sortcheck.engines.bitslice import LANES, MergeInputs, apply_network, failure_mask
from sortcheck.explain.diagnose import permutation_of
from sortcheck.explain.shrink import ZERO_ONE_PASSES, shrink, zero_one_measure
from sortcheck.model import ComparatorNetwork, Merges, Property
from sortcheck.model.semantics import violation

#: Most 0-1 inputs phase 2 evaluates before it gives up proving minimality.
MAX_VECTORS = 20_000_000

#: Vectors evaluated per bit-parallel batch.
BATCH = 1 << 16


def pack(vectors: np.ndarray) -> list[np.ndarray]:
    """Bit-slice a (count, channels) 0/1 matrix into one uint64 row per channel (padding lanes are 0).

    >>> [int(row[0]) for row in pack(np.array([[1, 0], [1, 1], [0, 1]], dtype=np.uint8))]
    [3, 6]
    """
    count, channels = vectors.shape
    padded = -(-max(count, 1) // LANES) * LANES
    matrix = np.zeros((channels, padded), dtype=np.uint8)
    matrix[:, :count] = vectors.T
    packed = np.packbits(matrix, axis=1, bitorder="little")
    return [row.view("<u8").copy() for row in packed]


def failing(network: ComparatorNetwork, prop: Property, vectors: np.ndarray) -> np.ndarray:
    """A boolean per row of ``vectors``: whether the network breaks ``prop`` on it."""
    rows = pack(vectors)
    apply_network(rows, network.comparators, np.empty_like(rows[0]))
    bits = np.unpackbits(failure_mask(prop, rows).view(np.uint8), bitorder="little")
    return bits[:len(vectors)].astype(bool)


class _Predicate:
    """``still_fails`` for the shrink passes, with a bit-parallel ``batch``."""

    def __init__(self, network: ComparatorNetwork, prop: Property):
        self.network, self.prop = network, prop

    def __call__(self, vector: Sequence[int]) -> bool:
        return bool(self.batch([vector])[0])

    def batch(self, vectors: Sequence[Sequence[int]]) -> np.ndarray:
        return failing(self.network, self.prop, np.array(vectors, dtype=np.uint8).reshape(len(vectors), -1))


def _weight_vectors(channels: int, weight: int, ones: bool) -> Iterator[np.ndarray]:
    """All vectors with ``weight`` ones (or ``weight`` zeros), in lexicographic order of positions, in batches."""
    combinations = itertools.combinations(range(channels), weight)
    while True:
        chunk = list(itertools.islice(combinations, BATCH))
        if not chunk:
            return
        matrix = np.zeros((len(chunk), channels), dtype=np.uint8)
        if weight:
            positions = np.array(chunk, dtype=np.int64)
            matrix[np.arange(len(chunk))[:, None], positions] = 1
        yield matrix if ones else 1 - matrix


def _search_by_weight(network: ComparatorNetwork, prop: Property, below: int, budget: Budget,
                      max_vectors: int) -> tuple[tuple[int, ...] | None, bool]:
    """The first failing input of measure < ``below`` (None if none) and whether the search was complete."""
    n = network.channels
    needed = sum(math.comb(n, w) * (1 if 2 * w == n else 2) for w in range(below))
    if needed > max_vectors:
        return None, False
    for weight in range(below):
        for ones in (True, False) if 2 * weight != n else (True,):
            for matrix in _weight_vectors(n, weight, ones):
                if budget.expired():
                    return None, False
                hits = np.flatnonzero(failing(network, prop, matrix))
                if hits.size:
                    return tuple(int(v) for v in matrix[hits[0]]), True
    return None, True


def _merge_minimum(network: ComparatorNetwork, prop: Merges) -> tuple[int, ...]:
    source = MergeInputs(network.channels, prop.split)
    best, best_measure = None, None
    rows = [np.empty(source.words, dtype=np.uint64) for _ in range(network.channels)]
    for number in range(source.blocks):
        block = source.fill(number, rows)
        apply_network(rows, network.comparators, np.empty(source.words, dtype=np.uint64))
        bits = np.unpackbits(failure_mask(prop, rows).view(np.uint8), bitorder="little")[:block.vectors]
        for lane in np.flatnonzero(bits):
            vector = source.vector(block.start + int(lane))
            if best_measure is None or zero_one_measure(vector) < best_measure:
                best, best_measure = vector, zero_one_measure(vector)
    return best


def minimize_network_counterexample(network: ComparatorNetwork, prop: Property, example: Counterexample,
                                    budget: Budget, max_vectors: int = MAX_VECTORS) -> Counterexample:
    """A failing 0-1 input of least measure, proved minimal when the search completes.

    Examples
    --------
    >>> from sortcheck.model import Sorts
    >>> net = ComparatorNetwork(4, ((0, 1), (2, 3), (0, 2), (1, 3)))   # misses the middle comparator
    >>> first = Counterexample((0, 1, 1, 0), tuple(net.apply([0, 1, 1, 0])), "0-1", "")
    >>> small = minimize_network_counterexample(net, Sorts(), first, Budget())
    >>> small.input, small.output, small.minimal, small.ones, small.permutation
    ((0, 1, 0, 1), (0, 1, 0, 1), True, 2, (0, 2, 1, 3))
    """
    if isinstance(prop, Merges):
        best, complete = _merge_minimum(network, prop), True
    else:
        best = shrink(tuple(example.input), _Predicate(network, prop), ZERO_ONE_PASSES)
        smaller, complete = _search_by_weight(network, prop, zero_one_measure(best), budget, max_vectors)
        if smaller is not None:
            best = smaller
    output = tuple(network.apply(list(best)))
    reason = violation(prop, best, output)
    if reason is None:
        raise AssertionError(f"internal error: minimised input {best} meets {prop.describe()}")
    return replace(example, input=best, output=output, violation=reason, minimal=complete,
                   ones=zero_one_measure(best), permutation=tuple(permutation_of(list(best))))
