"""Bit-sliced evaluation of the suffix comparators over a product of groups (see ``reduction``).

The vectors to evaluate are the product of the groups' sets.  They are laid
out as *tiles* times *combinations*:

* a tile is the product of the small groups (at most :data:`TILE_LANES`
  vectors), or a slice of one group too large for that, laid out bit-sliced:
  one row of ``words`` 64-bit words per channel, lane ``l`` of word ``w`` being
  tile vector ``64 w + l`` (the first group varies fastest); padding lanes
  repeat tile vector 0 and count for nothing;
* a combination picks one vector of every other group (the *outer* groups, the
  first varying fastest); its channels are constant over the tile, so their
  rows are all-zero or all-one words.

The evaluation order is tile by tile, combination by combination, lane by
lane; "the first failing vector" means the first in this order.

:class:`NumpyEvaluator` applies the comparators with numpy to blocks of
several combinations; rows that are constant over a block are kept as Python
integers, so a comparator between constants costs nothing and one between
an all-zero or all-one row and a real row is a swap of references.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Iterator, Sequence

import numpy as np

from sortcheck.engines.networks.bitslice import ALL_ONES, BLOCK_WORDS, LANES, failure_mask
from sortcheck.engines.networks.reduction import Group, ReducedSpace
from sortcheck.model import Property

#: Most vectors in one tile (1024 words per channel row).
TILE_LANES = 1 << 16
ONES = int(ALL_ONES)


@dataclass(frozen=True)
class Tile:
    """One tile: bit-sliced rows of its channels, and its vectors' origins and counts (padded)."""

    rows: np.ndarray  # (channels, words) uint64; rows of channels outside the tile are zero
    origins: np.ndarray  # (words * 64,) uint64
    counts: np.ndarray  # (words * 64,) uint64, zero on padding lanes
    vectors: int  # real lanes

    @property
    def words(self) -> int:
        return int(self.rows.shape[1])


def _combine(groups: Sequence[Group]) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """All vectors of the product of ``groups`` (first group fastest), with origins and counts."""
    vectors = np.zeros(1, dtype=np.uint64)
    origins = np.zeros(1, dtype=np.uint64)
    counts = np.ones(1, dtype=np.uint64)
    for group in groups:
        vectors = (group.vectors[:, None] | vectors[None, :]).ravel()
        origins = (group.origins[:, None] | origins[None, :]).ravel()
        counts = (group.counts[:, None] * counts[None, :]).ravel()
    return vectors, origins, counts


