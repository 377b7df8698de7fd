"""Gate circuits seen as the comparator networks they lift to: values on channels, traces, diagnoses.

A circuit that lifts (:func:`sortcheck.engines.gates.lifting.engine.lift`) computes,
block by proved block, what its network computes on the words' order keys
(the words themselves, their two's complement values, or their key bits).
So an input of the circuit can be followed through the network: channel
values after every layer, the comparators that swapped, and, for a failing
input, where the two values that end out of order were sealed (the
diagnosis of the 0-1 input at a threshold where the failure shows, which
exists by the 0-1 principle).

>>> from sortcheck.engines.base import Budget
>>> from sortcheck.model import ComparatorNetwork, Sorts
>>> from sortcheck.model.lowering import lower_network
>>> circuit = lower_network(ComparatorNetwork(3, ((0, 1), (1, 2))), 4, style="mux")
>>> view = lifted_view(circuit, Sorts(), (9, 4, 1), Budget())
>>> view.network.comparators, view.values, view.trace.values[-1]
(((0, 1), (1, 2)), (9, 4, 1), (4, 1, 9))
>>> view.diagnosis.outputs
(0, 1)
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Sequence

from sortcheck.engines.base import Budget
from sortcheck.engines.gates.lifting.engine import lift
from sortcheck.engines.gates.lifting.result import Lifting, network_property
from sortcheck.errors import UsageError
from sortcheck.explain.diagnose import Diagnosis, diagnose_network
from sortcheck.explain.trace import Trace, trace_network
from sortcheck.model import ComparatorNetwork, GateCircuit, Property
from sortcheck.model.semantics import violation


@dataclass(frozen=True)
class LiftedView:
    """A circuit's lifted network, an input's order keys on its channels, the trace and the diagnosis."""

    network: ComparatorNetwork
    prop: Property
    lifting: Lifting
    values: tuple[int, ...] | None = None
    trace: Trace | None = None
    diagnosis: Diagnosis | None = None


def order_keys(lifting: Lifting, words: Sequence[int], width: int) -> tuple[int, ...]:
    """The order keys of circuit input words (signed values as given), placed on their network channels."""
    keys = [value % (1 << width) for value in words]
    if lifting.order.signed:
        keys = [key - (1 << width) if key >> (width - 1) else key for key in keys]
    if lifting.order.key_bits is not None:
        keys = [key >> (width - lifting.order.key_bits) for key in keys]
    channels = lifting.input_channels or range(len(keys))
    placed = [0] * len(keys)
    for word, channel in enumerate(channels):
        placed[channel] = keys[word]
    return tuple(placed)


def failing_threshold_input(network: ComparatorNetwork, prop: Property, values: Sequence[int]
                            ) -> tuple[int, ...] | None:
    """A 0-1 input ``[x >= v]`` that ``network`` gets wrong, for the smallest such threshold ``v``; None if none."""
    for threshold in sorted(set(values))[1:]:
        zero_one = tuple(int(value >= threshold) for value in values)
        if violation(prop, zero_one, network.apply(list(zero_one))) is not None:
            return zero_one
    return None


def lifted_view(circuit: GateCircuit, prop: Property, words: Sequence[int] | None, budget: Budget,
                source: str | None = None) -> LiftedView:
    """Lift ``circuit`` and follow ``words`` (its input, if given) through the network.

    Raises
    ------
    UsageError
        When the circuit does not lift to a comparator network, with the reason.
    """
    lifting = lift(circuit, prop, budget)
    if lifting.network is None:
        raise UsageError(f"the circuit does not lift to a comparator network ({lifting.failure}), so it cannot be "
                         "shown as one", source)
    network_prop = network_property(prop)
    if words is None:
        return LiftedView(lifting.network, network_prop, lifting)
    if len(words) != circuit.words:
        raise UsageError(f"expected {circuit.words} input words, got {len(words)}", source)
    low, high = (-(1 << (circuit.width - 1)), (1 << (circuit.width - 1)) - 1) if prop.signed else \
        (0, (1 << circuit.width) - 1)
    for value in words:
        if not low <= value <= high:
            kind = "two's complement " if prop.signed else ""
            raise UsageError(f"{value} is not a {kind}word of {circuit.width} bits ({low} to {high})", source)
    values = order_keys(lifting, words, circuit.width)
    zero_one = failing_threshold_input(lifting.network, network_prop, values)
    diagnosis = None if zero_one is None else diagnose_network(lifting.network, network_prop, zero_one)
    return LiftedView(lifting.network, network_prop, lifting, values, trace_network(lifting.network, values),
                      diagnosis)
