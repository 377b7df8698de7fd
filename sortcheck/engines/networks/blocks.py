"""Independent sub-networks on disjoint channel sets, and the 0-1 vectors they can hand on.

A question of the ``sat`` engine reads: after the comparators ``C``, does
every 0-1 vector that is sorted on each of some *source groups* of channels
meet a target?  (The source groups are the proved parts of
:mod:`sortcheck.engines.networks.split`; single channels are groups too.)
When ``C`` begins with sub-networks ``S_1 .. S_k`` on disjoint channel sets
``H_1 .. H_k`` (any channel sets, not necessarily contiguous) followed by the
rest ``Q``, and each ``S_j`` sorts ``H_j`` on its own, the question shrinks:

* ``S_j`` maps every vector to the sorted vector of ``H_j`` with the same
  number of ones there, so after the sub-networks a vector ``v`` has become
  the vector ``u(c)`` that is sorted on each ``H_j`` with ``c_j`` ones, where
  ``c_j`` counts the ones of ``v`` on ``H_j``;
* so the answer is yes exactly when ``Q`` brings every ``u(c)`` to the
  target, for ``c`` in the *reachable* count vectors
  ``{c(v) : v sorted on each source group}``;
* counting is additive over disjoint groups: a source group ``F`` sorted with
  ``a`` ones holds its ones on fixed channels, which fall into the ``H_j`` in
  a fixed way ``delta_F(a)``; the reachable set is the sum of the sets
  ``{delta_F(a) : 0 <= a <= |F|}`` over the source groups
  (:class:`Reachable`, one pass over the groups on a boolean array of shape
  ``(|H_1|+1, ..., |H_k|+1)``);
* a failing ``c`` comes with counts ``a_F`` per source group that add up to
  it (:meth:`Reachable.witness`), so the source vector with those counts is
  a failing vector of the original question, as it stands.

:func:`find_blocks` finds the sub-networks by analysing the comparators
alone: read in the order that delays joins of channel groups
(:func:`~sortcheck.engines.networks.split.join_delayed_order`), the last join
splits the channels into groups that no earlier comparator connects; the
comparators before that join are the sub-networks, the rest is ``Q``.
Parberry's pairwise network, once its first layer is a proved part below,
splits so into its two interleaved halves (even and odd channels), whose
merge then sees about ``n^2/8`` vectors instead of ``3^(n/2)``.

Examples
--------
>>> from sortcheck.model.families import pairwise
>>> net = pairwise(8)
>>> rest = list(net.comparators[4:])          # after the first layer
>>> blocks = find_blocks(rest, range(8))
>>> blocks.channels
((1, 3, 5, 7), (0, 2, 4, 6))
>>> pairs = [((2 * i, 2 * i + 1), "ascending") for i in range(4)]
>>> reach = Reachable(pairs, blocks.channels)
>>> reach.total, reach.witness((3, 2))          # 3 ones on the odd channels, 2 on the even ones
(15, [2, 2, 1, 0])
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np

from sortcheck.engines.networks.split import SortedParts, join_delayed_order, split_tree
from sortcheck.model import ComparatorNetwork


@dataclass(frozen=True)
class Blocks:
    """A comparator sequence cut into independent sub-networks and the comparators after them.

    ``channels[j]`` is the channel set of block ``j`` (ascending, original
    labels); ``members[j]`` the positions (into the sequence) of its
    comparators and ``after`` those of the rest, each in an order that is
    valid for evaluation (block comparators before the rest).
    """

    channels: tuple[tuple[int, ...], ...]
    members: tuple[tuple[int, ...], ...]
    after: tuple[int, ...]


def find_blocks(pairs: Sequence[tuple[int, int]], channels: Sequence[int]) -> Blocks | None:
    """The sub-networks on disjoint channel sets that ``pairs`` (a valid order) begins with, or None.

    ``channels`` are the channels the comparators act on (and possibly
    others, which become blocks of one channel).  None when the comparators
    connect all channels from the start (a single block).

    >>> find_blocks([(0, 1), (2, 3), (1, 2)], range(4))
    Blocks(channels=((0, 1), (2, 3)), members=((0,), (1,)), after=(2,))
    >>> find_blocks([(0, 1), (1, 2), (0, 1)], range(3))  # a block of one channel; (1, 2) and (0, 1) come after
    Blocks(channels=((0, 1), (2,)), members=((0,), ()), after=(1, 2))
    """
    labels = sorted(channels)
    rank = {channel: index for index, channel in enumerate(labels)}
    local = ComparatorNetwork(len(labels), tuple((rank[a], rank[b]) for a, b in pairs))
    order = join_delayed_order(local)
    parts = split_tree(local, order)
    root = parts[-1]
    if len(root.children) < 2:
        return None
    block_of = [0] * len(labels)
    for block, child in enumerate(root.children):
        for channel in parts[child].channels:
            block_of[channel] = block
    cut = order.index(root.segment[0]) if root.segment else len(order)
    members: list[list[int]] = [[] for _ in root.children]
    for position in order[:cut]:
        members[block_of[local.comparators[position][0]]].append(position)
    return Blocks(tuple(tuple(labels[c] for c in parts[child].channels) for child in root.children),
                  tuple(tuple(m) for m in members), tuple(order[cut:]))


def block_network(pairs: Sequence[tuple[int, int]], block: Sequence[int]) -> ComparatorNetwork:
    """The comparators ``pairs`` (all inside ``block``) as a network of their own on ``len(block)`` channels.

    Channels are renumbered in ascending order, so "sorted by channel index"
    means the same before and after.

    >>> block_network([(3, 7), (1, 3)], (1, 3, 7)).comparators
    ((1, 2), (0, 1))
    """
    rank = {channel: index for index, channel in enumerate(sorted(block))}
    return ComparatorNetwork(len(block), tuple((rank[a], rank[b]) for a, b in pairs))


def canonical(network: ComparatorNetwork) -> tuple:
    """A key equal for networks that differ only in the order of comparators on disjoint channels.

    Each comparator gets its greedy layer (one more than the last layer on its
    channels); comparators of a layer share no channel, so sorting by (layer,
    comparator) gives one order equivalent to every valid one.

    >>> canonical(ComparatorNetwork(4, ((2, 3), (0, 1)))) == canonical(ComparatorNetwork(4, ((0, 1), (2, 3))))
    True
    """
    depth = [0] * network.channels
    keyed = []
    for a, b in network.comparators:
        layer = max(depth[a], depth[b])
        depth[a] = depth[b] = layer + 1
        keyed.append((layer, a, b))
    return (network.channels, tuple(sorted(keyed)))


class Reachable:
    """The count vectors (ones on each block) of the 0-1 vectors sorted on each source group.

    Parameters
    ----------
    sources : list of (channels, order)
        Disjoint source groups, each sorted ``"ascending"`` or
        ``"descending"`` by channel index (as in :class:`SortedParts`).
    blocks : sequence of channel tuples
        Disjoint channel sets covering the source groups' channels.

    Attributes
    ----------
    array : numpy.ndarray of bool
        ``array[c]`` tells whether count vector ``c`` is reachable.
    total : int
        How many are.
    """

    def __init__(self, sources: list[tuple[tuple[int, ...], str]], blocks: Sequence[Sequence[int]]):
        self.shape = tuple(len(block) + 1 for block in blocks)
        block_of = {channel: index for index, block in enumerate(blocks) for channel in block}
        self.deltas = [self._deltas(members, order, block_of, len(self.shape)) for members, order in sources]
        self.every = max(1, math.isqrt(len(self.deltas)))
        self.snapshots: list[tuple[np.ndarray, np.ndarray]] = []
        reach, spare, high = self._start()
        for index, deltas in enumerate(self.deltas):
            if index % self.every == 0:
                self.snapshots.append((reach.copy(), high.copy()))
            reach, spare, high = _add(reach, spare, high, deltas)
        self.array = reach
        self.total = int(reach.sum())

    @staticmethod
    def _deltas(members: Sequence[int], order: str, block_of: dict, blocks: int) -> np.ndarray:
        """Row ``a``: the ones on each block of the group's sorted vector with ``a`` ones."""
        rows = np.zeros((len(members) + 1, blocks), dtype=np.int64)
        ones_first = list(members) if order == "descending" else list(reversed(members))
        for count, channel in enumerate(ones_first, start=1):
            rows[count] = rows[count - 1]
            rows[count, block_of[channel]] += 1
        return rows

    def _start(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        reach = np.zeros(self.shape, dtype=bool)
        reach[(0,) * len(self.shape)] = True
        return reach, np.zeros(self.shape, dtype=bool), np.zeros(len(self.shape), dtype=np.int64)

    def counts(self) -> list[np.ndarray]:
        """The reachable count vectors, one array of counts per block, in index order."""
        return list(np.unravel_index(np.flatnonzero(self.array), self.shape))

    def witness(self, counts: Sequence[int]) -> list[int]:
        """Ones per source group (in order) whose sorted vectors together have ``counts`` ones on the blocks.

        Walks back through the groups, recomputing the reachable sets of each
        stretch of ``sqrt(groups)`` groups from a snapshot (memory for about
        ``2 sqrt(groups)`` arrays instead of one per group).
        """
        goal = np.array(counts, dtype=np.int64)
        if not self.array[tuple(goal)]:
            raise ValueError(f"count vector {tuple(counts)} is not reachable")
        ones = [0] * len(self.deltas)
        for stretch in reversed(range(len(self.snapshots))):
            first = stretch * self.every
            reach, high = self.snapshots[stretch]
            states = [reach]
            spare = np.zeros(self.shape, dtype=bool)
            for index in range(first, min(first + self.every, len(self.deltas)) - 1):
                current, spare, high = _add(states[-1].copy(), spare, high, self.deltas[index])
                states.append(current)
            for index in reversed(range(first, first + len(states))):
                before = states[index - first]
                for count, delta in enumerate(self.deltas[index]):
                    rest = goal - delta
                    if (rest >= 0).all() and before[tuple(rest)]:
                        ones[index], goal = count, rest
                        break
                else:  # pragma: no cover - the forward pass said goal was reachable
                    raise AssertionError("internal error: reachable counts without a witness")
        return ones


def _add(reach: np.ndarray, spare: np.ndarray, high: np.ndarray, deltas: np.ndarray
         ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Reachable sets plus one group: ``{r + d}`` over reachable ``r`` and the group's rows ``d``.

    Only the box ``0..high`` (the largest counts so far) can hold reachable
    vectors, so only it is read; the new box is cleared in ``spare`` and
    written there.  Everything outside a box is False in both arrays.
    Returns the new array, the free one, and the new box.
    """
    unique = np.unique(deltas, axis=0)
    grown = high + unique.max(axis=0)
    spare[tuple(slice(0, h + 1) for h in grown)] = False
    source = reach[tuple(slice(0, h + 1) for h in high)]
    for delta in unique:
        spare[tuple(slice(d, d + h + 1) for d, h in zip(delta, high))] |= source
    return spare, reach, grown


class ReachableVectors:
    """The vectors sorted on each block whose count vectors are reachable: a source for enumeration.

    Offers what the ``sat`` engine's enumeration needs of
    :class:`SortedParts` (``total``, ``fill``, ``vector``), except that
    :meth:`vector` gives, for a vector that fails after the blocks, a
    vector sorted on the *source* groups that the blocks turn into it: a
    failing vector of the question before the blocks.

    >>> pairs = [((0, 1), "ascending"), ((2, 3), "ascending")]
    >>> source = ReachableVectors(pairs, [((0, 2), "ascending"), ((1, 3), "ascending")])
    >>> source.total, source.counts_of(4), source.vector(4, 4)
    (6, (1, 2), (1, 1, 0, 1))
    """

    def __init__(self, sources: list[tuple[tuple[int, ...], str]], blocks: list[tuple[tuple[int, ...], str]]):
        self.sources = SortedParts(sources)
        self.reach = Reachable(sources, [channels for channels, _ in blocks])
        self.ones = self.reach.counts()
        self.total = self.reach.total
        self.parts = SortedParts(blocks)

    def fill(self, start: int, lanes: int, rows: list) -> int:
        """Write vectors ``start .. start+lanes-1`` into ``rows``; lanes past the end repeat vector 0."""
        valid = int(min(lanes, max(0, self.total - start)))
        picked = np.zeros(lanes, dtype=np.int64)
        picked[:valid] = np.arange(start, start + valid)
        self.parts.fill_ones([ones[picked] for ones in self.ones], rows)
        return valid

    def counts_of(self, index: int) -> tuple[int, ...]:
        """The count vector (ones on each block) of vector ``index``."""
        return tuple(int(ones[index]) for ones in self.ones)

    def vector(self, index: int, channels: int) -> tuple[int, ...]:
        """A vector sorted on the source groups that the blocks turn into vector ``index``."""
        return self.sources.vector_of_ones(self.reach.witness(self.counts_of(index)), channels)
