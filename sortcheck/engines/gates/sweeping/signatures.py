"""Signatures of the input bits of word circuits: simulation patterns that make internal signals tell apart.

Uniform random words almost never tie or nearly tie, so in a circuit of
comparisons most comparison signals look alike on them (a comparison of the
low bits of two words hardly ever decides anything).  The patterns here are
random words biased to hard cases (few distinct values, values near each
other and near the ends of the range: :func:`~sortcheck.engines.gates.word_corners.random_keys`),
so that two signals with one signature are almost always one function.
"""

from __future__ import annotations

import numpy as np

from sortcheck.engines.gates.word_blocks import limbs_to_rows
from sortcheck.engines.gates.word_corners import random_keys

#: Simulated input patterns (signature bits).
PATTERNS = 2048
SEED = 20261205

def input_signatures(words: int, width: int, patterns: int = PATTERNS, seed: int = SEED) -> list[int]:
    """Signatures of the input bits (word-major, least significant bit first) on biased random words.

    >>> len(input_signatures(3, 2, 128)), max(input_signatures(3, 2, 128)) < 2 ** 128
    (6, True)
    """
    keys = random_keys(np.random.default_rng(seed), patterns, words, width)
    rows = limbs_to_rows(keys, width)
    return [int.from_bytes(row.astype("<u8").tobytes(), "little") for row in rows]


def uniform_signatures(bits: int, patterns: int, seed: int) -> list[int]:
    """Signatures of ``bits`` input bits on uniformly random patterns (for circuits whose words differ in width).

    >>> [signature < 2 ** 64 for signature in uniform_signatures(3, 64, 1)]
    [True, True, True]
    """
    generator = np.random.default_rng(seed)
    return [int.from_bytes(generator.bytes(patterns // 8), "little") for _ in range(bits)]
