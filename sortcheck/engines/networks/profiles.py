"""Parts with two sorted runs as inputs, checked on ``s + 1`` profiles instead of ``(s+1)(t+1)`` vectors.

A part of the split (:mod:`sortcheck.engines.networks.split`) whose two
children are proved sorters receives exactly the 0-1 vectors that are sorted
on each child: a run ``A`` of ``s`` channels holding ``a`` ones and a run
``B`` of ``t`` channels holding ``b`` ones, ``(s+1)(t+1)`` vectors in all.
Every input channel is a *monotone* function of ``(a, b)``: a channel of a
run is 1 exactly when its run holds at least some number of ones (how many
depends on its rank and on the run's order).  Comparators compute ``min`` and
``max``, which keep functions monotone, so every channel, at every point of
the segment, is 1 exactly on an up-set of the grid ``0..s x 0..t``.  An up-set
is given by its *profile*: for each ``a``, the least ``b`` at which the
channel is 1 (``t + 1`` when there is none).  On profiles a comparator is two
element-wise operations:

* ``min(x, y)`` is 1 where both are: the profile is the larger of the two;
* ``max(x, y)`` is 1 where either is: the profile is the smaller.

At the end, channels ``c, d`` are in ascending order on every input iff the
up-set of ``c`` lies inside that of ``d``, i.e. ``profile_c(a) >= profile_d(a)``
for every ``a``.  Where that fails, the input with ``a`` ones on ``A`` and
``b = profile_c(a)`` ones on ``B`` gives ``c = 1, d = 0``: a failing vector
sorted on both children, hence (see :mod:`~sortcheck.engines.networks.split`) a
real input of the whole network, which the engine re-checks before
reporting it.  The check is exact (it decides the same question as
evaluating all ``(s+1)(t+1)`` vectors) and costs ``s + 1`` small integers per
channel and comparator, ``A`` being the smaller run; profiles of different
``a`` are independent, so they are evaluated in chunks of ``a`` (bounded
memory), a layer of the segment at a time.  ``encodings/two-run-profiles.md``
has the argument in full and a worked example.

>>> merger = [(0, 2), (1, 3), (1, 2)]                   # Batcher's odd-even merge of two runs of 2
>>> runs = TwoRuns([((0, 1), "ascending"), ((2, 3), "ascending")])
>>> check_profiles(merger, runs, range(3), [((0, 1, 2, 3), "ascending")])
[None]
>>> failing = check_profiles(merger[:2], runs, range(2), [((0, 1, 2, 3), "ascending")])[0]
>>> failing, runs.vector(failing, 4)                    # without its last comparator: 0 1 0 1 stays
((1, 1), (0, 1, 0, 1))
"""

from __future__ import annotations

from typing import Callable, Sequence

import numpy as np

#: The most profile entries (channels x values of ``a``) held at once: 2^27 entries, 256 MB of uint16.
CHUNK_ENTRIES = 1 << 27


class TwoRuns:
    """Two disjoint sorted runs ``(channels, order)`` as a source of inputs, parameterised by their counts of ones.

    The smaller run is the *axis* (profiles are indexed by its count ``a``),
    the other the *height* (profile values are its count ``b``, or
    ``t + 1`` for never).  :meth:`vector` turns a point ``(a, b)`` back into
    the 0-1 vector it stands for.

    >>> runs = TwoRuns([((0, 1, 2), "ascending"), ((3, 4), "descending")])
    >>> runs.axis, runs.height, runs.vector((1, 2), 5)
    (1, 0, (0, 1, 1, 1, 0))
    """

    def __init__(self, groups: Sequence[tuple[tuple[int, ...], str]]):
        if len(groups) != 2:
            raise ValueError(f"two runs are needed, got {len(groups)}")
        self.groups = list(groups)
        self.axis, self.height = (0, 1) if len(groups[0][0]) <= len(groups[1][0]) else (1, 0)
        self.size = len(groups[self.axis][0])
        self.tall = len(groups[self.height][0])
        self.dtype = np.uint16 if self.tall + 1 < (1 << 16) else np.uint32

    @property
    def total(self) -> int:
        """How many 0-1 vectors the runs stand for."""
        return (self.size + 1) * (self.tall + 1)

    @staticmethod
    def least_ones(rank: int, length: int, order: str) -> int:
        """The least count of ones of a sorted run at which the channel of this rank holds 1."""
        return length - rank if order == "ascending" else rank + 1

    def vector(self, point: tuple[int, int], channels: int) -> tuple[int, ...]:
        """The vector with ``a`` ones on the axis run and ``b`` on the height run (0 on other channels)."""
        values = [0] * channels
        for group, count in ((self.axis, point[0]), (self.height, point[1])):
            members, order = self.groups[group]
            for rank, channel in enumerate(members):
                values[channel] = int(count >= self.least_ones(rank, len(members), order))
        return tuple(values)

    def start(self, local: dict[int, int], counts: np.ndarray) -> np.ndarray:
        """Profiles of the input channels (rows, by local index) for the axis counts ``counts``."""
        profiles = np.empty((len(local), counts.size), dtype=self.dtype)
        never = self.tall + 1
        axis_members, axis_order = self.groups[self.axis]
        for rank, channel in enumerate(axis_members):
            least = self.least_ones(rank, len(axis_members), axis_order)
            profiles[local[channel]] = np.where(counts >= least, 0, never)
        height_members, height_order = self.groups[self.height]
        for rank, channel in enumerate(height_members):
            profiles[local[channel]] = self.least_ones(rank, len(height_members), height_order)
        return profiles


