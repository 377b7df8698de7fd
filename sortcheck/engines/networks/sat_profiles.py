"""The ``sat`` engine's questions on two sorted runs, decided on profiles (see :mod:`sortcheck.engines.networks.profiles`).

A part whose two children are proved sorters, the property at the root of such a split, and a
``merges`` property all ask whether some comparators sort every vector that is sorted on two
groups of channels.  Past :data:`PROFILE_LIMIT` vectors the question is decided on one profile per
count of the smaller group instead (exactly, ``encodings/two-run-profiles.md``).  Parts that ask
the same question on translated channels (:func:`question_key`) are decided once, by the engine.

>>> from sortcheck.engines.base import Budget
>>> from sortcheck.engines.networks.sat import SatEngine
>>> from sortcheck.model import Sorts
>>> from sortcheck.model.families import bitonic
>>> verdict = SatEngine().check(bitonic(512), Sorts(), Budget())
>>> verdict.status.value, verdict.figures["parts_profiled"], verdict.figures["parts_reused"]
('proved', 3, 502)
"""

from __future__ import annotations

import numpy as np

from sortcheck.engines.base import Budget
from sortcheck.engines.networks.profiles import TwoRuns, check_profiles
from sortcheck.model import ComparatorNetwork, Merges, Sorts

#: Questions on two proved runs with more 0-1 vectors than this are checked on profiles, smaller ones
#: by enumeration (a few words per comparator, and the figures of small checks stay as they were).
PROFILE_LIMIT = 1 << 12


class ProfileSteps:
    """The steps as methods of the engine: they need its ``_decide``, ``_interrupted`` and ``profiles``."""

    profiles: bool

    def _part_order(self, network: ComparatorNetwork, part, groups: list, comparators: list[int], budget: Budget,
                    tally) -> str:
        """The order part ``part`` is proved to sort in from its groups, or ``"dissolved"``."""
        orders = ("ascending", "descending")
        if self._profiled(groups, tally):
            failures = self._by_profiles(network, groups, comparators, [(part.channels, o) for o in orders],
                                         budget, tally)
            return next((order for order, failing in zip(orders, failures) if failing is None), "dissolved")
        for order in orders:
            failing, _ = self._decide(network, groups, comparators, ("sorted", part.channels, order), budget, tally)
            if failing is None:
                return order
        return "dissolved"

    def _profiles_wanted(self, vectors: int, tally) -> bool:
        """Whether a question on two runs of this many vectors goes to profiles."""
        return self.profiles and not tally.certify and vectors > PROFILE_LIMIT

    @staticmethod
    def _sorted_target(network: ComparatorNetwork, target) -> tuple[tuple[int, ...], str] | None:
        """``target`` as (channels, order) to be sorted in, or None for a property that is not a sort or merge."""
        if isinstance(target, tuple):
            return target[1], target[2]
        if isinstance(target, (Sorts, Merges)):
            return tuple(range(network.channels)), getattr(target, "order", "ascending")
        return None

    def _profiled(self, groups: list, tally) -> bool:
        """Whether a question from ``groups`` goes to profiles: two runs, many vectors, no certificates."""
        return len(groups) == 2 and self._profiles_wanted((len(groups[0][0]) + 1) * (len(groups[1][0]) + 1), tally)

    def _by_profiles(self, network: ComparatorNetwork, groups: list, comparators: list[int], targets: list,
                     budget: Budget, tally) -> list[tuple[int, ...] | None]:
        """Per target ``(channels, order)``: a vector sorted on the two groups left unsorted there, or None."""
        runs = TwoRuns(groups)
        try:
            points = check_profiles(network.comparators, runs, comparators, targets, budget.expired)
        except TimeoutError:
            raise self._interrupted() from None
        tally.parts_profiled += 1
        tally.profiles += runs.size + 1
        tally.profiled_vectors += runs.total
        return [None if point is None else runs.vector(point, network.channels) for point in points]


def question_key(network: ComparatorNetwork, channels: tuple[int, ...], groups: list, comparators: list[int]) -> bytes:
    """The question of a part with its channels relabelled ``0..k-1`` in ascending order, as bytes.

    Two parts with equal keys ask the same question of translated channels: their groups (with
    orders) and comparator sequences correspond one to one under an order-keeping relabelling.
    """
    rank = np.full(network.channels, -1, dtype=np.int64)
    rank[np.array(channels, dtype=np.int64)] = np.arange(len(channels))
    pairs = np.array([network.comparators[i] for i in comparators], dtype=np.int64).reshape(-1, 2)
    described = [len(channels), len(groups)]
    for members, order in groups:
        described += [len(members), order == "descending", *rank[np.array(members, dtype=np.int64)].tolist()]
    return np.array(described, dtype=np.int64).tobytes() + b"|" + rank[pairs].astype(np.int64).tobytes()
