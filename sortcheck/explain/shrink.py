"""Shrinking counterexamples: small deterministic passes over a still-fails predicate.

A pass is a function ``(value, still_fails) -> value`` that returns a simpler
value that still fails, or the value itself.  :func:`shrink` runs its passes
in order, again and again, until none makes progress.  "Simpler" is one
order per kind of value: for 0-1 inputs of a network, fewer ones or fewer
zeros, whichever side is smaller (:func:`zero_one_measure`); for input words
of a gate circuit, fewer one bits in all (:func:`word_measure`).

Predicates may take a batch: passes that try many candidates at once call
``still_fails.batch(candidates)`` when it exists (bit-parallel evaluation),
else the predicate one candidate at a time.
"""

from __future__ import annotations

from typing import Callable, Iterable, Sequence

Vector = tuple[int, ...]
Predicate = Callable[[Vector], bool]


def zero_one_measure(vector: Sequence[int]) -> int:
    """The number of ones or of zeros, whichever is smaller.

    >>> zero_one_measure((1, 1, 0, 1))
    1
    """
    ones = sum(vector)
    return min(ones, len(vector) - ones)


def word_measure(words: Sequence[int], width: int | None = None) -> int:
    """The number of one bits over all words; negative (signed) words count the bits of their ``width``-bit
    two's complement.

    >>> word_measure((3, 0, 4)), word_measure((-1, 2), width=4)
    (3, 5)
    """
    if width is None and any(word < 0 for word in words):
        raise ValueError("negative words need the width of their two's complement")
    mask = -1 if width is None else (1 << width) - 1
    return sum(bin(word & mask).count("1") for word in words)


def _first_failing(candidates: list[Vector], still_fails: Predicate) -> Vector | None:
    batch = getattr(still_fails, "batch", None)
    if batch is not None and candidates:
        for candidate, fails in zip(candidates, batch(candidates)):
            if fails:
                return candidate
        return None
    return next((candidate for candidate in candidates if still_fails(candidate)), None)


def _flip_towards_balance(vector: Vector, still_fails: Predicate, bit: int) -> Vector:
    """Flip single positions holding ``bit`` to the other value, first position first, while it fails."""
    while True:
        candidates = [vector[:i] + (1 - bit,) + vector[i + 1:] for i, v in enumerate(vector) if v == bit]
        found = _first_failing(candidates, still_fails)
        if found is None:
            return vector
        vector = found


def clear_a_one(vector: Vector, still_fails: Predicate) -> Vector:
    """Turn ones into zeros while the input still fails."""
    return _flip_towards_balance(vector, still_fails, 1)


def set_a_zero(vector: Vector, still_fails: Predicate) -> Vector:
    """Turn zeros into ones while the input still fails."""
    return _flip_towards_balance(vector, still_fails, 0)


def reduce_smaller_side(vector: Vector, still_fails: Predicate) -> Vector:
    """Clear ones when they are the smaller side, else set zeros (the measure goes down either way).

    >>> fails = lambda v: v[0] == 1 and v[3] == 0   # fails whenever channel 0 is 1 and channel 3 is 0
    >>> reduce_smaller_side((1, 1, 0, 0), fails)
    (1, 0, 0, 0)
    """
    ones = sum(vector)
    return clear_a_one(vector, still_fails) if ones <= len(vector) - ones else set_a_zero(vector, still_fails)


def move_a_one_right(vector: Vector, still_fails: Predicate) -> Vector:
    """Swap a 1 with a 0 just after it while it fails: same measure, a later pattern that may shrink further."""
    candidates = [vector[:i] + (0, 1) + vector[i + 2:] for i in range(len(vector) - 1)
                  if vector[i] == 1 and vector[i + 1] == 0]
    found = _first_failing(candidates, still_fails)
    return vector if found is None else found


def shrink(value: Vector, still_fails: Predicate, passes: Iterable[Callable[[Vector, Predicate], Vector]],
           measure: Callable[[Vector], int] = zero_one_measure, rounds: int = 50) -> Vector:
    """Run the passes until none lowers the measure (or ``rounds`` rounds); return the smallest value seen.

    >>> fails = lambda v: v[0] == 1 and v[5] == 0
    >>> shrink((1, 1, 1, 1, 0, 0), fails, [reduce_smaller_side])
    (1, 1, 1, 1, 1, 0)
    """
    passes = list(passes)
    best = value
    for _ in range(rounds):
        before = measure(best)
        for shrink_pass in passes:
            candidate = shrink_pass(best, still_fails)
            if measure(candidate) <= measure(best):
                best = candidate
        if measure(best) >= before:
            return best
    return best


#: The passes for 0-1 inputs of comparator networks, in the order they run.
ZERO_ONE_PASSES = (reduce_smaller_side, move_a_one_right, reduce_smaller_side)
