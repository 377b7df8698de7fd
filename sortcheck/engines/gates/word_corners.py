"""Inputs worth trying first on a gate circuit: corner cases and biased random words.

Sorting circuits break most often on equal values, on values that differ only
in their low bits, at the ends of the range (zero, all ones, the smallest and
largest signed values) and on inputs that are already (almost) in order.
:func:`corner_cases` lists such inputs deterministically; :func:`random_keys`
draws random inputs that favour them.  Random inputs are drawn as *keys*
(values in order space: unsigned order, with the top bit flipped for signed
values), so "sorted" means sorted in the property's order.
"""

from __future__ import annotations

import numpy as np

#: Words up to this count get every pattern of two values over the positions.
PATTERN_WORDS = 10
#: Positions tried for "every word equal but one" (the first, last and some between).
ODD_ONE_POSITIONS = 16


def special_values(width: int) -> list[int]:
    """Zero, one, all ones, alternating bits, the signed extremes, without repeats.

    >>> special_values(4)
    [0, 1, 15, 14, 8, 7, 5, 10]
    """
    top = (1 << width) - 1
    alternating = int("01" * width, 2) & top
    values = [0, 1, top, top - 1, 1 << (width - 1), (1 << (width - 1)) - 1, alternating, alternating ^ top]
    return list(dict.fromkeys(value & top for value in values))


def _positions(words: int) -> list[int]:
    if words <= ODD_ONE_POSITIONS:
        return list(range(words))
    step = (words - 1) / (ODD_ONE_POSITIONS - 1)
    return sorted({round(step * i) for i in range(ODD_ONE_POSITIONS)})


