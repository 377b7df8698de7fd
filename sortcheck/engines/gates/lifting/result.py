"""What lifting finds: the comparator network a gate circuit is, and how circuit words map to network values.

A :class:`Lifting` is the outcome of either way of lifting
(:mod:`~sortcheck.engines.gates.lifting.functional`, by what the signals
compute and SAT sweeping; :mod:`~sortcheck.engines.gates.lifting.structural`,
block by proved block); :func:`circuit_input` turns a network input back into
the circuit's input words.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from typing import Any

from sortcheck.engines.gates.lifting.blocks import BlockOrder
from sortcheck.engines.gates.lifting.search import BlockProof
from sortcheck.model import ComparatorNetwork, PartialSort, Property, Sorts


@dataclass(frozen=True)
class Lifting:
    """What lifting found: the network (None when the circuit does not lift) and how.

    ``input_channels[i]`` is the network channel circuit input word ``i``
    enters (None: channel ``i``; a permutation only after relabelling).
    ``failure`` says where lifting stopped; ``rejected`` lists candidates whose
    proof failed, with two word values on which they are not min/max.
    """

    network: ComparatorNetwork | None
    order: BlockOrder
    blocks: tuple[BlockProof, ...]
    failure: str | None = None
    rejected: tuple[tuple[tuple[int, int], tuple[int, int] | None], ...] = ()
    input_channels: tuple[int, ...] | None = None
    timed_out: bool = False
    figures: dict[str, Any] = field(default_factory=dict)
    #: ``blocks``: every block proved min/max on its cone; ``sweeping``: the whole circuit proved equal to
    #: the network signal by signal (:mod:`sortcheck.engines.gates.lifting.functional`).
    method: str = "blocks"

    @property
    def lifted(self) -> bool:
        return self.network is not None


def order_of(prop: Property, width: int) -> BlockOrder:
    """The order the comparators of a lifted circuit must compare in, for ``prop``."""
    key_bits = prop.key_bits if isinstance(prop, PartialSort) and prop.key_bits < width else None
    return BlockOrder(signed=prop.signed, key_bits=key_bits)


def network_property(prop: Property) -> Property:
    """The question for the lifted network: the same property on any total order (key-only: ``sorts``)."""
    if isinstance(prop, PartialSort):
        return Sorts()
    return dataclasses.replace(prop, signed=False)


def _word_of(rank: int, width: int, order: BlockOrder) -> int:
    """The raw word with order rank ``rank`` among the smallest values (on the key bits, low bits zero)."""
    bits = order.key_bits or width
    flip = 1 << (bits - 1) if order.signed else 0
    return (rank ^ flip) << (width - bits)


def circuit_input(lifting: Lifting, values: tuple[int, ...], width: int) -> tuple[int, ...] | None:
    """The circuit's input words for a network input (values of order ranks), or None when they do not fit."""
    if max(values, default=0) >= 1 << (lifting.order.key_bits or width):
        return None
    channels = lifting.input_channels or range(len(values))
    return tuple(_word_of(values[channel], width, lifting.order) for channel in channels)
