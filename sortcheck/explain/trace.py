"""The values on every channel after every layer, for one input of a comparator network."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Sequence

from sortcheck.model import ComparatorNetwork

#: Largest trace (channels x layers) carried in reports.
MAX_TRACE_CELLS = 1_000_000


@dataclass(frozen=True)
class Trace:
    """``values[0]`` is the input, ``values[k]`` the channels after layer ``k - 1``.

    ``swaps[k]`` lists the comparators of layer ``k`` (by index in the
    network) that exchanged their values.
    """

    values: tuple[tuple[int, ...], ...]
    swaps: tuple[tuple[int, ...], ...]

    def to_json(self) -> dict[str, Any]:
        return {"values": [list(row) for row in self.values], "swaps": [list(row) for row in self.swaps]}


def layer_members(network: ComparatorNetwork) -> list[list[int]]:
    """Indices of the comparators of each greedy layer, in network order.

    >>> layer_members(ComparatorNetwork(4, ((0, 1), (2, 3), (1, 2), (0, 1))))
    [[0, 1], [2], [3]]
    """
    members: list[list[int]] = [[] for _ in range(network.depth)]
    for index, layer in enumerate(network.layer_of):
        members[layer].append(index)
    return members


def trace_network(network: ComparatorNetwork, inputs: Sequence[int]) -> Trace:
    """Follow ``inputs`` through the greedy layers of ``network``.

    >>> trace = trace_network(ComparatorNetwork(3, ((0, 1), (1, 2), (0, 1))), [2, 1, 0])
    >>> trace.values
    ((2, 1, 0), (1, 2, 0), (1, 0, 2), (0, 1, 2))
    >>> trace.swaps
    ((0,), (1,), (2,))
    """
    wires = list(inputs)
    values, swaps = [tuple(wires)], []
    for members in layer_members(network):
        swapped = []
        for index in members:
            a, b = network.comparators[index]
            if wires[a] > wires[b]:
                wires[a], wires[b] = wires[b], wires[a]
                swapped.append(index)
        values.append(tuple(wires))
        swaps.append(tuple(swapped))
    return Trace(tuple(values), tuple(swaps))


def fits_in_report(network: ComparatorNetwork) -> bool:
    """Whether a trace of this network is small enough to carry in a report."""
    return network.channels * (network.depth + 1) <= MAX_TRACE_CELLS
