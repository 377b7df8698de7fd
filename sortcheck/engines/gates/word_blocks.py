"""Blocks of input words for bit-parallel simulation of gate circuits.

A block holds ``64 * W`` inputs (lanes) of ``n`` words of ``w`` bits twice:

* as *bit rows*: an array of shape ``(n * w, W)`` of unsigned 64-bit words,
  row ``k * w + j`` holding bit ``j`` of word ``k`` for every lane (lane ``l``
  is bit ``l % 64`` of word ``l // 64``), which is what the gates consume;
* as *keys*: an array of shape ``(lanes, n)`` whose order is the order of the
  values (the word itself when unsigned; the word with its top bit flipped
  when signed, which maps two's complement order onto unsigned order).  Keys
  are ``uint64`` for words of at most 64 bits and Python integers (an object
  array) for wider words.

Words wider than 64 bits travel as *limbs*: an array ``(lanes, n, L)`` of
``uint64``, limb 0 least significant.

Two sources make blocks: :class:`ExhaustiveInputs` (every input, in index
order: bit ``b`` of the input index is bit ``b % w`` of word ``b // w``) and
:class:`SampledInputs` (corner cases first, then seeded random inputs biased
towards duplicates, near-equal values and sorted runs).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from sortcheck.engines.networks.bitslice import AllVectors
from sortcheck.engines.gates.word_corners import corner_cases, random_keys
from sortcheck.model import Merges, Property

LANES = 64


def limb_count(width: int) -> int:
    """Number of 64-bit limbs of a word of ``width`` bits.

    >>> limb_count(1), limb_count(64), limb_count(65)
    (1, 1, 2)
    """
    return -(-width // 64)


_TRANSPOSE_STEPS = [(shift, np.uint64(mask), np.uint64(shift)) for shift, mask in (
    (32, 0x00000000FFFFFFFF), (16, 0x0000FFFF0000FFFF), (8, 0x00FF00FF00FF00FF),
    (4, 0x0F0F0F0F0F0F0F0F), (2, 0x3333333333333333), (1, 0x5555555555555555))]


def transpose_bits(matrix: np.ndarray) -> np.ndarray:
    """Transpose 64 x 64 bit matrices in place: ``matrix[r, ...]`` bit ``c`` trades with ``matrix[c, ...]`` bit ``r``.

    The row index is the first axis (so each round works on long contiguous
    runs); every other axis just lists matrices.  Six rounds, each swapping the
    off-diagonal sub-blocks of half the size: rows with bit ``j`` of their index
    clear trade their bits ``c + j`` against bits ``c`` of the rows ``j`` further on.

    >>> matrix = np.zeros((64, 1), dtype=np.uint64); matrix[3, 0] = 1 << 5
    >>> int(transpose_bits(matrix)[5, 0]), int(matrix[3, 0])
    (8, 0)
    """
    rest = matrix.shape[1:]
    for size, mask, shift in _TRANSPOSE_STEPS:
        halves = matrix.reshape(64 // (2 * size), 2, size, *rest)
        low, high = halves[:, 0], halves[:, 1]
        swap = low >> shift
        swap ^= high
        swap &= mask
        high ^= swap
        swap <<= shift
        low ^= swap
    return matrix


#: Words of at most this many bits are moved between limbs and bit rows bit by bit (packbits) rather than by
#: 64 x 64 transposes, which would move 64 bits per word whatever the width.
NARROW = 16


def _narrow_limbs_to_rows(limbs: np.ndarray, width: int) -> np.ndarray:
    """:func:`limbs_to_rows` for words of at most :data:`NARROW` bits.

    >>> limbs = np.random.default_rng(0).integers(0, 8, size=(128, 3, 1)).astype(np.uint64)
    >>> bool((_narrow_limbs_to_rows(limbs, 3) == _transposed_limbs_to_rows(limbs, 3)).all())
    True
    """
    lanes, words, _ = limbs.shape
    values = np.ascontiguousarray(limbs[:, :, 0].T).astype(np.uint16)  # (words, lanes)
    shifts = np.arange(width, dtype=np.uint16)[None, :, None]
    bits = ((values[:, None, :] >> shifts) & np.uint16(1)).astype(np.uint8)  # (words, width, lanes)
    packed = np.packbits(bits.reshape(words * width, lanes), axis=1, bitorder="little")
    return packed.view("<u8").astype(np.uint64).reshape(words * width, lanes // 64)


def _narrow_rows_to_limbs(rows: np.ndarray, words: int, width: int) -> np.ndarray:
    """:func:`rows_to_limbs` for words of at most :data:`NARROW` bits.

    >>> rows = np.random.default_rng(0).integers(0, 2 ** 63, size=(6, 2)).astype(np.uint64)
    >>> bool((_narrow_rows_to_limbs(rows, 2, 3) == _transposed_rows_to_limbs(rows, 2, 3)).all())
    True
    """
    groups = rows.shape[1]
    raw = np.ascontiguousarray(rows.astype("<u8")).view(np.uint8).reshape(words * width, groups * 8)
    bits = np.unpackbits(raw, axis=1, bitorder="little").reshape(words, width, groups * 64)
    shifts = np.arange(width, dtype=np.uint16)[None, :, None]
    values = (bits.astype(np.uint16) << shifts).sum(axis=1, dtype=np.uint16)  # (words, lanes)
    return np.ascontiguousarray(values.T).astype(np.uint64).reshape(groups * 64, words, 1)


def limbs_to_rows(limbs: np.ndarray, width: int) -> np.ndarray:
    """Bit rows ``(n * width, lanes // 64)`` of words given as limbs ``(lanes, n, L)``; lanes % 64 == 0.

    >>> rows = limbs_to_rows(np.array([[[1], [2]]] * 64, dtype=np.uint64), 2)
    >>> [hex(int(row[0])) for row in rows]
    ['0xffffffffffffffff', '0x0', '0x0', '0xffffffffffffffff']
    """
    if width <= NARROW:
        return _narrow_limbs_to_rows(limbs, width)
    return _transposed_limbs_to_rows(limbs, width)


def _transposed_limbs_to_rows(limbs: np.ndarray, width: int) -> np.ndarray:
    lanes, words, count = limbs.shape
    groups = lanes // 64
    # matrices[r, k, l, g]: limb l of word k of lane 64 g + r; transposed, bit 64 l + r of word k for group g
    matrices = limbs.reshape(groups, 64, words, count).transpose(1, 2, 3, 0).astype(np.uint64, order="C", copy=True)
    transpose_bits(matrices)
    bits = matrices.transpose(1, 2, 0, 3).reshape(words, count * 64, groups)[:, :width]
    return np.ascontiguousarray(bits).reshape(words * width, groups)


def rows_to_limbs(rows: np.ndarray, words: int, width: int) -> np.ndarray:
    """Limbs ``(lanes, words, L)`` of the words in bit rows ``(words * width, W)`` (the inverse of the above).

    >>> rows = limbs_to_rows(np.array([[[5], [0], [7]]] * 64, dtype=np.uint64), 3)
    >>> rows_to_limbs(rows, 3, 3)[0, :, 0].tolist()
    [5, 0, 7]
    """
    if width <= NARROW:
        return _narrow_rows_to_limbs(rows, words, width)
    return _transposed_rows_to_limbs(rows, words, width)


def _transposed_rows_to_limbs(rows: np.ndarray, words: int, width: int) -> np.ndarray:
    groups, count = rows.shape[1], limb_count(width)
    bits = np.zeros((words, count * 64, groups), dtype=np.uint64)
    bits[:, :width] = rows.reshape(words, width, groups)
    matrices = np.ascontiguousarray(bits.reshape(words, count, 64, groups).transpose(2, 0, 1, 3))
    transpose_bits(matrices)
    return np.ascontiguousarray(matrices.transpose(3, 0, 1, 2)).reshape(groups * 64, words, count)


def sign_flip(width: int, signed: bool) -> int:
    """The bit that maps values onto keys: the top bit when signed, else nothing."""
    return 1 << (width - 1) if signed else 0


def limbs_to_keys(limbs: np.ndarray, width: int, signed: bool) -> np.ndarray:
    """Order keys ``(lanes, n)`` of raw words given as limbs (``uint64`` up to 64 bits, else Python ints).

    >>> limbs_to_keys(np.array([[[0], [3]]], dtype=np.uint64), 2, True).tolist()
    [[2, 1]]
    """
    flip = sign_flip(width, signed)
    if limbs.shape[2] == 1:
        return limbs[:, :, 0] ^ np.uint64(flip)
    keys = np.zeros(limbs.shape[:2], dtype=object)
    for index in range(limbs.shape[2]):
        keys += limbs[:, :, index].astype(object) << (64 * index)
    return keys ^ flip


def ints_to_limbs(values: list[tuple[int, ...]], words: int, width: int) -> np.ndarray:
    """Limbs ``(len(values), words, L)`` of unsigned integer words."""
    count = limb_count(width)
    limbs = np.zeros((len(values), words, count), dtype=np.uint64)
    if count == 1:
        if values:
            limbs[:, :, 0] = np.array(values, dtype=np.uint64).reshape(len(values), words)
        return limbs
    mask = (1 << 64) - 1
    for lane, row in enumerate(values):
        for word, value in enumerate(row):
            limbs[lane, word] = [(value >> (64 * index)) & mask for index in range(count)]
    return limbs


def limbs_to_ints(limbs: np.ndarray) -> tuple[int, ...]:
    """The unsigned words of one lane given as limbs ``(n, L)``."""
    return tuple(sum(int(limb) << (64 * index) for index, limb in enumerate(word)) for word in limbs)


@dataclass(frozen=True)
class WordBlock:
    """One block of inputs: bit rows, keys, how many lanes are real, and the index of lane 0."""

    rows: np.ndarray
    keys: np.ndarray
    valid: int
    first: int
    limbs: np.ndarray | None = None  # raw words of the lanes (sampled blocks only)


class ExhaustiveInputs:
    """Every input of ``words`` words of ``width`` bits, in index order (at most 62 input bits).

    >>> source = ExhaustiveInputs(2, 2, False, 64)
    >>> block = source.block(0)
    >>> source.total, block.valid, block.keys[:6].tolist(), source.input_of(block, 5)
    (16, 16, [[0, 0], [1, 0], [2, 0], [3, 0], [0, 1], [1, 1]], (1, 1))
    """

    def __init__(self, words: int, width: int, signed: bool, block_words: int):
        self.words, self.width, self.signed = words, width, signed
        self.bits = words * width
        if self.bits > 62:
            raise ValueError("exhaustive simulation handles at most 62 input bits")
        self.total = 1 << self.bits
        self._vectors = AllVectors(self.bits, block_words)
        self.blocks, self.block_words = self._vectors.blocks, self._vectors.words
        self._shifts = np.arange(words, dtype=np.uint64) * np.uint64(width)
        self._mask = np.uint64((1 << width) - 1)
        self._flip = np.uint64(sign_flip(width, signed))

    def block(self, number: int) -> WordBlock:
        rows = np.empty((self.bits, self.block_words), dtype=np.uint64)
        found = self._vectors.fill(number, list(rows))
        lanes = self.block_words * LANES
        index = np.arange(found.start, found.start + lanes, dtype=np.uint64)
        keys = ((index[:, None] >> self._shifts[None, :]) & self._mask) ^ self._flip
        return WordBlock(rows, keys, found.vectors, found.start)

    def input_of(self, block: WordBlock, lane: int) -> tuple[int, ...]:
        """The unsigned input words of a lane."""
        index = block.first + lane
        return tuple((index >> (word * self.width)) & ((1 << self.width) - 1) for word in range(self.words))


class SampledInputs:
    """Corner cases, then ``random_samples`` seeded random inputs, in blocks of ``64 * block_words`` lanes.

    Blocks of corner cases may be narrower (as many words as they need).

    Every block is made from its own generator seeded with ``(seed, block number)``,
    so a block's inputs do not depend on which blocks were made before it.

    >>> from sortcheck.model import Sorts
    >>> source = SampledInputs(3, 4, Sorts(), seed=1, random_samples=1000, block_words=16)
    >>> first = source.block(0)
    >>> source.input_of(first, 0), first.keys.shape, first.valid == source.corner_count
    ((0, 0, 0), (192, 3), True)
    >>> source.total == source.corner_count + 1000
    True
    """

    def __init__(self, words: int, width: int, prop: Property, seed: int, random_samples: int, block_words: int):
        self.words, self.width, self.prop, self.seed = words, width, prop, seed
        self.lanes = block_words * LANES
        self.block_words = block_words
        self._corners = corner_cases(words, width, prop.signed)
        self.corner_count = len(self._corners)
        self._corner_blocks = -(-self.corner_count // self.lanes)
        self._random_blocks = -(-random_samples // self.lanes)
        self.random_samples = random_samples
        self.total = self.corner_count + random_samples
        self.blocks = self._corner_blocks + self._random_blocks

    def block(self, number: int) -> WordBlock:
        flip = sign_flip(self.width, self.prop.signed)
        if number < self._corner_blocks:  # only as many words as the corner cases need
            start = number * self.lanes
            chosen = self._corners[start:start + self.lanes]
            valid = len(chosen)
            limbs = ints_to_limbs(chosen, self.words, self.width)
            padding = -valid % LANES
            limbs = np.concatenate([limbs, np.repeat(limbs[-1:], padding, axis=0)]) if padding else limbs
            first = start
        else:
            offset = (number - self._corner_blocks) * self.lanes
            valid = min(self.lanes, self.random_samples - offset)
            rng = np.random.default_rng([self.seed, number])
            runs = (self.prop.split,) if isinstance(self.prop, Merges) else None
            limbs = random_keys(rng, self.lanes, self.words, self.width, runs)
            if flip:
                limbs[:, :, -1] ^= np.uint64(flip >> (64 * (limbs.shape[2] - 1)))
            first = self.corner_count + offset
        keys = limbs_to_keys(limbs, self.width, self.prop.signed)
        return WordBlock(limbs_to_rows(limbs, self.width), keys, valid, first, limbs)

    def input_of(self, block: WordBlock, lane: int) -> tuple[int, ...]:
        """The unsigned input words of a lane."""
        return limbs_to_ints(block.limbs[lane])
