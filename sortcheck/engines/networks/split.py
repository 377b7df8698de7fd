"""Splitting a comparator network along its own structure into parts that are proved one by one.

Comparators on disjoint channels commute, so a network may be evaluated in any
order that keeps the order of the comparators on each channel.
:func:`join_delayed_order` picks the order that joins groups of connected
channels as late as possible.  Read in that order, each comparator either acts
inside one group of channels connected so far or joins two groups; the joins
form a binary tree (:func:`split_tree`): a *part* is a group, its children
the two groups it joined, its *segment* the comparators applied to it before
it is joined into a larger group.

If each child sorts its channels (ascending by channel index, or descending),
its outputs are exactly the sorted vectors of its channels, so the part sorts
its channels iff its segment sorts every 0-1 vector that is sorted on each
child.  Batcher's networks split into merges this way, whose inputs are only
``(s+1)(t+1)`` sorted pairs of runs.  A part that does not sort is *dissolved*:
its parent then looks through it to the parts below (:func:`frontier`).

Every vector that is sorted on the proved parts is reachable: feeding it to
the network leaves it unchanged on every proved part, since a sorter maps a
sorted input to itself.  So a failing vector found above the parts is a real
counterexample input, as it stands.

>>> from sortcheck.model.families import bitonic
>>> net = bitonic(4)
>>> tree = split_tree(net, join_delayed_order(net))
>>> [(part.channels, part.children) for part in tree[4:]]
[((0, 1), (0, 1)), ((2, 3), (2, 3)), ((0, 1, 2, 3), (4, 5))]
"""

from __future__ import annotations

import heapq

import numpy as np
from dataclasses import dataclass, field

from sortcheck.model import ComparatorNetwork


@dataclass
class Part:
    """A group of channels, the two parts it joined, and the comparators applied to it (indices)."""

    channels: tuple[int, ...]
    children: tuple[int, ...] = ()
    segment: list[int] = field(default_factory=list)
    #: None while unchecked; "ascending", "descending" when proved to sort so; "dissolved" otherwise.
    order: str | None = None


class _Groups:
    """Union-find over channels."""

    def __init__(self, channels: int):
        self.parent = list(range(channels))

    def find(self, channel: int) -> int:
        parent = self.parent
        while parent[channel] != channel:
            parent[channel] = parent[parent[channel]]
            channel = parent[channel]
        return channel

    def join(self, a: int, b: int) -> None:
        self.parent[self.find(b)] = self.find(a)


def join_delayed_order(network: ComparatorNetwork) -> list[int]:
    """Comparator indices in an equivalent order that delays every join of two channel groups.

    A comparator is ready when it is the next one on both its channels.  Ready
    comparators inside one group go first; a join goes only when none is
    left, the earliest join in network order first.

    >>> net = ComparatorNetwork(4, ((0, 1), (1, 2), (2, 3), (0, 1)))
    >>> join_delayed_order(net)  # (2, 3) would join the group {0, 1, 2} with 3: it waits for (0, 1)
    [0, 1, 3, 2]
    """
    comparators = network.comparators
    on_channel: list[list[int]] = [[] for _ in range(network.channels)]
    for index, (a, b) in enumerate(comparators):
        on_channel[a].append(index)
        on_channel[b].append(index)
    head = [0] * network.channels
    groups = _Groups(network.channels)

    def ready(index: int) -> bool:
        a, b = comparators[index]
        on_a, on_b = on_channel[a], on_channel[b]
        return (head[a] < len(on_a) and on_a[head[a]] == index) and (head[b] < len(on_b) and on_b[head[b]] == index)

    inside: list[int] = []
    joins: list[int] = []  # a heap of the waiting joins (and of joins that have since come inside: skipped)
    waiting: set[int] = set()
    touching: dict[int, list[int]] = {}  # group -> joins waiting on it (some may have come inside since)

    def offer(index: int) -> None:
        a, b = comparators[index]
        group_a, group_b = groups.find(a), groups.find(b)
        if group_a == group_b:
            inside.append(index)
        else:
            heapq.heappush(joins, index)
            waiting.add(index)
            touching.setdefault(group_a, []).append(index)
            touching.setdefault(group_b, []).append(index)

    def join(index: int) -> None:
        # Only the joins between the two groups come inside; each of them waits on both, so the shorter
        # list of the two finds them all (merging shorter into longer keeps the total work n log n).
        a, b = comparators[index]
        shorter, longer = sorted((touching.pop(groups.find(a), []), touching.pop(groups.find(b), [])), key=len)
        groups.join(a, b)
        for other in shorter:
            if other in waiting and groups.find(comparators[other][0]) == groups.find(comparators[other][1]):
                waiting.discard(other)
                inside.append(other)
        longer.extend(other for other in shorter if other in waiting)
        touching[groups.find(a)] = longer

    for index, (a, b) in enumerate(comparators):
        if on_channel[a][0] == index and on_channel[b][0] == index:
            offer(index)
    order: list[int] = []
    while inside or waiting:
        if inside:
            index = inside.pop()
        else:
            index = heapq.heappop(joins)
            if index not in waiting:
                continue
            waiting.discard(index)
            join(index)
        order.append(index)
        a, b = comparators[index]
        head[a] += 1
        head[b] += 1
        on_a, on_b = on_channel[a], on_channel[b]
        next_a = on_a[head[a]] if head[a] < len(on_a) else None
        next_b = on_b[head[b]] if head[b] < len(on_b) else None
        if next_a is not None and next_b is not None and next_b < next_a:
            next_a, next_b = next_b, next_a
        if next_a is not None and ready(next_a):
            offer(next_a)
        if next_b is not None and next_b != next_a and ready(next_b):
            offer(next_b)
    return order