def corner_cases(words: int, width: int, signed: bool) -> list[tuple[int, ...]]:
    """Deterministic corner-case inputs as tuples of unsigned words (raw bits).

    All words equal; all equal but one; for up to :data:`PATTERN_WORDS` words
    every arrangement of two values (0 and 1, 0 and all ones, the signed
    extremes, the two largest); ascending and descending ramps in the
    property's order.

    >>> cases = corner_cases(2, 1, False)
    >>> cases[:4], len(cases) == len(set(cases))
    ([(0, 0), (1, 1), (1, 0), (0, 1)], True)
    """
    top = (1 << width) - 1
    flip = 1 << (width - 1) if signed else 0
    values = special_values(width)
    cases = [(value,) * words for value in values]
    for value in values:
        for other in values:
            if other != value:
                cases.extend(tuple(other if i == position else value for i in range(words))
                             for position in _positions(words))
    if words <= PATTERN_WORDS:
        pairs = [(0, 1), (0, top), ((1 << (width - 1)) - 1, 1 << (width - 1)), (top - 1, top)]
        for low, high in pairs:
            cases.extend(tuple(high if (pattern >> i) & 1 else low for i in range(words))
                         for pattern in range(1 << words))
    ramp = [(i & top) ^ flip for i in range(words)]
    spread = [((i * (top // max(1, words - 1))) & top) ^ flip for i in range(words)]
    for run in (ramp, spread):
        cases.extend([tuple(run), tuple(reversed(run))])
    return list(dict.fromkeys(cases))


def _uniform(rng: np.random.Generator, shape: tuple[int, ...]) -> np.ndarray:
    return rng.integers(0, 1 << 64, size=shape, dtype=np.uint64, endpoint=False)


def _few_distinct(rng: np.random.Generator, lanes: int, words: int, limbs: int) -> np.ndarray:
    """Each lane uses 1 to 3 distinct random values."""
    bases = _uniform(rng, (lanes, 3, limbs))
    distinct = rng.integers(1, 4, size=(lanes, 1))
    picks = rng.integers(0, 1 << 30, size=(lanes, words)) % distinct
    return np.take_along_axis(bases, picks[:, :, None], axis=1)


def _near(rng: np.random.Generator, lanes: int, words: int, limbs: int, width: int, centres: list[int]
          ) -> np.ndarray:
    """Words that differ from one centre per lane only in their 1 to 3 low bits."""
    result = np.zeros((lanes, words, limbs), dtype=np.uint64)
    if centres:
        choice = rng.integers(0, len(centres), size=lanes)
        for index, centre in enumerate(centres):
            for limb in range(limbs):
                result[choice == index, :, limb] = np.uint64((centre >> (64 * limb)) & ((1 << 64) - 1))
    else:
        result[:] = _uniform(rng, (lanes, 1, limbs))
    low_bits = rng.integers(1, min(3, width) + 1, size=(lanes, 1))
    noise = rng.integers(0, 1 << 30, size=(lanes, words)) & ((1 << low_bits) - 1)
    result[:, :, 0] ^= noise.astype(np.uint64)
    return result


def sort_lanes(keys: np.ndarray) -> np.ndarray:
    """Keys ``(lanes, n, L)`` sorted ascending within every lane (limbs compared most significant first)."""
    if keys.shape[2] == 1:
        return np.sort(keys, axis=1)
    order = np.lexsort(tuple(keys[:, :, limb] for limb in range(keys.shape[2])), axis=-1)
    return np.take_along_axis(keys, order[:, :, None], axis=1)


def _arrange(rng: np.random.Generator, keys: np.ndarray, runs: tuple[int, ...] | None) -> np.ndarray:
    """Sort some lanes (ascending, descending, or with one adjacent swap); with ``runs``, sort every run."""
    lanes, words = keys.shape[:2]
    if runs is not None:
        bounds = [0, *runs, words]
        for start, stop in zip(bounds, bounds[1:]):
            keys[:, start:stop] = sort_lanes(keys[:, start:stop])
        return keys
    quarter = lanes // 4
    keys[:quarter] = sort_lanes(keys[:quarter])
    keys[quarter:2 * quarter] = sort_lanes(keys[quarter:2 * quarter])[:, ::-1]
    almost = sort_lanes(keys[2 * quarter:3 * quarter])
    if words > 1:
        swap = rng.integers(0, words - 1, size=len(almost))
        rows = np.arange(len(almost))
        almost[rows, swap], almost[rows, swap + 1] = almost[rows, swap + 1].copy(), almost[rows, swap].copy()
    keys[2 * quarter:3 * quarter] = almost
    return keys


def random_keys(rng: np.random.Generator, lanes: int, words: int, width: int,
                runs: tuple[int, ...] | None = None) -> np.ndarray:
    """Random keys ``(lanes, words, L)`` (``uint64`` limbs, masked to ``width`` bits), biased to hard cases.

    A sixth of the lanes each: uniform; 1 to 3 distinct values; near one random
    value; near zero, the largest key or the middle; the same kinds again,
    shuffled into each other.  Then a quarter of the lanes is sorted, a quarter
    sorted descending and a quarter almost sorted; with ``runs`` (split points
    of a merge) every run of every lane is sorted instead.

    >>> keys = random_keys(np.random.default_rng(0), 128, 4, 3)
    >>> keys.shape, int(keys.max()) <= 7, bool((np.diff(keys[:32, :, 0], axis=1) >= 0).all())
    ((128, 4, 1), True, True)
    """
    limbs = -(-width // 64)
    top = (1 << width) - 1
    sixth = max(1, lanes // 6)
    parts = [
        _uniform(rng, (sixth, words, limbs)),
        _few_distinct(rng, sixth, words, limbs),
        _near(rng, sixth, words, limbs, width, []),
        _near(rng, sixth, words, limbs, width, [0, top, 1 << (width - 1), (1 << (width - 1)) - 1]),
    ]
    mixed = np.concatenate([parts[1], parts[2], parts[3], _few_distinct(rng, sixth, words, limbs)], axis=1)
    pick = np.argsort(rng.random((sixth, mixed.shape[1])), axis=1)[:, :words]
    parts.append(np.take_along_axis(mixed, pick[:, :, None], axis=1))
    remaining = lanes - sixth * len(parts)
    parts.append(_few_distinct(rng, remaining, words, limbs))
    keys = np.concatenate(parts, axis=0)[:lanes]
    keys[:, :, -1] &= np.uint64(top >> (64 * (limbs - 1)))
    order = rng.permutation(lanes)
    return _arrange(rng, keys[order], runs)
