"""The threshold conditions of every property as BDDs (``encodings/gate-bdd-thresholds.md``).

For a threshold ``v``, ``a_j = [x_j >= v]`` are the thresholded inputs and
``b_i = [y_i >= v]`` the thresholded outputs.  ``s``, the 0-1 sort of ``a``
(ascending), is a symmetric function of ``a``: ``s_i`` is "at least ``n - i``
of the ``a_j`` are 1".  :func:`threshold_violation` gives, for one ``v``, the
BDD of the inputs on which the two 0-1 vectors the property relates differ
(``encodings/gate-threshold-conditions.md`` proves these conditions for every
property); the circuit has the property exactly when that BDD is the constant
false for every ``v`` (and, for partial sorts, :func:`key_violation` for
every key value).

>>> from sortcheck.engines.gates.bdd.manager import BddManager
>>> manager = BddManager(["x[1]", "x[0]"], backend="python")
>>> word = [manager.variable("x[0]"), manager.variable("x[1]")]
>>> at_least_value(manager, word, 2, signed=False) == word[1]
True
>>> at_least_value(manager, word, 0, signed=True) == manager.not_(word[1])
True
"""

from __future__ import annotations

from typing import Any, Sequence

from sortcheck.engines.gates.bdd.manager import BddManager
from sortcheck.model import Median, Merges, PartialSort, Property, Selects, Sorts

Bits = Sequence[Any]


def threshold_values(prop: Property, width: int) -> range:
    """Every threshold of the word domain, smallest first (two's complement for signed properties).

    >>> list(threshold_values(Sorts(signed=True), 2)), list(threshold_values(Sorts(), 2))
    ([-2, -1, 0, 1], [0, 1, 2, 3])
    """
    if prop.signed:
        return range(-(1 << (width - 1)), 1 << (width - 1))
    return range(1 << width)


def key_values(prop: PartialSort) -> range:
    """Every value of a partial sort's key (its ``key_bits`` top bits), smallest first."""
    return threshold_values(prop, prop.key_bits)


def at_least_value(manager: BddManager, bits: Bits, value: int, signed: bool) -> Any:
    """``[word >= value]`` for a word of BDD bits (least significant first) and a constant.

    Unsigned, from the least significant bit up: with ``G`` saying the low
    bits so far are at least those of ``value`` (true for no bits),
    ``G = bit AND G`` where ``value`` has a 1 and ``bit OR G`` where it has
    a 0.  Two's complement: flipping the top bit of both sides turns the
    signed order into the unsigned one.
    """
    width = len(bits)
    raw = value % (1 << width)
    if signed:
        raw ^= 1 << (width - 1)
    result = manager.true
    for i, bit in enumerate(bits):
        if signed and i == width - 1:
            bit = manager.not_(bit)
        result = manager.and_(bit, result) if (raw >> i) & 1 else manager.or_(bit, result)
    return result


def at_most(manager: BddManager, left: Bits, right: Bits, signed: bool) -> Any:
    """``[left <= right]`` for two words of BDD bits (least significant first)."""
    result = manager.true  # equal so far
    width = len(left)
    for i, (a, b) in enumerate(zip(left, right)):
        if signed and i == width - 1:
            a, b = manager.not_(a), manager.not_(b)
        below = manager.and_(manager.not_(a), b)
        same = manager.not_(manager.xor(a, b))
        result = manager.or_(below, manager.and_(same, result))
    return result


def sorted_bits(manager: BddManager, bits: Bits) -> list[Any]:
    """The 0-1 sort of ``bits`` (ascending): entry ``i`` is "at least ``len(bits) - i`` of them are 1".

    ``counts[k]`` = "at least ``k`` of the bits so far are 1" is updated bit by
    bit: ``counts[k] = counts[k] OR (bit AND counts[k-1])``.
    """
    n = len(bits)
    counts = [manager.true] + [manager.false] * n
    for seen, bit in enumerate(bits, start=1):
        for k in range(seen, 0, -1):
            counts[k] = manager.or_(counts[k], manager.and_(bit, counts[k - 1]))
        manager.check_size()
    return [counts[n - i] for i in range(n)]


def precondition(manager: BddManager, prop: Property, inputs: Sequence[Bits]) -> Any:
    """The inputs the property speaks about: merges need both runs ascending; every other property, all."""
    result = manager.true
    if isinstance(prop, Merges):
        runs = [range(0, prop.split - 1), range(prop.split, len(inputs) - 1)]
        for run in runs:
            for j in run:
                result = manager.and_(result, at_most(manager, inputs[j], inputs[j + 1], prop.signed))
    return result


def _differ(manager: BddManager, left: Sequence[Any], right: Sequence[Any]) -> list[Any]:
    return [manager.xor(a, b) for a, b in zip(left, right)]


def threshold_conditions(manager: BddManager, prop: Property, inputs: Sequence[Bits], outputs: Sequence[Bits],
                         value: int) -> list[Any]:
    """One BDD per position: the inputs on which, at threshold ``value``, the property's 0-1 vectors differ there."""
    signed = prop.signed
    low = sorted_bits(manager, [at_least_value(manager, word, value, signed) for word in inputs])
    above = [at_least_value(manager, word, value, signed) for word in outputs]
    if isinstance(prop, Sorts):
        return _differ(manager, above, low[::-1] if prop.order == "descending" else low)
    if isinstance(prop, Merges):
        return _differ(manager, above, low)
    if isinstance(prop, Selects):
        first = above[:prop.count]
        return _differ(manager, first if prop.sorted else sorted_bits(manager, first), low[:prop.count])
    if isinstance(prop, Median):
        return _differ(manager, [above[(len(outputs) - 1) // 2]], [low[(len(inputs) - 1) // 2]])
    if isinstance(prop, PartialSort) and not prop.stable:
        return _differ(manager, sorted_bits(manager, above), low)
    raise ValueError(f"no BDD threshold condition for {prop.describe()}")


def any_of(manager: BddManager, functions: Sequence[Any]) -> Any:
    """The OR of ``functions``."""
    result = manager.false
    for function in functions:
        result = manager.or_(result, function)
    return result


def threshold_violation(manager: BddManager, prop: Property, inputs: Sequence[Bits], outputs: Sequence[Bits],
                        value: int, speaks_about: Any) -> tuple[Any, int]:
    """The inputs the property speaks about that break it at threshold ``value``, and the conditions asked."""
    conditions = threshold_conditions(manager, prop, inputs, outputs, value)
    return manager.and_(speaks_about, any_of(manager, conditions)), len(conditions)


def key_violation(manager: BddManager, prop: PartialSort, outputs: Sequence[Bits], key: int) -> tuple[Any, int]:
    """The inputs on which some adjacent outputs have ``key(y_i) >= key > key(y_{i+1})`` (keys out of order).

    ``key(y)`` is the top ``key_bits`` bits of ``y`` (two's complement for a
    signed property, so the key keeps the sign).
    """
    k = prop.key_bits
    keys = [at_least_value(manager, word[-k:], key, prop.signed) for word in outputs]
    descents = [manager.and_(keys[i], manager.not_(keys[i + 1])) for i in range(len(keys) - 1)]
    return any_of(manager, descents), len(descents)
