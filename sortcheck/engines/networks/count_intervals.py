"""The count pairs that many sorted source groups can hand to two blocks: an interval per count.

The ``sat`` engine's block step (:mod:`sortcheck.engines.networks.sat_blocks`) reaches questions of
this shape: source groups ``F`` (each sorted, with ``a_F`` ones) lie inside two blocks ``H_0, H_1``;
after the blocks' sub-networks only the counts ``(c_0, c_1)`` of ones on the blocks matter, and the
reachable ones are the sums of the groups' *paths* ``delta_F(a) = (g_F(a), a - g_F(a))``, ``g_F(a)``
counting how many of the group's first ``a`` ones fall on ``H_0``.  With many small groups (the
pairs of Parberry's pairwise network) a table of all ``(|H_0|+1)(|H_1|+1)`` pairs costs too much;
this module describes the set exactly by intervals instead:

* For a total ``T = sum a_F``, the values of ``c_0`` form an interval ``[m_T, M_T]``: moving one
  one from a group to another changes ``c_0`` by at most 1, and any two configurations of the same
  total are joined by such moves.
* ``m_T`` and ``M_T`` never decrease with ``T``: removing a one from a configuration of total
  ``T + 1`` lowers ``c_0`` by 0 or 1 (so ``m_T <= m_{T+1}``), adding one raises it by 0 or 1.
* Hence for a fixed ``c_0 = x`` the totals with ``m_T <= x <= M_T`` form an interval, and so do
  the counts ``c_1 = T - x``.

``m_T`` and ``M_T`` come from one pass over the groups (a min-plus and a max-plus convolution per
group, ``O(|F| N)`` each for ``N`` channels).  A failing pair ``(x, y)`` inside the intervals comes
back as counts per group (:meth:`CountIntervals.witness`): configurations reaching ``m_T`` and
``M_T``, then moves from the one to the other, each changing ``c_0`` by at most 1, until ``c_0 = x``.

>>> pairs = [((2 * i, 2 * i + 1), "ascending") for i in range(3)]     # sorted pairs, as after a first layer
>>> odd, even = (1, 3, 5), (0, 2, 4)
>>> intervals = CountIntervals(pairs, odd)
>>> low, high = intervals.bounds()
>>> low.tolist(), high.tolist()        # ones on the even channels, for 0..3 ones on the odd ones
([0, 0, 0, 0], [0, 1, 2, 3])
>>> intervals.witness(2, 1)            # ones per pair giving 2 on the odd channels and 1 on the even ones
[2, 1, 0]
"""

from __future__ import annotations

from typing import Sequence

import numpy as np

#: The most entries (groups x totals) of the choice tables :meth:`CountIntervals.witness` keeps.
WITNESS_ENTRIES = 1 << 27


class CountIntervals:
    """Reachable counts of ones on the channels ``axis`` (``x``) and on the rest of the groups' channels (``y``).

    Parameters
    ----------
    sources : list of (channels, order)
        Disjoint sorted groups, as in :class:`~sortcheck.engines.networks.split.SortedParts`.
    axis : sequence of int
        The channels of one block; every other channel of the groups belongs to the other block.
    """

    def __init__(self, sources: Sequence[tuple[tuple[int, ...], str]], axis: Sequence[int]):
        on_axis = set(axis)
        self.sources = list(sources)
        self.gains = []
        for members, order in sources:
            ones_first = list(members) if order == "descending" else list(reversed(members))
            self.gains.append(np.concatenate([[0], np.cumsum([c in on_axis for c in ones_first])]).astype(np.int64))
        self.total = sum(len(members) for members, _ in sources)
        self.axis_size = sum(int(g[-1]) for g in self.gains)
        self.least, self.most = _extremes(self.gains)

    def bounds(self) -> tuple[np.ndarray, np.ndarray]:
        """``(low, high)`` over ``x = 0..axis size``: the reachable ``y`` are ``low[x] <= y <= high[x]``."""
        x = np.arange(self.axis_size + 1)
        first_total = np.searchsorted(self.most, x, side="left")        # least T with M_T >= x
        last_total = np.searchsorted(self.least, x, side="right") - 1   # largest T with m_T <= x
        return first_total - x, last_total - x

    def witness(self, x: int, y: int) -> list[int] | None:
        """Ones per source group giving ``x`` ones on the axis and ``y`` elsewhere; None when the tables
        would be too large (more than :data:`WITNESS_ENTRIES`)."""
        total = x + y
        if not self.least[total] <= x <= self.most[total]:
            raise ValueError(f"counts ({x}, {y}) are not reachable")
        if len(self.gains) * (self.total + 1) > WITNESS_ENTRIES:
            return None
        current = _configuration(self.gains, total, np.minimum)
        goal = _configuration(self.gains, total, np.maximum)
        gains = self.gains
        reached = sum(int(g[a]) for g, a in zip(gains, current))
        raise_ = [i for i in range(len(gains)) if current[i] < goal[i]]
        lower = [i for i in range(len(gains)) if current[i] > goal[i]]
        while reached != x:
            up, down = raise_[-1], lower[-1]
            reached += int(gains[up][current[up] + 1] - gains[up][current[up]])
            reached -= int(gains[down][current[down]] - gains[down][current[down] - 1])
            current[up] += 1
            current[down] -= 1
            if current[up] == goal[up]:
                raise_.pop()
            if current[down] == goal[down]:
                lower.pop()
        return current


def _extremes(gains: list[np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    """``m_T`` and ``M_T``: the least and most ``sum g_F(a_F)`` over ``sum a_F = T``."""
    least = np.zeros(1, dtype=np.int64)
    most = np.zeros(1, dtype=np.int64)
    for gain in gains:
        least, most = _convolve(least, gain, np.minimum)[0], _convolve(most, gain, np.maximum)[0]
    return least, most


def _convolve(best: np.ndarray, gain: np.ndarray, pick) -> tuple[np.ndarray, np.ndarray]:
    """One group added: ``new[T] = pick over a of best[T - a] + gain[a]``, and the ``a`` picked."""
    length = best.size + gain.size - 1
    worst = np.iinfo(np.int64).max if pick is np.minimum else np.iinfo(np.int64).min
    result = np.full(length, worst, dtype=np.int64)
    chosen = np.zeros(length, dtype=np.uint16 if gain.size <= 1 << 16 else np.uint32)
    for a, value in enumerate(gain):
        candidate = best + value
        window = result[a:a + best.size]
        better = candidate < window if pick is np.minimum else candidate > window
        window[better] = candidate[better]
        chosen[a:a + best.size][better] = a
    return result, chosen


def _configuration(gains: list[np.ndarray], total: int, pick) -> list[int]:
    """Ones per group with ``sum a_F = total`` reaching the least (``np.minimum``) or most ``c_0``."""
    best = np.zeros(1, dtype=np.int64)
    choices = []
    for gain in gains:
        best, chosen = _convolve(best, gain, pick)
        choices.append(chosen)
    ones = [0] * len(gains)
    for index in reversed(range(len(gains))):
        ones[index] = int(choices[index][total])
        total -= ones[index]
    return ones