def layers_of(pairs: Sequence[tuple[int, int]], local: dict[int, int]) -> list[tuple[np.ndarray, np.ndarray]]:
    """The comparators (a valid order) as layers of local row indices ``(minimum rows, maximum rows)``.

    A comparator goes one layer after the last one on either of its channels,
    so the layers keep the order on every channel and share no channel inside.

    >>> [tuple(layer[k].tolist() for k in (0, 1)) for layer in layers_of([(0, 1), (2, 3), (1, 2)], {0: 0, 1: 1, 2: 2, 3: 3})]
    [([0, 2], [1, 3]), ([1], [2])]
    """
    depth: dict[int, int] = {}
    by_layer: list[tuple[list[int], list[int]]] = []
    for a, b in pairs:
        layer = max(depth.get(a, 0), depth.get(b, 0))
        depth[a] = depth[b] = layer + 1
        if layer == len(by_layer):
            by_layer.append(([], []))
        by_layer[layer][0].append(local[a])
        by_layer[layer][1].append(local[b])
    return [(np.array(low, dtype=np.int64), np.array(high, dtype=np.int64)) for low, high in by_layer]


def apply_layers(matrix: np.ndarray, layers: list[tuple[np.ndarray, np.ndarray]], low: Callable, high: Callable,
                 expired: Callable[[], bool] = lambda: False) -> None:
    """Apply comparator layers to the rows of ``matrix`` in place: ``low`` of each pair to its minimum row.

    On 0-1 values packed into words ``low, high`` are AND and OR; on profiles, maximum and minimum.
    Raises :class:`TimeoutError` when ``expired()`` turns true between layers.

    >>> rows = np.array([[0b1100], [0b1010]], dtype=np.uint64)
    >>> apply_layers(rows, layers_of([(0, 1)], {0: 0, 1: 1}), np.bitwise_and, np.bitwise_or)
    >>> [bin(int(word)) for word in rows[:, 0]]
    ['0b1000', '0b1110']
    """
    for minimum_rows, maximum_rows in layers:
        if expired():
            raise TimeoutError
        first, second = matrix[minimum_rows], matrix[maximum_rows]
        matrix[minimum_rows] = low(first, second)
        matrix[maximum_rows] = high(first, second)


def check_profiles(comparators: Sequence[tuple[int, int]], runs: TwoRuns, indices: Sequence[int],
                   targets: Sequence[tuple[tuple[int, ...], str]],
                   expired: Callable[[], bool] = lambda: False,
                   bounds: tuple[np.ndarray, np.ndarray] | None = None) -> list[tuple[int, int] | None]:
    """For each target ``(channels, order)``: a point ``(a, b)`` whose vector the comparators leave unsorted there.

    ``comparators[i]`` for ``i`` in ``indices`` (a valid order) act on the
    channels of the two runs only.  Returns, per target, the failing point
    with the least ``a`` (then the least failing pair of channels), or None
    when every vector of the runs comes out sorted in that order on the
    target's channels.  With ``bounds = (low, high)`` (arrays over ``a``) only the points with
    ``low[a] <= b <= high[a]`` count (none where ``low[a] > high[a]``).  Raises :class:`TimeoutError`
    when ``expired()`` turns true between layers.

    >>> runs = TwoRuns([((0,), "ascending"), ((1,), "ascending")])
    >>> check_profiles([(0, 1)], runs, [0], [((0, 1), "ascending"), ((0, 1), "descending")])
    [None, (0, 1)]
    """
    channels = sorted(runs.groups[0][0] + runs.groups[1][0])
    local = {channel: row for row, channel in enumerate(channels)}
    pairs = [comparators[i] for i in indices]
    layers = layers_of(pairs, local)
    rows_of = [np.array([local[c] for c in members], dtype=np.int64) for members, _ in targets]
    failures: list[tuple[int, int] | None] = [None] * len(targets)
    chunk = max(1, min(runs.size + 1, CHUNK_ENTRIES // max(1, len(channels))))
    for first in range(0, runs.size + 1, chunk):
        counts = np.arange(first, min(first + chunk, runs.size + 1), dtype=np.int64)
        profiles = runs.start(local, counts)
        apply_layers(profiles, layers, np.maximum, np.minimum, expired)
        for number, ((members, order), rows) in enumerate(zip(targets, rows_of)):
            if failures[number] is None and len(members) > 1:
                window = None if bounds is None else (bounds[0][counts], bounds[1][counts])
                failures[number] = _first_failure(profiles[rows], order, first, window)
        if all(failure is not None for failure in failures):
            break
    return failures


def _first_failure(profiles: np.ndarray, order: str, first: int,
                   window: tuple[np.ndarray, np.ndarray] | None = None) -> tuple[int, int] | None:
    """The failing point of least ``a`` (then least pair) of target rows in order, or None.

    Ascending, row ``k`` is 1 and row ``k+1`` is 0 exactly for ``profile_k <= b < profile_{k+1}``;
    with a window ``low <= b <= high`` the least such ``b`` is ``max(profile_k, low)``.
    """
    upper, lower = (profiles[:-1], profiles[1:]) if order == "ascending" else (profiles[1:], profiles[:-1])
    # ascending: row k must be 1 only where row k+1 is, i.e. profile_k >= profile_{k+1}
    if window is None:
        start, bad = upper, upper < lower
    else:  # in the profiles' own type, no wider copies: profiles are at most t+1, so bounds past it clip safely
        largest = np.iinfo(profiles.dtype).max
        low = np.clip(window[0], 0, largest).astype(profiles.dtype)[None, :]
        above = np.clip(window[1] + 1, 0, largest).astype(profiles.dtype)[None, :]
        start = np.maximum(upper, low)
        bad = start < np.minimum(lower, above)
    columns = np.flatnonzero(bad.any(axis=0))
    if columns.size == 0:
        return None
    column = int(columns[0])
    pair = int(np.flatnonzero(bad[:, column])[0])
    return first + column, int(start[pair, column])
