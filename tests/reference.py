"""Independent reference semantics for tests: comparators applied value by value, properties judged with ``sorted``.

Nothing here imports sortcheck's engines or its semantics module.
"""

from __future__ import annotations

from sortcheck.model import Median, Merges, Selects, Sorts


def run(comparators, values):
    wires = list(values)
    for a, b in comparators:
        low, high = min(wires[a], wires[b]), max(wires[a], wires[b])
        wires[a], wires[b] = low, high
    return wires


def breaks(prop, inputs, outputs):
    """The property's definition, written directly with ``sorted``."""
    n = len(inputs)
    if isinstance(prop, Sorts):
        return outputs != sorted(inputs, reverse=prop.order == "descending")
    if isinstance(prop, Merges):
        m = prop.split
        if list(inputs[:m]) != sorted(inputs[:m]) or list(inputs[m:]) != sorted(inputs[m:]):
            return False
        return outputs != sorted(inputs)
    if isinstance(prop, Selects):
        first = outputs[:prop.count]
        if sorted(first) != sorted(inputs)[:prop.count]:
            return True
        return prop.sorted and first != sorted(first)
    if isinstance(prop, Median):
        return outputs[(n - 1) // 2] != sorted(inputs)[(n - 1) // 2]
    raise AssertionError(prop)
