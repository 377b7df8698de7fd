"""The meaning of each property on one concrete input and output.

These functions are the reference the engines answer to: an engine's
counterexample must make :func:`violation` return a reason, and the tests
compare engines with them on random inputs.  They work on plain integers
(already interpreted as signed or unsigned), with Python's ``sorted`` as the
reference order.
"""

from __future__ import annotations

from collections import Counter
from typing import Sequence

from sortcheck.model.properties import Median, Merges, PartialSort, Property, Selects, Sorts


def applies(prop: Property, values: Sequence[int]) -> bool:
    """Whether the input is one the property speaks about (merges: both runs ascending).

    >>> applies(Merges(split=2), [1, 3, 0, 2]), applies(Merges(split=2), [3, 1, 0, 2])
    (True, False)
    """
    if isinstance(prop, Merges):
        first, second = values[:prop.split], values[prop.split:]
        return list(first) == sorted(first) and list(second) == sorted(second)
    return True


def _first_disorder(values: Sequence[int], descending: bool = False) -> int | None:
    for i in range(len(values) - 1):
        if (values[i] < values[i + 1]) if descending else (values[i] > values[i + 1]):
            return i
    return None


def violation(prop: Property, inputs: Sequence[int], outputs: Sequence[int], key_bits_width: int | None = None
              ) -> str | None:
    """Why ``outputs`` break ``prop`` for ``inputs``, or None when they meet it.

    Inputs the property does not speak about (a merge input whose runs are not
    ascending) never break it.  ``key_bits_width`` is the word width, needed
    only for partial-sort.

    Examples
    --------
    >>> violation(Sorts(), [2, 1, 3], [1, 3, 2])
    'outputs 1 and 2 are out of order (3 then 2)'
    >>> violation(Sorts(), [2, 1, 3], [1, 2, 3]) is None
    True
    >>> violation(Median(), [5, 1, 3], [1, 5, 3])
    'output 1 is 5 but the median is 3'
    """
    if not applies(prop, inputs):
        return None
    if isinstance(prop, (Sorts, Merges)):
        descending = isinstance(prop, Sorts) and prop.order == "descending"
        if Counter(outputs) != Counter(inputs):
            return "the outputs are not a permutation of the inputs"
        i = _first_disorder(outputs, descending)
        if i is not None:
            return f"outputs {i} and {i + 1} are out of order ({outputs[i]} then {outputs[i + 1]})"
        return None
    if isinstance(prop, Selects):
        smallest = sorted(inputs)[:prop.count]
        first = list(outputs[:prop.count])
        if Counter(first) != Counter(smallest):
            return f"the first {prop.count} outputs {first} are not the {prop.count} smallest inputs {smallest}"
        i = _first_disorder(first) if prop.sorted else None
        if i is not None:
            return f"outputs {i} and {i + 1} are out of order ({first[i]} then {first[i + 1]})"
        return None
    if isinstance(prop, Median):
        median = sorted(inputs)[(len(inputs) - 1) // 2]
        position = (len(outputs) - 1) // 2
        if outputs[position] != median:
            return f"output {position} is {outputs[position]} but the median is {median}"
        return None
    if isinstance(prop, PartialSort):
        return _partial_sort_violation(prop, inputs, outputs, key_bits_width)
    raise TypeError(f"unknown property {prop!r}")


def _partial_sort_violation(prop: PartialSort, inputs: Sequence[int], outputs: Sequence[int],
                            width: int | None) -> str | None:
    if width is None:
        raise ValueError("partial-sort needs the word width")
    shift = width - prop.key_bits

    def key(value: int) -> int:
        return value >> shift  # Python's shift floors, so signed values keep their order

    if Counter(outputs) != Counter(inputs):
        return "the outputs are not a permutation of the inputs"
    keys = [key(value) for value in outputs]
    i = _first_disorder(keys)
    if i is not None:
        return f"outputs {i} and {i + 1} have keys out of order ({keys[i]} then {keys[i + 1]})"
    if prop.stable:
        expected = sorted(inputs, key=key)  # Python's sort is stable
        if list(outputs) != expected:
            return f"words with equal keys do not keep their input order: expected {expected}"
    return None
