"""Where a comparator network goes wrong on a 0-1 counterexample.

A failing 0-1 output has a *witness pair*: a 1 on an output before a 0 that
the property needs to come before it.  Following the two values back through
the network (as tokens: a comparator swaps tokens only when it swaps values)
gives the last comparator that compared them.  After it, no comparator puts
the two values side by side again, so nothing later can fix their order;
that comparator's neighbourhood is where to look.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Sequence

from sortcheck.model import ComparatorNetwork, Median, Merges, Property, Selects, Sorts


@dataclass(frozen=True)
class Diagnosis:
    """The witness pair of a 0-1 counterexample and where its order was sealed.

    ``outputs`` are the two output positions (the first should hold the
    smaller value); ``inputs`` the input positions the two values came from;
    ``last_meeting`` the last comparator that compared the two values (None
    if none did); ``sealed_at`` the last comparator that moved either of them:
    after it neither value moves again, so this is the first place where the
    two can no longer end in order (None if neither ever moved).
    """

    outputs: tuple[int, int]
    inputs: tuple[int, int]
    last_meeting: int | None
    sealed_at: int | None
    met_comparator: tuple[int, int] | None = None
    sealed_comparator: tuple[int, int] | None = None
    sealed_layer: int | None = None

    def describe(self) -> str:
        """One sentence for people."""
        first, second = self.outputs
        text = (f"the values ending on outputs {first} and {second} (from inputs {self.inputs[0]} and "
                f"{self.inputs[1]}) are out of order")
        if self.last_meeting is None:
            text += "; no comparator ever compares them"
        else:
            text += f"; they last met at comparator {self.last_meeting} {list(self.met_comparator)}"
        if self.sealed_at is not None:
            text += (f"; neither moves after comparator {self.sealed_at} {list(self.sealed_comparator)} "
                     f"(layer {self.sealed_layer})")
        return text

    def to_json(self) -> dict[str, Any]:
        return {"outputs": list(self.outputs), "inputs": list(self.inputs), "last_meeting": self.last_meeting,
                "sealed_at": self.sealed_at, "sealed_layer": self.sealed_layer}


def permutation_of(zero_one: Sequence[int]) -> list[int]:
    """Distinct values with the order pattern of a 0-1 input: zeros get 0.., ones the rest, by position.

    Thresholding the result between the zeros and the ones gives ``zero_one``
    back, so by the 0-1 principle a network fails on it too.

    >>> permutation_of([1, 0, 1, 0])
    [2, 0, 3, 1]
    """
    zeros = zero_one.count(0) if isinstance(zero_one, list) else list(zero_one).count(0)
    ranks, next_zero, next_one = [], 0, zeros
    for bit in zero_one:
        if bit:
            ranks.append(next_one)
            next_one += 1
        else:
            ranks.append(next_zero)
            next_zero += 1
    return ranks


def witness_pair(prop: Property, outputs: Sequence[int]) -> tuple[int, int] | None:
    """Output positions (p, q): the value at p must not be larger than the value at q, but is.

    >>> witness_pair(Sorts(), [0, 1, 0, 1])
    (1, 2)
    >>> witness_pair(Median(), [0, 1, 1, 0, 0])
    (2, 3)
    """
    n = len(outputs)
    descending = isinstance(prop, Sorts) and prop.order == "descending"
    if isinstance(prop, (Sorts, Merges)):
        for i in range(n - 1):
            if (outputs[i] < outputs[i + 1]) if descending else (outputs[i] > outputs[i + 1]):
                return (i + 1, i) if descending else (i, i + 1)
        return None
    if isinstance(prop, Selects):
        for i in range(prop.count - 1 if prop.sorted else 0):
            if outputs[i] > outputs[i + 1]:
                return i, i + 1
        high = [p for p in range(prop.count) if outputs[p] == 1]
        low = [q for q in range(prop.count, n) if outputs[q] == 0]
        return (high[0], low[-1]) if high and low else None
    if isinstance(prop, Median):
        middle = (n - 1) // 2
        if outputs[middle] == 1:
            later = [q for q in range(middle + 1, n) if outputs[q] == 0]
            return (middle, later[0]) if later and sum(outputs) <= middle else None
        earlier = [p for p in range(middle) if outputs[p] == 1]
        return (earlier[-1], middle) if earlier and sum(outputs) > middle else None
    return None


def diagnose_network(network: ComparatorNetwork, prop: Property, inputs: Sequence[int]) -> Diagnosis | None:
    """Diagnose a 0-1 counterexample; None when the outputs show no witness pair.

    The values are followed as the distinct values of :func:`permutation_of`,
    so ties never hide which value went where.

    >>> net = ComparatorNetwork(3, ((0, 1), (1, 2)))
    >>> diagnosis = diagnose_network(net, Sorts(), [1, 1, 0])
    >>> diagnosis.outputs, diagnosis.inputs, diagnosis.last_meeting, diagnosis.sealed_at
    ((0, 1), (0, 2), None, 1)
    """
    values = permutation_of(list(inputs))
    origin = {value: position for position, value in enumerate(values)}
    met: dict[frozenset[int], int] = {}
    moved: dict[int, int] = {}
    for index, (a, b) in enumerate(network.comparators):
        met[frozenset((values[a], values[b]))] = index
        if values[a] > values[b]:
            values[a], values[b] = values[b], values[a]
            moved[values[a]] = moved[values[b]] = index
    threshold = list(inputs).count(0)
    pair = witness_pair(prop, [int(value >= threshold) for value in values])
    if pair is None:
        return None
    first, second = values[pair[0]], values[pair[1]]
    moves = [moved[v] for v in (first, second) if v in moved]
    last_meeting = met.get(frozenset((first, second)))
    sealed = max(moves) if moves else None
    pairs = network.comparators
    return Diagnosis(pair, (origin[first], origin[second]), last_meeting, sealed,
                     None if last_meeting is None else pairs[last_meeting],
                     None if sealed is None else pairs[sealed], None if sealed is None else network.layer_of[sealed])
