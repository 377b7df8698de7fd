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
(Batcher's networks mostly do not), and then it says nothing.  It costs a
few vector operations of n booleans per comparator.
"""

from __future__ import annotations

from typing import Sequence

import numpy as np

from sortcheck.engines.base import Budget

#: How many comparators are processed between two looks at the budget.
CHUNK = 4096


def relations_prove_sorted(channels: int, comparators: Sequence[tuple[int, int]], descending: bool,
                           budget: Budget) -> bool:
    """True when propagated order relations show the outputs sorted; False when they do not (or time ran out).

    >>> relations_prove_sorted(3, [(0, 1), (1, 2), (0, 1)], False, Budget())
    True
    >>> relations_prove_sorted(3, [(0, 1), (1, 2)], False, Budget())
    False
    """
    known = np.zeros((channels, channels), dtype=bool)
    for index, (a, b) in enumerate(comparators):
        if index % CHUNK == 0 and budget.expired():
            return False
        below_a, below_b = known[:, a].copy(), known[:, b].copy()
        above_a, above_b = known[a, :].copy(), known[b, :].copy()
        known[:, a], known[:, b] = below_a & below_b, below_a | below_b
        known[a, :], known[b, :] = above_a | above_b, above_a & above_b
        known[a, a] = known[b, b] = False
        known[a, b], known[b, a] = True, False
    steps = np.arange(channels - 1)
    if descending:
        return bool(known[steps + 1, steps].all())
    return bool(known[steps, steps + 1].all())
