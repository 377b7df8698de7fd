"""The ``sat`` engine's step through independent sorting sub-networks (see :mod:`sortcheck.engines.networks.blocks`).

Before a question goes to the SAT solver, the engine looks for sub-networks
on disjoint channel sets at the start of its comparators.  Each is proved to
sort its channels on every input, as a network of its own, by the same
engine (random simulation, order relations, the split, and this step again,
so Parberry's pairwise network on ``n`` channels comes down to the pairwise
networks on ``n/2, n/4, ...``; identical sub-networks are proved once).  The
comparators after them are then checked on every vector the sub-networks can
hand on, by enumeration.  When a sub-network is not proved to sort, or the
vectors are too many, the step gives way to the solver.

>>> from sortcheck.engines.base import Budget
>>> from sortcheck.engines.networks.sat import SatEngine
>>> from sortcheck.model import Sorts
>>> from sortcheck.model.families import pairwise
>>> verdict = SatEngine().check(pairwise(32), Sorts(), Budget())   # 3^16 vectors after the first layer
>>> verdict.status.value, verdict.figures["sub_networks_proved"], verdict.figures["sat_calls"]
('proved', 2, 0)
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from sortcheck.engines.base import Budget
from sortcheck.engines.networks.blocks import ReachableVectors, block_network, canonical, find_blocks
from sortcheck.engines.networks.count_intervals import CountIntervals
from sortcheck.engines.networks.profiles import TwoRuns, check_profiles
from sortcheck.engines.networks.split import SortedParts
from sortcheck.engines.networks.order import relations_prove_sorted
from sortcheck.model import ComparatorNetwork, Sorts

#: Sub-networks nested deeper than this inside one another are not looked for (each level has fewer channels).
BLOCK_DEPTH = 24


@dataclass
class BlockTally:
    """What the step did over one check."""

    #: Sub-networks taken as proved sorters (each use counted), and the distinct ones (each proved once).
    used: int = 0
    distinct: int = 0
    #: Canonical sub-network -> the order it was proved to sort in, or None when it was not.
    sorters: dict = field(default_factory=dict)
    #: How deep the current question is nested inside sub-network proofs.
    depth: int = 0


class BlockSteps:
    """The step as methods of the engine: it needs the engine's ``_prove``, ``_enumerate`` and ``_sample``."""

    #: The most count vectors one check after the sub-networks may enumerate.
    block_limit: int

    def _by_blocks(self, network: ComparatorNetwork, groups: list, comparators: list[int], target, budget: Budget,
                   tally) -> tuple[tuple[int, ...] | None, str] | None:
        """Decide the question through sorting sub-networks that ``comparators`` begin with; None if there are none.

        Returns the failing vector (sorted on ``groups``, a real failing
        vector of the question) or None, and the method, like ``_decide``.
        """
        blocks_tally: BlockTally = tally.blocks
        if blocks_tally.depth >= BLOCK_DEPTH:
            return None
        pairs = [network.comparators[i] for i in comparators]
        blocks = find_blocks(pairs, [c for members, _ in groups for c in members])
        if blocks is None:
            return None
        count_pairs = math.prod(len(block) + 1 for block in blocks.channels)
        by_intervals = (len(blocks.channels) == 2 and self._profiles_wanted(count_pairs, tally)
                        and self._sorted_target(network, target) is not None)
        if count_pairs > self.block_limit and not by_intervals:
            return None
        orders = []
        for channels, members in zip(blocks.channels, blocks.members):
            order = self._sorts_alone(block_network([pairs[p] for p in members], channels), budget, tally)
            if order is None:
                return None
            orders.append(order)
        blocks_tally.used += len(blocks.channels)
        if by_intervals:
            return self._after_blocks_by_intervals(network, groups, comparators, blocks, orders, target, budget,
                                                   tally)
        source = ReachableVectors(groups, list(zip(blocks.channels, orders)))
        tally.parts_enumerated += 1
        failing = self._enumerate(network, source, [comparators[p] for p in blocks.after], target, budget, tally)
        return failing, "split"

    def _after_blocks_by_intervals(self, network: ComparatorNetwork, groups: list, comparators: list[int], blocks,
                                   orders: list[str], target, budget: Budget, tally
                                   ) -> tuple[tuple[int, ...] | None, str] | None:
        """The comparators after two sorting blocks, on profiles of the two blocks' counts, restricted to
        the reachable counts (:mod:`sortcheck.engines.networks.count_intervals`); None when a failing
        count pair is found but no witness can be built (the tables would be too large)."""
        runs = TwoRuns(list(zip(blocks.channels, orders)))
        intervals = CountIntervals(groups, blocks.channels[runs.axis])
        after = [comparators[p] for p in blocks.after]
        low, high = intervals.bounds()
        try:
            point = check_profiles(network.comparators, runs, after, [self._sorted_target(network, target)],
                                   budget.expired, (low, high))[0]
        except TimeoutError:
            raise self._interrupted() from None
        tally.parts_profiled += 1
        tally.profiles += runs.size + 1
        tally.profiled_vectors += int(np.clip(high - low + 1, 0, None).sum())   # the reachable count pairs
        if point is None:
            return None, "split"
        ones = intervals.witness(*point)
        if ones is None:
            return None
        return SortedParts(groups).vector_of_ones(ones, network.channels), "split"

    def _sorts_alone(self, network: ComparatorNetwork, budget: Budget, tally) -> str | None:
        """The order (``"ascending"``, ``"descending"``) ``network`` is proved to sort every input in, or None."""
        if network.channels < 2:
            return "ascending"
        blocks_tally: BlockTally = tally.blocks
        key = canonical(network)
        if key not in blocks_tally.sorters:
            blocks_tally.sorters[key] = self._prove_sorts(network, budget, tally)
            blocks_tally.distinct += blocks_tally.sorters[key] is not None
        return blocks_tally.sorters[key]

    def _prove_sorts(self, network: ComparatorNetwork, budget: Budget, tally) -> str | None:
        """Random vectors pick the order; order relations or the engine's split then prove it (or not)."""
        singles = SortedParts([((channel,), "ascending") for channel in range(network.channels)])
        everything = list(range(network.size))
        channels = tuple(range(network.channels))
        for order in ("ascending", "descending"):
            if self._sample(network, singles, everything, ("sorted", channels, order), budget) is not None:
                continue
            if _relations_worth_trying(network) and relations_prove_sorted(
                    network.channels, network.comparators, order == "descending", budget):
                return order
            tally.blocks.depth += 1
            try:
                failing, _ = self._prove(network, Sorts(order=order), budget, tally)
            finally:
                tally.blocks.depth -= 1
            return order if failing is None else None
        return None


#: Sub-networks of at most this many channels always try order relations first (they are cheap there).
RELATIONS_CHANNELS = 512


def _relations_worth_trying(network: ComparatorNetwork) -> bool:
    """Order relations for a sub-network: when small, or deeper than ``ceil(log2 n)^2``.

    As for the checked network itself (``SatEngine._try_relations``): relations prove deep networks
    of adjacent comparators, and fail on Batcher's and the pairwise networks, where on the 4,096
    channels of pairwise 8192's halves they took 64 s of a 136 s check; the split proves those.
    """
    n = network.channels
    return n <= RELATIONS_CHANNELS or network.depth > math.ceil(math.log2(n)) ** 2
