"""Bit-sliced evaluation of comparator networks on many 0-1 inputs at once.

A *block* holds, for every channel, an array of ``words`` unsigned 64-bit
integers; lane ``l`` of word ``w`` is one 0-1 input vector.  On 0-1 values a
comparator is an AND (the minimum) and an OR (the maximum), so one numpy call
applies it to ``64 * words`` inputs.

Two sources of blocks exist:

* :class:`AllVectors` enumerates all ``2**n`` vectors in index order: input
  ``i`` holds bit ``j`` of ``i`` on channel ``j``.  The low 6 index bits are
  the lane, the next bits the word within the block, the rest the block number.
* :class:`MergeInputs` enumerates the ``(m+1)(n-m+1)`` vectors whose runs
  ``0..m-1`` and ``m..n-1`` are each ascending (``0^a 1^(m-a) 0^c 1^(n-m-c)``).

Each property's 0-1 condition is a *failure mask*: a word array whose set bits
mark the lanes whose outputs break the property.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

import numpy as np

from sortcheck.model import Median, Merges, Property, Selects, Sorts

LANES = 64
ALL_ONES = np.uint64(0xFFFFFFFFFFFFFFFF)

#: LANE_PATTERNS[j] has bit l set exactly when bit j of l is set (l = 0..63).
LANE_PATTERNS = np.array([sum(1 << lane for lane in range(LANES) if (lane >> bit) & 1) for bit in range(6)],
                         dtype=np.uint64)

#: Words per block: 4096 words (32 KiB) per channel keeps a block of a few dozen
#: channels inside the second-level cache.
BLOCK_WORDS = 4096


@dataclass
class Block:
    """Channel rows of one block, and where the block starts in its source."""

    rows: list[np.ndarray]
    start: int  # index of the first vector (lane 0 of word 0) in the source
    vectors: int  # how many lanes hold real vectors (the rest is padding)


class AllVectors:
    """All ``2**n`` 0-1 vectors of ``n`` channels, in index order, in blocks."""

    def __init__(self, channels: int, block_words: int = BLOCK_WORDS):
        self.channels = channels
        self.total = 1 << channels
        bits_in_block = max(0, min(channels - 6, block_words.bit_length() - 1))
        self.words = 1 << bits_in_block
        self.block_bits = 6 + bits_in_block  # index bits covered inside one block
        self.blocks = max(1, 1 << (channels - self.block_bits)) if channels > self.block_bits else 1
        word_index = np.arange(self.words, dtype=np.uint64)
        self._word_patterns = [np.where((word_index >> np.uint64(bit)) & np.uint64(1), ALL_ONES, np.uint64(0))
                               for bit in range(bits_in_block)]

    def fill(self, number: int, rows: list[np.ndarray]) -> Block:
        """Write block ``number`` into the preallocated ``rows`` and return it."""
        for channel, row in enumerate(rows):
            if channel < 6:
                row.fill(LANE_PATTERNS[channel])
            elif channel < self.block_bits:
                row[:] = self._word_patterns[channel - 6]
            else:
                row.fill(ALL_ONES if (number >> (channel - self.block_bits)) & 1 else 0)
        start = number << self.block_bits
        return Block(rows, start, min(self.total - start, self.words * LANES))

    def vector(self, index: int) -> tuple[int, ...]:
        """The 0-1 vector with the given index."""
        return tuple((index >> channel) & 1 for channel in range(self.channels))


class MergeInputs:
    """The 0-1 vectors whose two runs, split at ``split``, are each ascending."""

    def __init__(self, channels: int, split: int, block_words: int = BLOCK_WORDS):
        self.channels, self.split = channels, split
        self.total = (split + 1) * (channels - split + 1)
        self.words = min(block_words, -(-self.total // LANES))
        per_block = self.words * LANES
        self.blocks = -(-self.total // per_block)

    def _zeros(self, index: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Zeros at the head of each run, for the vectors with these indices."""
        return index // (self.channels - self.split + 1), index % (self.channels - self.split + 1)

    def fill(self, number: int, rows: list[np.ndarray]) -> Block:
        per_block = self.words * LANES
        start = number * per_block
        index = np.arange(start, start + per_block, dtype=np.int64)
        valid = index < self.total
        first_zeros, second_zeros = self._zeros(np.where(valid, index, 0))
        # Padding lanes hold the all-zero vector, which every merger maps to itself.
        first_zeros = np.where(valid, first_zeros, self.split)
        second_zeros = np.where(valid, second_zeros, self.channels - self.split)
        for channel, row in enumerate(rows):
            if channel < self.split:
                ones = (channel >= first_zeros) & valid
            else:
                ones = (channel - self.split >= second_zeros) & valid
            row[:] = np.packbits(ones, bitorder="little").view("<u8")
        return Block(rows, start, int(valid.sum()))

    def vector(self, index: int) -> tuple[int, ...]:
        first_zeros, second_zeros = (int(v) for v in self._zeros(np.array(index)))
        return tuple(int(channel >= first_zeros) if channel < self.split else int(channel - self.split >= second_zeros)
                     for channel in range(self.channels))