def split_tree(network: ComparatorNetwork, order: list[int]) -> list[Part]:
    """The join tree of ``network`` read in ``order``: parts ``0..n-1`` are the channels, the last is the root.

    When the channels do not end up connected, a root with no segment joins
    the remaining groups, so the root always covers every channel.
    """
    parts = [Part((channel,), order="ascending") for channel in range(network.channels)]
    groups = _Groups(network.channels)
    part_of = list(range(network.channels))  # group representative -> part index
    for index in order:
        a, b = network.comparators[index]
        group_a, group_b = groups.find(a), groups.find(b)
        if group_a != group_b:
            first, second = part_of[group_a], part_of[group_b]
            parts.append(Part(tuple(sorted(parts[first].channels + parts[second].channels)), (first, second)))
            groups.join(a, b)
            part_of[groups.find(a)] = len(parts) - 1
        parts[part_of[groups.find(a)]].segment.append(index)
    tops = sorted({part_of[groups.find(c)] for c in range(network.channels)})
    if len(tops) > 1 or len(parts) == network.channels:
        parts.append(Part(tuple(range(network.channels)), tuple(tops)))
    return parts


def frontier(parts: list[Part], index: int) -> tuple[list[int], list[int]]:
    """The proved parts a check of part ``index`` starts from, and the comparators it must apply.

    Looks through dissolved parts (and through unchecked ones: the root's
    children are all checked before the root), down to parts that sort.
    Returns the indices of those parts and the comparator indices in an order
    that is valid for the network.
    """
    below: list[int] = []
    comparators: list[int] = []
    # Depth-first, children in order, each dissolved part's segment after everything below it
    # (iterative: a network with no structure dissolves into a chain as deep as it has channels).
    stack: list[tuple[str, int]] = [("open", index)]
    while stack:
        action, current = stack.pop()
        if action == "proved":
            below.append(current)
        elif action == "segment":
            comparators += parts[current].segment
        else:
            stack.append(("segment", current))
            for child in reversed(parts[current].children):
                proved = parts[child].order in ("ascending", "descending")
                stack.append(("proved" if proved else "open", child))
    return below, comparators


class SortedParts:
    """The 0-1 vectors that are sorted on each of some disjoint channel groups, in mixed-radix order.

    A group of ``s`` channels sorted ascending holds ``0^(s-k) 1^k`` in
    channel order for some ``k`` in ``0..s``; descending holds ``1^k 0^(s-k)``.
    Vector ``i`` takes ``k`` of group ``g`` from digit ``g`` of ``i`` in the
    radices ``s_g + 1``.  Channels in no group are not part of the vectors.

    >>> source = SortedParts([((0, 1), "ascending"), ((2,), "ascending")])
    >>> source.total, [source.vector(i, 3) for i in range(source.total)]
    (6, [(0, 0, 0), (0, 1, 0), (1, 1, 0), (0, 0, 1), (0, 1, 1), (1, 1, 1)])
    """

    def __init__(self, groups: list[tuple[tuple[int, ...], str]]):
        self.groups = groups
        self.total = 1
        self.strides = []
        for channels, _ in groups:
            self.strides.append(self.total)
            self.total *= len(channels) + 1

    def _ones(self, index, group: int):
        channels = self.groups[group][0]
        return (index // self.strides[group]) % (len(channels) + 1)

    def vector(self, index: int, channels: int) -> tuple[int, ...]:
        """Vector ``index`` as values by channel (0 on channels in no group)."""
        return self.vector_of_ones([int(self._ones(index, group)) for group in range(len(self.groups))], channels)

    def fill(self, start: int, lanes: int, rows: list) -> int:
        """Write vectors ``start .. start+lanes-1`` bit-sliced into ``rows`` (by channel); return how many are real.

        Lanes past the end hold vector 0 again, which is a member, so they
        never add a failure that is not one.
        """
        index = np.arange(start, start + lanes, dtype=np.int64)
        valid = int(min(lanes, max(0, self.total - start)))
        index[valid:] = 0
        self.fill_ones([self._ones(index, group) for group in range(len(self.groups))], rows)
        return valid

    def random_ones(self, rng: np.random.Generator, lanes: int) -> list[np.ndarray]:
        """For each group, ``lanes`` random counts of ones (uniform over ``0..s``)."""
        return [rng.integers(0, len(members) + 1, size=lanes) for members, _ in self.groups]

    def vector_of_ones(self, ones: list[int], channels: int) -> tuple[int, ...]:
        """The vector with the given count of ones in each group."""
        values = [0] * channels
        for (members, order), count in zip(self.groups, ones):
            for rank, channel in enumerate(members):
                values[channel] = int(rank >= len(members) - count) if order == "ascending" else int(rank < count)
        return tuple(values)

    def fill_ones(self, ones_by_group: list[np.ndarray], rows: list) -> None:
        """Write the vectors with these counts of ones per group (a multiple of 64 lanes) into ``rows``."""
        for (members, order), ones in zip(self.groups, ones_by_group):
            ranks = np.arange(len(members))[:, None]
            bits = ranks >= len(members) - ones[None, :] if order == "ascending" else ranks < ones[None, :]
            packed = np.ascontiguousarray(np.packbits(bits, axis=1, bitorder="little")).view("<u8")
            for rank, channel in enumerate(members):
                rows[channel][:] = packed[rank]
