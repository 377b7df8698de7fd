"""Shrinking counterexamples: small deterministic passes over a still-fails predicate.

A pass is a function ``(value, still_fails) -> value`` that returns a simpler
value that still fails, or the value itself.  :func:`shrink` runs its passes
in order, again and again, until none makes progress.  "Simpler" is one
order per kind of value: for 0-1 inputs of a network, fewer ones or fewer
zeros, whichever side is smaller (:func:`zero_one_measure`); for input words
of a gate circuit, fewer one bits in all (:func:`word_measure`), with the
passes :data:`WORD_PASSES` on raw bit patterns.

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


# ----------------------------------------------------------------------------- input words of gate circuits
# Words here are raw bit patterns (non-negative; two's complement for signed values), measured by word_measure.


def _first_no_larger(candidates: list[Vector], still_fails: Predicate, bound: int) -> Vector | None:
    return _first_failing([c for c in dict.fromkeys(candidates) if word_measure(c) <= bound], still_fails)


def _repeat(vector: Vector, still_fails: Predicate, candidates_of: Callable[[Vector], list[Vector]]) -> Vector:
    """Take the first failing candidate of no larger measure, again and again, while the measure goes down."""
    while True:
        found = _first_no_larger(candidates_of(vector), still_fails, word_measure(vector) - 1)
        if found is None:
            return vector
        vector = found


def clear_a_bit(words: Vector, still_fails: Predicate) -> Vector:
    """Clear single one bits while the input still fails.

    >>> clear_a_bit((7, 5), lambda w: w[0] & 2 > 0 and w[1] > 0)
    (2, 4)
    """
    return _repeat(words, still_fails, lambda v: [v[:k] + (v[k] & ~(1 << i),) + v[k + 1:]
                                                   for k in range(len(v)) for i in range(v[k].bit_length())
                                                   if v[k] >> i & 1])


def drop_a_word(words: Vector, still_fails: Predicate) -> Vector:
    """Set whole words to zero while the input still fails.

    >>> drop_a_word((7, 5, 6), lambda w: w[1] == 5)
    (0, 5, 0)
    """
    return _repeat(words, still_fails, lambda v: [v[:k] + (0,) + v[k + 1:] for k in range(len(v)) if v[k]])


def lower_a_value(words: Vector, still_fails: Predicate) -> Vector:
    """Replace a word by a smaller value of no more one bits (halved, top bit cleared) while it fails.

    >>> lower_a_value((12, 3), lambda w: w[0] > w[1])
    (1, 0)
    """
    def lower(v: Vector) -> list[Vector]:
        return [v[:k] + (smaller,) + v[k + 1:] for k in range(len(v)) if v[k]
                for smaller in (v[k] >> 1, v[k] ^ (1 << (v[k].bit_length() - 1)))]
    vector = words
    while True:
        found = _first_no_larger(lower(vector), still_fails, word_measure(vector))
        if found is None or sum(found) >= sum(vector):
            return vector
        vector = found


def move_a_bit_down(words: Vector, still_fails: Predicate) -> Vector:
    """Move a one bit to the clear bit just below it (same measure, a smaller value) while it fails.

    >>> move_a_bit_down((4, 2), lambda w: w[0] > w[1])
    (2, 1)
    """
    def moved(v: Vector) -> list[Vector]:
        return [v[:k] + (v[k] ^ (3 << (i - 1)),) + v[k + 1:] for k in range(len(v))
                for i in range(1, v[k].bit_length()) if v[k] >> i & 1 and not v[k] >> (i - 1) & 1]
    vector = words
    while True:
        found = _first_no_larger(moved(vector), still_fails, word_measure(vector))
        if found is None:
            return vector
        vector = found


#: The passes for input words of gate circuits, in the order they run.
WORD_PASSES = (drop_a_word, clear_a_bit, lower_a_value, move_a_bit_down, clear_a_bit)