def apply_network(rows: list[np.ndarray], comparators: Sequence[tuple[int, int]], scratch: np.ndarray) -> np.ndarray:
    """Apply the comparators to the rows in place; return the spare buffer.

    Rows are swapped by reference, so each comparator costs two numpy calls.
    """
    for a, b in comparators:
        low, high = rows[a], rows[b]
        np.bitwise_and(low, high, out=scratch)
        np.bitwise_or(low, high, out=high)
        rows[a], scratch = scratch, low
    return scratch


def _any_of(rows: Sequence[np.ndarray]) -> np.ndarray:
    result = rows[0].copy()
    for row in rows[1:]:
        np.bitwise_or(result, row, out=result)
    return result


def _all_of(rows: Sequence[np.ndarray]) -> np.ndarray:
    result = rows[0].copy()
    for row in rows[1:]:
        np.bitwise_and(result, row, out=result)
    return result


def _descents(rows: Sequence[np.ndarray], upto: int, descending: bool = False) -> np.ndarray:
    """Lanes where some adjacent pair among the first ``upto`` rows is out of order."""
    fail = np.zeros_like(rows[0])
    step = np.empty_like(rows[0])
    for i in range(upto - 1):
        first, second = (rows[i + 1], rows[i]) if descending else (rows[i], rows[i + 1])
        np.invert(second, out=step)
        np.bitwise_and(step, first, out=step)
        np.bitwise_or(fail, step, out=fail)
    return fail


def at_least(rows: Sequence[np.ndarray], threshold: int) -> np.ndarray:
    """Lanes where at least ``threshold`` of the rows hold a 1 (a bit-sliced counter).

    >>> rows = [np.array([0b0111], dtype=np.uint64), np.array([0b0011], dtype=np.uint64),
    ...         np.array([0b0101], dtype=np.uint64)]
    >>> bin(int(at_least(rows, 2)[0]))
    '0b111'
    """
    levels = max(1, len(rows).bit_length())
    counter = [np.zeros_like(rows[0]) for _ in range(levels)]
    for row in rows:
        carry = row.copy()
        for level in counter:
            total = level ^ carry
            np.bitwise_and(level, carry, out=carry)
            level[:] = total
    equal = np.full_like(rows[0], ALL_ONES)
    greater = np.zeros_like(rows[0])
    for level in reversed(range(levels)):
        if (threshold >> level) & 1:
            np.bitwise_and(equal, counter[level], out=equal)
        else:
            np.bitwise_or(greater, equal & counter[level], out=greater)
            np.bitwise_and(equal, ~counter[level], out=equal)
    if threshold >> levels:
        return np.zeros_like(rows[0])
    return greater | equal


def failure_mask(prop: Property, rows: Sequence[np.ndarray]) -> np.ndarray:
    """Lanes whose outputs break ``prop`` (by its 0-1 characterisation).

    * sorts / merges: some adjacent pair of outputs is out of order;
    * selects t: a 1 among the first t outputs while a 0 lies after them
      (plus a descent among the first t when sorted);
    * median of n = 2m+1: output m differs from the majority of the outputs
      (comparators keep the number of ones, so this is the input's median).
    """
    channels = len(rows)
    if isinstance(prop, Sorts):
        return _descents(rows, channels, prop.order == "descending")
    if isinstance(prop, Merges):
        return _descents(rows, channels)
    if isinstance(prop, Selects):
        if prop.count == channels:
            fail = np.zeros_like(rows[0])
        else:
            fail = _any_of(rows[:prop.count]) & ~_all_of(rows[prop.count:])
        if prop.sorted:
            fail |= _descents(rows, prop.count)
        return fail
    if isinstance(prop, Median):
        middle = (channels - 1) // 2
        return rows[middle] ^ at_least(rows, middle + 1)
    raise TypeError(f"no 0-1 condition for {prop.name}")


def first_failing_lane(fail: np.ndarray, valid: int) -> int | None:
    """Index (word * 64 + lane) of the first set bit among the first ``valid`` lanes, or None.

    >>> first_failing_lane(np.array([0, 0b1000], dtype=np.uint64), 128)
    67
    """
    nonzero = np.flatnonzero(fail)
    if nonzero.size == 0:
        return None
    bits = int(fail[nonzero[0]])
    position = int(nonzero[0]) * LANES + (bits & -bits).bit_length() - 1
    return position if position < valid else None