def make_tile(channels: int, vectors: np.ndarray, origins: np.ndarray, counts: np.ndarray) -> Tile:
    """Lay ``vectors`` out bit-sliced; pad the last word with copies of vector 0."""
    real = int(vectors.size)
    words = -(-real // LANES)
    padding = words * LANES - real
    vectors = np.concatenate((vectors, np.full(padding, vectors[0], dtype=np.uint64)))
    origins = np.concatenate((origins, np.full(padding, origins[0], dtype=np.uint64)))
    counts = np.concatenate((counts, np.zeros(padding, dtype=np.uint64)))
    rows = np.zeros((channels, words), dtype=np.uint64)
    for channel in range(channels):
        bits = ((vectors >> np.uint64(channel)) & np.uint64(1)).astype(bool)
        if bits.any():
            rows[channel] = np.packbits(bits, bitorder="little").view("<u8")
    return Tile(rows, origins, counts, real)


class Layout:
    """How the product of a reduced space is split into tiles and combinations.

    Examples
    --------
    >>> from sortcheck.engines.networks.reduction import singleton_groups
    >>> layout = Layout(ReducedSpace(18, tuple(singleton_groups(18)), (), {}, 2, True))
    >>> layout.tile_channels, layout.combinations, len(layout.tiles)
    (16, 4, 1)
    >>> [hex(v) for v in layout.tiles[0].rows[:2, 0].tolist()]
    ['0xaaaaaaaaaaaaaaaa', '0xcccccccccccccccc']
    """

    def __init__(self, space: ReducedSpace, tile_lanes: int = TILE_LANES):
        self.channels = space.channels
        groups = list(space.groups)
        large = [g for g in groups if g.size > tile_lanes]
        if large:
            chunked = max(large, key=lambda g: g.size)
            self.outer = [g for g in groups if g is not chunked]
            self.tiles = [make_tile(self.channels, chunked.vectors[s:s + tile_lanes], chunked.origins[s:s + tile_lanes],
                                    chunked.counts[s:s + tile_lanes]) for s in range(0, chunked.size, tile_lanes)]
            inner = [chunked]
        else:
            inner, self.outer, lanes = [], [], 1
            for group in groups:
                if lanes * group.size <= tile_lanes:
                    inner.append(group)
                    lanes *= group.size
                else:
                    self.outer.append(group)
            self.tiles = [make_tile(self.channels, *_combine(inner))]
        self.tile_channels = sum(len(g.channels) for g in inner)
        self.outer_channels = tuple(c for g in self.outer for c in g.channels)
        self.combinations = 1
        for group in self.outer:
            self.combinations *= group.size
        self.unit_counts = all(bool((g.counts == 1).all()) for g in groups)
        self.constant_rows = self._constant_rows(inner)

    def _constant_rows(self, inner: Sequence[Group]) -> dict[int, int]:
        """Tile channels whose row is one word repeated (a single tile only): channel -> word."""
        if len(self.tiles) != 1:
            return {}
        rows = self.tiles[0].rows
        return {c: int(rows[c, 0]) for g in inner for c in g.channels if (rows[c] == rows[c, 0]).all()}

    def combination_values(self, start: int, stop: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Vectors (outer channels only), origins and counts of combinations ``start..stop-1``."""
        index = np.arange(start, stop, dtype=np.int64)
        vectors = np.zeros(stop - start, dtype=np.uint64)
        origins = np.zeros(stop - start, dtype=np.uint64)
        counts = np.ones(stop - start, dtype=np.uint64)
        for group in self.outer:
            digit = index % group.size
            index //= group.size
            vectors |= group.vectors[digit]
            origins |= group.origins[digit]
            counts *= group.counts[digit]
        return vectors, origins, counts

    @property
    def vectors(self) -> int:
        """Number of real vectors in the product."""
        return sum(tile.vectors for tile in self.tiles) * self.combinations


class NumpyEvaluator:
    """Blocks of ``k`` combinations times one tile, evaluated with numpy (see the module text)."""

    name = "numpy"

    def __init__(self, layout: Layout, comparators: Sequence[tuple[int, int]], prop: Property | None,
                 block_words: int = BLOCK_WORDS):
        self.layout = layout
        self.comparators = list(comparators)
        self.prop = prop
        self.block_words = block_words
        self._buffers: dict[int, list[np.ndarray]] = {}

    def per_call(self, tile: Tile) -> int:
        return max(1, self.block_words // tile.words)

    def _rows(self, tile: Tile, values: np.ndarray, pool: list[np.ndarray]) -> tuple[list, list[bool]]:
        k, words = values.size, tile.words
        rows: list = []
        owned: list[bool] = []
        outer = set(self.layout.outer_channels)
        for channel in range(self.layout.channels):
            if channel in outer:
                bits = (values >> np.uint64(channel)) & np.uint64(1)
                if (bits == bits[0]).all():
                    rows.append(ONES if bits[0] else 0)
                    owned.append(False)
                    continue
                row = pool.pop()[:k * words]
                row.reshape(k, words)[:] = (np.uint64(0) - bits)[:, None]
            elif channel in self.layout.constant_rows:
                rows.append(self.layout.constant_rows[channel])
                owned.append(False)
                continue
            else:
                row = pool.pop()[:k * words]
                row.reshape(k, words)[:] = tile.rows[channel][None, :]
            rows.append(row)
            owned.append(True)
        return rows, owned

    def first(self, tile: Tile, values: np.ndarray) -> tuple[int, int] | None:
        """(combination offset, lane) of the first failing vector of the block, or None."""
        mask = self.fail_words(tile, values)
        nonzero = np.flatnonzero(mask)
        if nonzero.size == 0:
            return None
        word = int(nonzero[0])
        bits = int(mask[word])
        lane = (word % tile.words) * LANES + (bits & -bits).bit_length() - 1
        return word // tile.words, lane

    def count(self, tile: Tile, values: np.ndarray, counts: np.ndarray) -> int:
        """Number of inputs behind the failing vectors of the block."""
        mask = self.fail_words(tile, values)
        if not mask.any():
            return 0
        lanes = lanes_of(mask).reshape(values.size, tile.words * LANES)
        per_combination = lanes.astype(np.uint64) @ tile.counts
        return sum(int(x) * int(c) for x, c in zip(per_combination.tolist(), counts.tolist()) if x)

    def swaps(self, tile: Tile, values: np.ndarray, swapped: np.ndarray) -> None:
        """Set ``swapped[i]`` when comparator ``i`` exchanges values on some vector of the block."""
        self.fail_words(tile, values, swapped)

    def fail_words(self, tile: Tile, values: np.ndarray, swaps: np.ndarray | None = None) -> np.ndarray | None:
        """Failure mask of the block (``k * words`` words), or None when ``swaps`` are collected instead.

        With ``swaps``, ``swaps[i]`` is set when comparator ``i`` exchanges
        values in some lane of the block.
        """
        size = values.size * tile.words
        capacity = self.per_call(tile) * tile.words
        if capacity not in self._buffers:
            self._buffers[capacity] = [np.empty(capacity, dtype=np.uint64) for _ in range(self.layout.channels + 2)]
        pool = list(self._buffers[capacity])
        rows, owned = self._rows(tile, values, pool)
        for number, (a, b) in enumerate(self.comparators):
            if swaps is not None and not swaps[number]:
                swaps[number] = _exchanges(rows[a], rows[b])
            _compare(rows, owned, pool, a, b, size)
        if swaps is not None:
            return None
        full = [np.full(size, row, dtype=np.uint64) if isinstance(row, int) else row for row in rows]
        return failure_mask(self.prop, full)


def _exchanges(low, high) -> bool:
    if isinstance(low, int) and isinstance(high, int):
        return bool(low & ~high & ONES)
    if isinstance(low, int):
        return low != 0 and bool((np.uint64(low) & ~high).any())
    if isinstance(high, int):
        return high != ONES and bool((low & np.uint64(~high & ONES)).any())
    return bool((low & ~high).any())


def _compare(rows: list, owned: list[bool], pool: list[np.ndarray], a: int, b: int, size: int) -> None:
    """Comparator ``(a, b)`` on mixed rows: ``rows[a] := min``, ``rows[b] := max``."""
    x, y = rows[a], rows[b]
    x_int, y_int = isinstance(x, int), isinstance(y, int)
    if x_int and y_int:
        rows[a], rows[b] = x & y, x | y
        return
    if (x_int and x == 0) or (y_int and y == ONES):
        return  # already in order on every lane
    if (x_int and x == ONES) or (y_int and y == 0):
        rows[a], rows[b] = y, x  # in reverse order on every lane
        owned[a], owned[b] = owned[b], owned[a]
        return
    low = pool.pop()[:size]
    np.bitwise_and(x, y, out=low)
    if not y_int and owned[b]:
        np.bitwise_or(x, y, out=y)
        high, spare = y, (x if owned[a] else None)
    elif not x_int and owned[a]:
        np.bitwise_or(x, y, out=x)
        high, spare = x, None
    else:
        high, spare = pool.pop()[:size], None
        np.bitwise_or(x, y, out=high)
    if spare is not None:
        pool.append(spare.base if spare.base is not None else spare)
    rows[a], rows[b] = low, high
    owned[a], owned[b] = True, True


def blocks(layout: Layout, per_call) -> Iterator[tuple[int, Tile, int, int]]:
    """``(tile number, tile, first combination, stop)`` in evaluation order."""
    for number, tile in enumerate(layout.tiles):
        step = per_call(tile)
        for start in range(0, layout.combinations, step):
            yield number, tile, start, min(layout.combinations, start + step)


def lanes_of(mask: np.ndarray) -> np.ndarray:
    """Bits of a word array as 0/1 bytes, lane order.

    >>> lanes_of(np.array([5], dtype=np.uint64))[:4].tolist()
    [1, 0, 1, 0]
    """
    return np.unpackbits(mask.view(np.uint8), bitorder="little")


@dataclass
class Outcome:
    """What an evaluation of a layout found."""

    finished: bool  # False: the budget ran out first
    evaluated: int  # real vectors evaluated
    failing_origin: int | None = None  # first failing vector's origin (an input, bit c = channel c)
    failing_inputs: int = 0  # count mode: inputs behind the failing vectors
    swapped: np.ndarray | None = None  # swaps mode: per comparator, exchanged on some vector
    calls: int = 0


def evaluate(layout: Layout, evaluator, mode: str, budget) -> Outcome:
    """Run ``evaluator`` over the layout in evaluation order.

    ``mode`` is ``"first"`` (stop at the first failing vector), ``"count"``
    (count the inputs behind every failing vector) or ``"swaps"`` (which
    comparators ever exchange values).  The budget is checked before every
    call of the evaluator.
    """
    outcome = Outcome(False, 0)
    if mode == "swaps":
        outcome.swapped = np.zeros(len(evaluator.comparators), dtype=bool)
    done_lanes = 0
    for number, tile, start, stop in blocks(layout, evaluator.per_call):
        if budget.expired():
            return outcome
        budget.report(outcome.evaluated, layout.vectors, "enumerate")
        values, origins, counts = layout.combination_values(start, stop)
        outcome.calls += 1
        if mode == "first":
            found = evaluator.first(tile, values)
            if found is not None:
                offset, lane = found
                outcome.evaluated = done_lanes * layout.combinations + (start + offset) * tile.vectors + lane + 1
                outcome.failing_origin = int(tile.origins[lane]) | int(origins[offset])
                outcome.finished = True
                return outcome
        elif mode == "count":
            outcome.failing_inputs += evaluator.count(tile, values, counts)
        else:
            evaluator.swaps(tile, values, outcome.swapped)
        outcome.evaluated = done_lanes * layout.combinations + stop * tile.vectors
        if stop == layout.combinations:
            done_lanes += tile.vectors
    outcome.finished = True
    return outcome
