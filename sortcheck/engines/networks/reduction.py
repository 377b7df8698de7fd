"""Fewer 0-1 vectors than ``2**n``: the distinct vectors a prefix of the network can produce.

Only the vectors that reach a comparator matter.  A 0-1 vector of at most 64
channels is one ``uint64`` (bit ``c`` is channel ``c``).  The inputs start as
a product of independent *groups* of channels: every channel alone with the
set ``{0, 1}`` (all ``2**n`` inputs), or, for a merge, the two runs with their
``m + 1`` and ``n - m + 1`` ascending vectors.  Comparators are then taken in
network order:

* a comparator inside one group is applied to the group's set, and equal
  results are merged (``np.lexsort``);
* a comparator joining two groups first replaces them by their product, if
  that product is small enough, then is applied;
* a comparator touching a channel that an earlier comparator left for later
  (a *blocked* channel) is left for later too, and blocks its channels.

Every comparator taken this way commutes with the ones left before it (they
share no channel), so the comparators left over -- the *suffix* -- applied to
the product of the final group sets give exactly the outputs of the whole
network on its inputs.  Each set member keeps the number of inputs that
produce it (``counts``, for counting failures) and the smallest of them
(``origins``, as a ``uint64``: a real input to report as a counterexample).
The product of the set sizes never grows: a first layer of ``k`` disjoint
comparators already leaves ``3**k * 2**(n - 2k)`` vectors.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np

from sortcheck.engines.base import Budget

#: Vectors of more channels than this do not fit one machine word.
MAX_CHANNELS = 64

#: A product of two groups is formed only if it has at most this many vectors.
LARGEST_MERGE = 1 << 20
#: ... and at most the current number of vectors to evaluate over this (merging costs more per vector).
MERGE_SHARE = 16
#: Merges up to this size are always allowed.
SMALL_MERGE = 1 << 12


@dataclass(frozen=True)
class Group:
    """The distinct values a set of channels can hold, with their multiplicities.

    ``vectors`` holds only bits of ``channels``; ``origins[i]`` is the smallest
    input (restricted to these channels) giving ``vectors[i]`` and
    ``counts[i]`` how many inputs do.
    """

    channels: tuple[int, ...]
    vectors: np.ndarray
    origins: np.ndarray
    counts: np.ndarray

    @property
    def size(self) -> int:
        return int(self.vectors.size)


@dataclass(frozen=True)
class ReducedSpace:
    """What is left to evaluate after the prefix: a product of groups and the suffix comparators.

    ``suffix`` lists indices into the network's comparators; ``prefix_swaps``
    maps the index of every comparator taken into the prefix to whether it
    exchanges its values on at least one input.
    """

    channels: int
    groups: tuple[Group, ...]
    suffix: tuple[int, ...]
    prefix_swaps: dict[int, bool]
    largest_set: int
    complete: bool  # False when the budget ran out during the prefix

    @property
    def size(self) -> int:
        """Number of vectors the suffix is evaluated on (product of the group sizes)."""
        total = 1
        for group in self.groups:
            total *= group.size
        return total


def singleton_groups(channels: int) -> list[Group]:
    """Every channel alone, with the values 0 and 1: all ``2**channels`` inputs.

    >>> [g.vectors.tolist() for g in singleton_groups(2)]
    [[0, 1], [0, 2]]
    """
    one = np.ones(2, dtype=np.uint64)
    return [Group((c,), np.array([0, 1 << c], dtype=np.uint64), np.array([0, 1 << c], dtype=np.uint64), one)
            for c in range(channels)]


def ascending_run_group(first: int, stop: int) -> Group:
    """Channels ``first..stop-1`` holding an ascending 0-1 run (``0^p 1^q``).

    >>> [bin(v) for v in ascending_run_group(1, 3).vectors.tolist()]
    ['0b110', '0b100', '0b0']
    """
    values = np.array([((1 << stop) - 1) ^ ((1 << zeros) - 1) for zeros in range(first, stop + 1)], dtype=np.uint64)
    return Group(tuple(range(first, stop)), values, values.copy(), np.ones(values.size, dtype=np.uint64))


def merge_groups(channels: int, split: int) -> list[Group]:
    """The inputs of a merge: two ascending runs, split at ``split``."""
    return [ascending_run_group(0, split), ascending_run_group(split, channels)]


def first_layer_bound(channels: int, comparators: Sequence[tuple[int, int]]) -> int:
    """An upper bound on the vectors left after reduction, from the disjoint comparators in front.

    A comparator on two channels not yet touched maps the four values of its
    pair onto three, so ``k`` such comparators leave at most
    ``3**k * 2**(n - 2k)`` vectors.

    >>> first_layer_bound(4, [(0, 1), (2, 3), (0, 2)])
    9
    """
    touched: set[int] = set()
    pairs = 0
    for a, b in comparators:
        if a in touched or b in touched:
            break
        touched.update((a, b))
        pairs += 1
    return 3 ** pairs * 2 ** (channels - 2 * pairs)


def _product(first: Group, second: Group) -> Group:
    def combine(x: np.ndarray, y: np.ndarray) -> np.ndarray:
        return (x[:, None] | y[None, :]).ravel()

    counts = (first.counts[:, None] * second.counts[None, :]).ravel()
    return Group(first.channels + second.channels, combine(first.vectors, second.vectors),
                 combine(first.origins, second.origins), counts)


def apply_to_group(group: Group, a: int, b: int) -> tuple[Group, bool]:
    """Apply comparator ``(a, b)`` to every vector of the group; merge equal results.

    Returns the new group and whether the comparator exchanged anything.

    >>> pair = Group((0, 1), np.arange(4, dtype=np.uint64), np.arange(4, dtype=np.uint64), np.ones(4, dtype=np.uint64))
    >>> group, swapped = apply_to_group(pair, 0, 1)
    >>> group.vectors.tolist(), group.origins.tolist(), group.counts.tolist(), swapped
    ([0, 2, 3], [0, 1, 3], [1, 2, 1], True)
    """
    vectors = group.vectors
    swap = ((vectors >> np.uint64(a)) & ~(vectors >> np.uint64(b))) & np.uint64(1)
    if not swap.any():
        return group, False
    vectors = vectors ^ ((swap << np.uint64(a)) | (swap << np.uint64(b)))
    order = np.lexsort((group.origins, vectors))
    vectors = vectors[order]
    starts = np.flatnonzero(np.concatenate(([True], vectors[1:] != vectors[:-1])))
    counts = np.add.reduceat(group.counts[order], starts)
    return Group(group.channels, vectors[starts], group.origins[order][starts], counts), True


def reduce_prefix(channels: int, comparators: Sequence[tuple[int, int]], groups: Sequence[Group],
                  budget: Budget = Budget(), largest_merge: int = LARGEST_MERGE) -> ReducedSpace:
    """Take as many comparators as the size limits allow into the groups' sets (see the module text).

    Examples
    --------
    A 4-channel sorter taken whole: only the five sorted vectors remain.

    >>> space = reduce_prefix(4, [(0, 2), (1, 3), (0, 1), (2, 3), (1, 2)], singleton_groups(4))
    >>> space.suffix, [bin(v) for v in space.groups[0].vectors.tolist()], space.groups[0].counts.tolist()
    ((), ['0b0', '0b1000', '0b1100', '0b1110', '0b1111'], [1, 4, 6, 4, 1])
    """
    group_of = {}
    live: dict[int, Group] = {}
    for number, group in enumerate(groups):
        live[number] = group
        for channel in group.channels:
            group_of[channel] = number
    size = 1
    for group in groups:
        size *= group.size
    blocked: set[int] = set()
    suffix: list[int] = []
    swaps: dict[int, bool] = {}
    largest = max((g.size for g in groups), default=1)
    complete = True
    for index, (a, b) in enumerate(comparators):
        if not complete or a in blocked or b in blocked:
            blocked.update((a, b))
            suffix.append(index)
            continue
        if budget.expired():
            complete = False
            suffix.append(index)
            continue
        first, second = group_of[a], group_of[b]
        if first != second:
            joined = live[first].size * live[second].size
            if joined > max(SMALL_MERGE, min(largest_merge, size // MERGE_SHARE)):
                blocked.update((a, b))
                suffix.append(index)
                continue
            old = live[first].size * live[second].size
            live[first] = _product(live[first], live.pop(second))
            for channel in live[first].channels:
                group_of[channel] = first
            largest = max(largest, joined)
        else:
            old = live[first].size
        live[first], swaps[index] = apply_to_group(live[first], a, b)
        size = size // old * live[first].size
    ordered = sorted(live.values(), key=lambda g: min(g.channels))
    return ReducedSpace(channels, tuple(ordered), tuple(suffix), swaps, largest, complete)
