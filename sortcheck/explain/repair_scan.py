"""One-change candidates of a network run on the bank of 0-1 inputs, all at once (:mod:`sortcheck.explain.repair`).

:func:`scan` keeps the candidates at a range of positions that get every
bank input right.  It works in two passes over the network.

1. **What must change.**  A one-change candidate leaves the network as it
   is before its position and after it.  So on a bank input the network
   gets wrong, a candidate that leaves the values at its position as they
   were gives the same wrong output, and fails.  Every candidate must
   therefore change the values of *every* failing bank input at its
   position; that is decided from the bank's values there alone, without
   running the candidate:

   * an inserted comparator ``(a, b)`` (the smaller value to ``a``) acts on
     an input exactly when channel ``a`` holds 1 and ``b`` holds 0, so the
     inserts that act on every failing input are the pairs of a channel that
     holds 1 on all of them with one that holds 0 on all of them: a few
     pairs of the ``n(n-1)/2``, found in time linear in ``n``;
   * a replacement of the comparator ``c`` by ``c'`` (reverse, move, or delete,
     for which ``c'`` does nothing) changes the values exactly when ``c`` or
     ``c'`` acts: ``c`` and ``c'`` share a channel, and when both act they
     send the larger value to different channels.

   The pass counts every candidate as tried: those it drops fail a bank
   input as surely as those the next pass drops.
2. **The bank run.**  The candidates left are lanes of one array, grouped by
   the position where they join: the inserts at a position join before its
   comparator, the replacements of that comparator after it, so each
   comparator is applied once, to a prefix of the lanes.

Neither pass drops a candidate that gets every bank input right, so the
survivors, and the repair found, are those of running every candidate; the
first pass makes the search's cost grow with the positions and channels, not
with the positions times the pairs of channels (a 256-channel network has
32,640 inserts at each of its 3,840 positions).
"""

from __future__ import annotations

from bisect import bisect_right
from dataclasses import dataclass

import numpy as np

from sortcheck.engines import Budget
from sortcheck.engines.networks.bitslice import failure_mask
from sortcheck.explain.repair_candidates import (_NO_LANES, Change, Comparator, _Counts, _Guide, _Space,
                                                 _replacement_lanes)
from sortcheck.model import Property

#: Most words of one array of candidate lanes (channels x lanes x words of 64 inputs).
_CHUNK_WORDS = 1 << 22


def advance(state: np.ndarray, comparator: Comparator) -> None:
    """Apply one comparator to a bank state ``(channels, ...)`` in place."""
    a, b = comparator
    low = state[a] & state[b]
    state[b] |= state[a]
    state[a] = low


def place(block: np.ndarray, base: np.ndarray, low: np.ndarray, high: np.ndarray) -> None:
    """Fill the lanes of ``block`` ``(channels, lanes, words)`` with ``base``; apply ``(low[i], high[i])`` to lane ``i``.

    ``low[i] == high[i]`` applies nothing (a delete).

    >>> from sortcheck.explain.repair_bank import pack
    >>> block = np.empty((2, 2, 1), dtype=np.uint64)
    >>> place(block, pack([(1, 0)], 2), np.array([0, 0]), np.array([1, 0]))
    >>> block[:, :, 0].tolist()
    [[0, 1], [1, 0]]
    """
    block[:] = base[:, None, :]
    lanes = np.arange(len(low))
    first, second = block[low, lanes], block[high, lanes]
    block[low, lanes] = first & second
    block[high, lanes] = first | second


@dataclass(frozen=True)
class _Lanes:
    """The candidates kept at one position: ``inserts`` inserts, then replacements of its comparator.

    ``options[i]`` is ``("insert", pair)`` or ``(kind, new comparator or None)``;
    ``low[i], high[i]`` the comparator lane ``i`` applies at the position.
    """

    index: int
    inserts: int
    options: tuple
    low: np.ndarray
    high: np.ndarray


def failing_words(comparators, prop: Property, state: np.ndarray) -> np.ndarray:
    """The bank inputs (lanes of ``state``, one bit each) that ``comparators`` applied to ``state`` get wrong.

    >>> from sortcheck.explain.repair_bank import pack
    >>> from sortcheck.model import Sorts
    >>> int(failing_words(((0, 1),), Sorts(), pack([(1, 0, 0), (0, 1, 0), (0, 0, 1)], 3))[0])
    3
    """
    work = state.copy()
    for comparator in comparators:
        advance(work, comparator)
    return np.asarray(failure_mask(prop, list(work)), dtype=np.uint64)


