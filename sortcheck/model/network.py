"""Comparator networks: an immutable model and its metrics.

A comparator ``(a, b)`` leaves the smaller of the two values on channel ``a``
and the larger on channel ``b``; so ``a > b`` is a reversed comparator, which
sends the larger value towards the lower channel.  Channel 0 is the first
output position.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property
from typing import Iterable, Sequence, TYPE_CHECKING

if TYPE_CHECKING:  # pragma: no cover
    from sortcheck.model.properties import Property

Comparator = tuple[int, int]


@dataclass(frozen=True)
class ComparatorNetwork:
    """A comparator network on ``channels`` channels.

    Parameters
    ----------
    channels : int
        Number of channels (inputs and outputs), at least 1.
    comparators : tuple of (int, int)
        Comparators in order of evaluation.
    name, description : str or None
        Free text carried from and to the netlist file.
    claim : Property or None
        What the netlist claims to do, if the file says so.

    Examples
    --------
    >>> net = ComparatorNetwork(3, ((0, 1), (1, 2), (0, 1)))
    >>> net.size, net.depth
    (3, 3)
    >>> net.apply([3, 1, 2])
    [1, 2, 3]
    """

    channels: int
    comparators: tuple[Comparator, ...]
    name: str | None = None
    description: str | None = None
    claim: "Property | None" = field(default=None, compare=False)

    def __post_init__(self) -> None:
        if self.channels < 1:
            raise ValueError(f"a network needs at least 1 channel, got {self.channels}")
        comparators = tuple((int(a), int(b)) for a, b in self.comparators)
        for a, b in comparators:
            if a == b or not (0 <= a < self.channels and 0 <= b < self.channels):
                raise ValueError(f"comparator {(a, b)} does not fit {self.channels} channels")
        object.__setattr__(self, "comparators", comparators)

    @property
    def size(self) -> int:
        """Number of comparators."""
        return len(self.comparators)

    @cached_property
    def layer_of(self) -> tuple[int, ...]:
        """Layer index of every comparator, in the greedy (earliest) layering.

        Each comparator goes into the earliest layer after the last layers of
        both its channels.
        """
        ready = [0] * self.channels
        layers = []
        for a, b in self.comparators:
            layer = max(ready[a], ready[b])
            layers.append(layer)
            ready[a] = ready[b] = layer + 1
        return tuple(layers)

    @property
    def depth(self) -> int:
        """Number of layers in the greedy layering (0 for an empty network)."""
        return max(self.layer_of, default=-1) + 1

    @cached_property
    def layers(self) -> tuple[tuple[Comparator, ...], ...]:
        """The comparators grouped into greedy layers, each layer in network order."""
        grouped: list[list[Comparator]] = [[] for _ in range(self.depth)]
        for comparator, layer in zip(self.comparators, self.layer_of):
            grouped[layer].append(comparator)
        return tuple(tuple(layer) for layer in grouped)

    def apply(self, values: Sequence) -> list:
        """Run the network on one input and return the outputs by position."""
        if len(values) != self.channels:
            raise ValueError(f"expected {self.channels} values, got {len(values)}")
        wires = list(values)
        for a, b in self.comparators:
            if wires[a] > wires[b]:
                wires[a], wires[b] = wires[b], wires[a]
        return wires

    def stats(self) -> dict:
        """The figures ``sortcheck stats`` reports."""
        reversed_count = sum(1 for a, b in self.comparators if a > b)
        return {
            "channels": self.channels,
            "size": self.size,
            "depth": self.depth,
            "reversed_comparators": reversed_count,
        }

    @classmethod
    def from_layers(cls, channels: int, layers: Iterable[Iterable[Comparator]], **metadata) -> "ComparatorNetwork":
        """Build a network from parallel layers, evaluated layer by layer."""
        comparators = tuple(tuple(pair) for layer in layers for pair in layer)
        return cls(channels, comparators, **metadata)


def in_layer_order(network: ComparatorNetwork) -> ComparatorNetwork:
    """The same network with its comparators listed layer by layer (greedy layers).

    Reordering comparators on disjoint channels never changes what a network
    computes, so the result is equivalent; written to a file, each line of
    ``"layers"`` is then one greedy layer.

    Examples
    --------
    >>> in_layer_order(ComparatorNetwork(5, ((0, 1), (1, 2), (3, 4)))).comparators
    ((0, 1), (3, 4), (1, 2))
    """
    comparators = tuple(pair for layer in network.layers for pair in layer)
    return ComparatorNetwork(network.channels, comparators, network.name, network.description, network.claim)


def restrict_to_outputs(network: ComparatorNetwork, outputs: Iterable[int]) -> ComparatorNetwork:
    """Keep only the comparators that can influence the given output channels.

    The result computes the same values on ``outputs`` as ``network`` for every
    input, so pruning a sorting network to output ``(n-1)//2`` gives a median
    network and pruning it to ``range(t)`` gives a selector of the ``t``
    smallest values, in order.

    Examples
    --------
    >>> net = ComparatorNetwork(3, ((0, 1), (1, 2), (0, 1)))
    >>> restrict_to_outputs(net, [2]).comparators
    ((0, 1), (1, 2))
    """
    needed = set(outputs)
    kept: list[Comparator] = []
    for a, b in reversed(network.comparators):
        if a in needed or b in needed:
            kept.append((a, b))
            needed.update((a, b))
    return ComparatorNetwork(network.channels, tuple(reversed(kept)), network.name, network.description)
