"""A quick sufficient test for sorting: propagate guaranteed order relations through the network.

``known[i, j]`` means "for every input, the value on channel i is at most
the value on channel j".  A comparator ``(a, b)`` puts ``min`` on ``a`` and
``max`` on ``b``, and for every other channel ``c``:

* ``c <= min`` when ``c`` was at most both, ``c <= max`` when at most either;
* ``min <= c`` when either was at most ``c``, ``max <= c`` when both were;
* and ``min <= max``.

Every relation derived this way holds for all inputs, so when the outputs
end with ``known[i, i+1]`` for every ``i`` the network sorts, proved.  The
test is incomplete: a network can sort without its relations showing it
(Batcher's networks mostly do not), and then it says nothing.

The comparators are taken a layer at a time (greedy layers: an equivalent
order, since the comparators of a layer share no channel): first the rows of
every comparator of the layer (what its outputs are at most, or at least,
compared with the values before the layer), then the columns from those rows.
For two comparators ``(a, b)`` and ``(c, d)`` of one layer that derives
``min(a, b) <= min(c, d)`` from ``(a <= c or b <= c) and (a <= d or b <= d)``,
which is at least what one comparator after the other derives, in either
order (every rule is monotone).  It costs a few gathers of
``n x (layer width)`` booleans per layer, instead of a few strided column
operations per comparator.
"""

from __future__ import annotations

from typing import Sequence

import numpy as np

from sortcheck.engines.base import Budget

#: How many layers are processed between two looks at the budget.
LAYERS_PER_LOOK = 8


def relations_prove_sorted(channels: int, comparators: Sequence[tuple[int, int]], descending: bool,
                           budget: Budget) -> bool:
    """True when propagated order relations show the outputs sorted; False when they do not (or time ran out).

    >>> relations_prove_sorted(3, [(0, 1), (1, 2), (0, 1)], False, Budget())
    True
    >>> relations_prove_sorted(3, [(0, 1), (1, 2)], False, Budget())
    False
    """
    known = np.zeros((channels, channels), dtype=bool)
    for done, (low, high) in enumerate(_layers(channels, comparators)):
        if done % LAYERS_PER_LOOK == 0 and budget.expired():
            return False
        rows_low, rows_high = known[low, :], known[high, :]
        known[low, :], known[high, :] = rows_low | rows_high, rows_low & rows_high
        columns_low, columns_high = known[:, low], known[:, high]
        known[:, low], known[:, high] = columns_low & columns_high, columns_low | columns_high
        known[low, low] = known[high, high] = False
        known[low, high], known[high, low] = True, False
    steps = np.arange(channels - 1)
    if descending:
        return bool(known[steps + 1, steps].all())
    return bool(known[steps, steps + 1].all())


def _layers(channels: int, comparators: Sequence[tuple[int, int]]) -> list[tuple[np.ndarray, np.ndarray]]:
    """The greedy layers: for each, the channels that get the minimum and those that get the maximum.

    >>> [(low.tolist(), high.tolist()) for low, high in _layers(3, [(0, 1), (2, 1), (0, 2)])]
    [([0], [1]), ([2], [1]), ([0], [2])]
    """
    depth = [0] * channels
    layers: list[tuple[list[int], list[int]]] = []
    for a, b in comparators:
        layer = max(depth[a], depth[b])
        depth[a] = depth[b] = layer + 1
        if layer == len(layers):
            layers.append(([], []))
        layers[layer][0].append(a)
        layers[layer][1].append(b)
    return [(np.array(low, dtype=np.intp), np.array(high, dtype=np.intp)) for low, high in layers]