def _kept_inserts(state: np.ndarray, must: np.ndarray, space: _Space, guide: _Guide, index: int):
    """The inserts at ``index`` that act on every input of ``must``: (pairs, low, high)."""
    hit = state & must
    ones = (hit == must).all(axis=1)
    zeros = ~hit.any(axis=1)
    if space.witness_inserts_only:
        pairs, low, high = space.insert_lanes(index, guide)
        keep = np.flatnonzero(ones[low] & zeros[high])
        return tuple(pairs[i] for i in keep.tolist()), low[keep], high[keep]
    low, high = np.meshgrid(np.flatnonzero(ones), np.flatnonzero(zeros), indexing="ij")
    low, high = low.ravel(), high.ravel()
    keep = low > high if space.descending else low < high
    low, high = low[keep], high[keep]
    return tuple(zip(low.tolist(), high.tolist())), low, high


def _kept_replacements(state: np.ndarray, must: np.ndarray, comparator: Comparator, channels: int):
    """The replacements of ``comparator`` that change every input of ``must``: (options, low, high)."""
    options, low, high = _replacement_lanes(comparator, channels)
    a, b = comparator
    acts = state[a] & ~state[b]
    changed = (acts[None, :] | (state[low] & ~state[high])) & must
    keep = np.flatnonzero((changed == must).all(axis=1))
    return tuple(options[i] for i in keep.tolist()), low[keep], high[keep]


def candidate_lanes(comparators: tuple[Comparator, ...], index: int, state: np.ndarray, must: np.ndarray,
                    space: _Space, guide: _Guide) -> tuple[_Lanes, int]:
    """The candidates at ``index`` that change every input of ``must`` (all of them when ``must`` is empty),
    given the bank ``state`` before comparator ``index``; and how many candidates there are at ``index``."""
    size, channels = len(comparators), space.channels
    every_insert = space.insert_lanes(index, guide)
    every_replacement = _replacement_lanes(comparators[index], channels) if index < size else _NO_LANES
    total = len(every_insert[0]) + len(every_replacement[0])
    if not must.any():
        inserts, replacements = every_insert, every_replacement
    else:
        inserts = _kept_inserts(state, must, space, guide, index)
        replacements = (_kept_replacements(state, must, comparators[index], channels) if index < size
                        else _NO_LANES)
    options = tuple(("insert", pair) for pair in inserts[0]) + tuple(replacements[0])
    lanes = _Lanes(index, len(inserts[0]), options, np.concatenate([inserts[1], replacements[1]]),
                   np.concatenate([inserts[2], replacements[2]]))
    return lanes, total


class TooManyCandidates(Exception):
    """More candidates than the limit change every failing bank input (:func:`scan`)."""


def scan(comparators: tuple[Comparator, ...], prop: Property, state: np.ndarray, start: int, space: _Space,
         guide: _Guide, counts: _Counts, budget: Budget, limit: int | None = None
         ) -> list[tuple[tuple, Change]] | None:
    """The one-change candidates at positions ``space.first..space.last`` that pass the bank, in search order.

    ``state`` is the bank after ``comparators[:start]``; None when the budget
    ran out.  ``counts.tried`` grows by every candidate in the range.  Raises
    :class:`TooManyCandidates` when more than ``limit`` candidates are left
    for the bank run after the first pass.
    """
    state, size = state.copy(), len(comparators)
    for index in range(start, space.first):
        advance(state, comparators[index])
    first, last = max(start, space.first), min(space.last, size)
    must = failing_words(comparators[first:], prop, state)
    kept, walk, left = [], state.copy(), 0
    for index in range(first, last + 1):
        if budget.expired():
            return None
        lanes, total = candidate_lanes(comparators, index, walk, must, space, guide)
        counts.tried += total
        left += len(lanes.options)
        if limit is not None and left > limit:
            raise TooManyCandidates(f"more than {limit:,} candidates change every failing bank input")
        if lanes.options:
            kept.append(lanes)
        if index < size:
            advance(walk, comparators[index])
    if state.shape[1] == 1:
        return _run_on_bank(comparators, prop, state, first, kept, guide, budget)
    # The first word (the first counterexample and failing inputs near it) rules out most candidates at a
    # fraction of the cost of the whole bank; the whole bank then judges the few left.
    survivors = _run_on_bank(comparators, prop, state[:, :1].copy(), first, kept, guide, budget)
    return None if survivors is None else refilter(comparators, prop, state, first, survivors, guide, budget)


