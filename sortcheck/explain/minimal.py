"""Provably minimal counterexamples for comparator networks.

The measure of a 0-1 input is its number of ones or of zeros, whichever is
smaller.  Minimisation runs in two phases:

1. shrink the engine's counterexample with the passes of
   :mod:`sortcheck.explain.shrink`, evaluating the candidates of each pass
   bit-parallel, which gives an upper bound ``u``;
2. prove it: evaluate every 0-1 input with ``w`` ones and every one with
   ``w`` zeros, for ``w = 0, 1, ...`` in that order, as long as there are at
   most ``max_vectors`` of them (the first failing one is the minimum);
   beyond that, search the counts of ones of the parts the ``sat`` engine
   proves to sort (:mod:`sortcheck.explain.minimal_structure`: enumerated
   when few, else by SAT on the CNF after those parts), and last ask a SAT
   solver, on the whole network, for failing inputs of ever smaller measure
   (cardinality constraints), until it answers that none is smaller.

Merges speak only of the ``(m+1)(n-m+1)`` inputs with two ascending runs,
so they are searched exhaustively.  When the budget runs out, the result
keeps the best counterexample found, with ``minimal`` false.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import replace
from typing import Iterator, Sequence

import numpy as np

from sortcheck.engines.base import Budget, Counterexample

from sortcheck.engines.networks.bitslice import LANES, MergeInputs, apply_network, failure_mask
from sortcheck.engines.networks.cnf import encode_network, violation_clauses
from sortcheck.explain.diagnose import permutation_of
from sortcheck.explain.minimal_structure import lower_by_sat, search_by_structure
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
    if padded != count:
        vectors = np.concatenate([vectors, np.zeros((padded - count, channels), dtype=np.uint8)])
    packed = np.packbits(vectors, axis=0, bitorder="little")  # (padded / 8, channels): pack first, then transpose
    return list(np.ascontiguousarray(packed.T).view("<u8"))


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


def _weight_batches(channels: int, weight: int) -> Iterator[np.ndarray]:
    """The positions of the ones of every vector with ``weight`` ones, lexicographically, as (count, weight) arrays."""
    if weight == 0:
        yield np.zeros((1, 0), dtype=np.int64)
        return
    combinations = itertools.combinations(range(channels), weight)
    while True:
        flat = np.fromiter(itertools.chain.from_iterable(itertools.islice(combinations, BATCH)), dtype=np.int64)
        if flat.size == 0:
            return
        yield flat.reshape(-1, weight)


def _rows_of(positions: np.ndarray, channels: int, ones: bool) -> list[np.ndarray]:
    """Bit-sliced rows of the vectors whose ones (or, for ``ones`` false, zeros) sit at ``positions``."""
    count, weight = positions.shape
    words = -(-count // LANES)
    rows = np.zeros((channels, words), dtype=np.uint64)
    lanes = np.repeat(np.arange(count, dtype=np.int64), weight)
    np.bitwise_or.at(rows, (positions.ravel(), lanes // LANES), np.left_shift(np.uint64(1), (lanes % LANES)
                                                                             .astype(np.uint64)))
    if not ones:
        rows = ~rows  # padding lanes become all-one vectors, which no network gets wrong
    return list(rows)


def _search_by_weight(network: ComparatorNetwork, prop: Property, below: int, budget: Budget,
                      max_vectors: int) -> tuple[tuple[int, ...] | None, int]:
    """Evaluate every input of measure 0, 1, ... below ``below`` while ``max_vectors`` allows.

    Returns the first failing input found (of least measure) or None, and the
    measure up to which (exclusive) the search was complete.
    """
    n, spent = network.channels, 0
    for weight in range(below):
        sides = (True, False) if 2 * weight != n else (True,)
        spent += math.comb(n, weight) * len(sides)
        if spent > max_vectors or budget.expired():
            return None, weight
        for ones in sides:
            for positions in _weight_batches(n, weight):
                if budget.expired():
                    return None, weight
                rows = _rows_of(positions, n, ones)
                apply_network(rows, network.comparators, np.empty_like(rows[0]))
                bits = np.unpackbits(failure_mask(prop, rows).view(np.uint8), bitorder="little")[:len(positions)]
                hits = np.flatnonzero(bits)
                if hits.size:
                    vector = [0 if ones else 1] * n
                    for position in positions[hits[0]]:
                        vector[position] = 1 if ones else 0
                    return tuple(vector), weight
    return None, below


def _search_by_sat(network: ComparatorNetwork, prop: Property, floor: int, best: tuple[int, ...], budget: Budget
                   ) -> tuple[tuple[int, ...], int]:
    """Lower the measure of ``best`` with a SAT solver on the whole network's CNF, down to ``floor``."""
    encoding = encode_network(network)
    condition = violation_clauses(prop, list(encoding.inputs), list(encoding.outputs), encoding.pool)
    return lower_by_sat(encoding.clauses + condition, list(encoding.inputs), encoding.pool, floor, best, budget)


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
                                    budget: Budget, max_vectors: int = MAX_VECTORS, structure: bool = True
                                    ) -> Counterexample:
    """A failing 0-1 input of least measure, proved minimal when the search completes.

    ``structure`` false skips the search over the counts of the proved parts
    (the whole-network SAT search then does all the proving).

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
        smaller, covered = _search_by_weight(network, prop, zero_one_measure(best), budget, max_vectors)
        if smaller is not None:
            best = smaller
        elif covered < zero_one_measure(best):
            structured = search_by_structure(network, prop, covered, best, budget) if structure else None
            if structured is not None:
                best, covered = structured
            if covered < zero_one_measure(best):
                best, covered = _search_by_sat(network, prop, covered, best, budget)
        complete = covered >= zero_one_measure(best)
    output = tuple(network.apply(list(best)))
    reason = violation(prop, best, output)
    if reason is None:
        raise AssertionError(f"internal error: minimised input {best} meets {prop.describe()}")
    return replace(example, input=best, output=output, violation=reason, minimal=complete,
                   ones=zero_one_measure(best), permutation=tuple(permutation_of(list(best))))