def refilter(comparators: tuple[Comparator, ...], prop: Property, state: np.ndarray, position: int,
             survivors: list[tuple[tuple, Change]], guide: _Guide, budget: Budget) -> list[tuple[tuple, Change]] | None:
    """The ``survivors`` (one change each of ``comparators``, at ``position`` or after) that get every input of
    ``state`` right (the bank, or some inputs, before comparator ``position``), in their order; None when the
    budget ran out.

    >>> from sortcheck.explain.repair_bank import pack
    >>> from sortcheck.model import Sorts
    >>> found = [((), Change("insert", 2, (1, 2))), ((), Change("insert", 2, (0, 1)))]
    >>> refilter(((1, 2), (0, 1)), Sorts(), pack([(1, 0, 0)], 3), 0, found, _Guide(None), Budget()) == found[:1]
    True
    """
    by_index: dict[int, list[Change]] = {}
    for _, change in survivors:
        by_index.setdefault(change.index, []).append(change)
    kept = []
    for index in sorted(by_index):
        changes = sorted(by_index[index], key=lambda change: change.kind != "insert")
        ends = [(0, 0) if change.kind == "delete" else change.comparator for change in changes]
        options = tuple((change.kind, None if change.kind == "delete" else change.comparator) for change in changes)
        kept.append(_Lanes(index, sum(change.kind == "insert" for change in changes), options,
                           np.array([low for low, _ in ends], dtype=np.intp),
                           np.array([high for _, high in ends], dtype=np.intp)))
    passing = _run_on_bank(comparators, prop, state.copy(), position, kept, guide, budget)
    if passing is None:
        return None
    keep = {change for _, change in passing}
    return [item for item in survivors if item[1] in keep]


def _run_on_bank(comparators: tuple[Comparator, ...], prop: Property, state: np.ndarray, position: int,
                 kept: list[_Lanes], guide: _Guide, budget: Budget) -> list[tuple[tuple, Change]] | None:
    """The candidates of ``kept`` that get every bank input right (``state``: the bank before ``position``)."""
    channels, words = state.shape
    capacity = max(1, _CHUNK_WORDS // (channels * words))
    survivors, number = [], 0
    while number < len(kept):
        if budget.expired():
            return None
        block, lanes = [kept[number]], len(kept[number].options)
        number += 1
        while number < len(kept) and lanes + len(kept[number].options) <= capacity:
            block.append(kept[number])
            lanes += len(kept[number].options)
            number += 1
        for index in range(position, block[0].index):
            advance(state, comparators[index])
        position = block[0].index
        _evaluate_block(comparators, state, block, lanes, prop, survivors, guide)
    survivors.sort(key=lambda item: item[0])
    return survivors


def _evaluate_block(comparators, state: np.ndarray, block: list[_Lanes], lanes: int, prop: Property,
                    survivors: list, guide: _Guide) -> None:
    """Run the candidates of ``block`` (joining from ``block[0].index`` on, ``state`` the bank there) to the end,
    and add those that pass the bank to ``survivors``."""
    channels, words = state.shape
    size = len(comparators)
    cube, base, active = np.empty((channels, lanes, words), dtype=np.uint64), state.copy(), 0
    joins, starts = {lanes.index: lanes for lanes in block}, []
    for index in range(block[0].index, size + 1):
        joining = inserted = 0
        if index in joins:
            starts.append(active)
            joining, inserted = len(joins[index].options), joins[index].inserts
            place(cube[:, active:active + joining], base, joins[index].low, joins[index].high)
        if index < size:
            advance(cube[:, :active + inserted], comparators[index])
            advance(base, comparators[index])
        active += joining
    for lane in np.flatnonzero(~failure_mask(prop, list(cube)).any(axis=1)).tolist():
        number = bisect_right(starts, lane) - 1
        found = block[number]
        kind, new = found.options[lane - starts[number]]
        if kind == "insert":
            change = Change("insert", found.index, new)
        else:
            old = comparators[found.index]
            change = Change(kind, found.index, old if new is None else new, old)
        survivors.append((guide.key(kind, found.index, change.comparator), change))
