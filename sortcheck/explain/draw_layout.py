"""Layout and values of network diagrams: where channels and comparators go, and what runs through them.

Helpers of :mod:`sortcheck.explain.draw` that compute and do not draw:
:func:`sub_columns` and :func:`layer_members` set the comparators of a layer
side by side, :func:`layout` places every part of a drawing in a
:class:`Geometry`; :func:`run_by_layers`, :func:`wrong_outputs` and
:func:`value_paths` run an input through the network layer by layer and say
which outputs are wrong and which channels a value moved through.

>>> network = ComparatorNetwork(3, ((0, 1), (1, 2), (0, 1)))
>>> states, swapped = run_by_layers(network, [3, 1, 2])
>>> states[-1], sorted(swapped), wrong_outputs(Sorts(), [3, 1, 2], states[-1])
((1, 2, 3), [0, 1], set())
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass
from typing import Sequence

from sortcheck.explain.trace import layer_members, trace_network
from sortcheck.model import ComparatorNetwork, Median, Merges, Property, Selects, Sorts
from sortcheck.model.semantics import applies

MIN_LABEL_SPACING = 18.0
"""Smallest channel spacing (px) at which a value is written on every wire between layers."""

CHAR_WIDTH = 0.62
"""Width of a monospace digit as a fraction of the font size (an estimate for layout)."""


def sub_columns(spans: Sequence[tuple[int, int]]) -> list[int]:
    """Sub-column of each channel span, so that spans sharing a sub-column are disjoint.

    Spans are taken by their upper end and each goes into the first sub-column
    it fits, which uses as few sub-columns as the most spans over one channel.

    >>> sub_columns([(0, 7), (1, 6), (2, 3), (4, 5)])
    [0, 1, 2, 2]
    >>> sub_columns([(4, 5), (0, 1), (2, 3)])
    [0, 0, 0]
    """
    ends: list[int] = []  # the lowest channel used so far in each sub-column
    result = [0] * len(spans)
    for index in sorted(range(len(spans)), key=lambda i: spans[i]):
        low, high = spans[index]
        column = next((c for c, end in enumerate(ends) if end < low), len(ends))
        if column == len(ends):
            ends.append(high)
        ends[column] = high
        result[index] = column
    return result


def run_by_layers(network: ComparatorNetwork, values: Sequence) -> tuple[list[tuple], set[int]]:
    """The values on the channels before the first layer and after every layer, and who swapped.

    Comparators of one layer touch different channels, so running the layers
    in turn computes what the network computes (:func:`trace_network`).

    >>> run_by_layers(ComparatorNetwork(3, ((0, 1), (1, 2))), [2, 1, 0])
    ([(2, 1, 0), (1, 2, 0), (1, 0, 2)], {0, 1})
    """
    trace = trace_network(network, values)
    return list(trace.values), {index for layer in trace.swaps for index in layer}


def wrong_outputs(prop: Property, inputs: Sequence, outputs: Sequence) -> set[int]:
    """Output positions holding a value that a network with the property would not put there.

    >>> sorted(wrong_outputs(Sorts(), [1, 0, 1, 0], [0, 1, 0, 1]))
    [1, 2]
    >>> sorted(wrong_outputs(Selects(count=2), [3, 1, 2], [1, 3, 2]))
    [1]
    """
    ordered = sorted(inputs)
    if isinstance(prop, Sorts) and prop.order == "descending":
        ordered.reverse()
    if isinstance(prop, Merges) and not applies(prop, inputs):
        return set()
    if isinstance(prop, (Sorts, Merges)):
        return {i for i, (got, want) in enumerate(zip(outputs, ordered)) if got != want}
    if isinstance(prop, Median):
        middle = (len(outputs) - 1) // 2
        return {middle} if outputs[middle] != ordered[middle] else set()
    if isinstance(prop, Selects):
        if prop.sorted:
            return {i for i in range(prop.count) if outputs[i] != ordered[i]}
        wanted, wrong = Counter(ordered[:prop.count]), set()
        for i in range(prop.count):
            if wanted[outputs[i]] > 0:
                wanted[outputs[i]] -= 1
            else:
                wrong.add(i)
        return wrong
    return set()


def value_paths(network: ComparatorNetwork, values: Sequence, starts: Sequence[int]) -> list[list[tuple[int, int]]]:
    """The channels the values entering at ``starts`` move through: ``(comparator, new channel)`` steps.

    Values are followed as their ranks, equal values by input position (as
    :func:`~sortcheck.explain.diagnose.diagnose_network` follows them), so
    every value has one path even when values repeat.  A path starts with
    ``(-1, start)``.

    >>> value_paths(ComparatorNetwork(3, ((0, 1), (1, 2))), [1, 1, 0], [0, 2])
    [[(-1, 0)], [(-1, 2), (1, 1)]]
    """
    ranked = sorted(range(len(values)), key=lambda position: (values[position], position))
    tokens = [0] * len(values)
    for rank, position in enumerate(ranked):
        tokens[position] = rank
    initial = list(tokens)
    followed = {initial[start]: [(-1, start)] for start in starts}
    for members in layer_members(network):
        for index in members:
            a, b = network.comparators[index]
            if tokens[a] > tokens[b]:
                tokens[a], tokens[b] = tokens[b], tokens[a]
                for channel in (a, b):
                    if tokens[channel] in followed:
                        followed[tokens[channel]].append((index, channel))
    return [followed[initial[start]] for start in starts]


@dataclass(frozen=True)
class Geometry:
    """Where the parts of a drawing go (lengths in px, y grows downwards)."""

    spacing: float
    radius: float
    stroke: float
    step: float
    gap: float
    font: float
    channel_y: tuple[float, ...]
    comparator_x: tuple[float, ...]
    layer_extent: tuple[tuple[float, float], ...]
    label_x: float
    input_x: float
    wire_start: float
    wire_end: float
    output_x: float
    right_label_x: float
    width: float
    bottom: float
    wire_values: bool


def layout(network: ComparatorNetwork, texts: Sequence[str] | None, top: float) -> Geometry:
    """Place channels, comparators and value columns; ``texts`` are the value labels, if any.

    The channel spacing shrinks from 28 px (up to 32 channels) to 8 px (112
    channels and more); values are written on the wires between layers only
    when the spacing leaves room for them (:data:`MIN_LABEL_SPACING`).

    >>> g = layout(ComparatorNetwork(4, ((0, 2), (1, 3), (0, 1))), None, 0.0)
    >>> g.channel_y, g.comparator_x[0] < g.comparator_x[1] < g.comparator_x[2]
    ((14.0, 42.0, 70.0, 98.0), True)
    """
    n = network.channels
    spacing = max(8.0, min(28.0, 896.0 / n))
    font = max(7.0, min(12.0, 0.7 * spacing))
    radius = max(2.0, min(4.2, 0.16 * spacing))
    step = max(7.0, 2.6 * radius + 3.0)
    text_width = max((len(text) for text in texts), default=1) * CHAR_WIDTH * font if texts is not None else 0.0
    wire_values = texts is not None and spacing >= MIN_LABEL_SPACING and network.depth > 1
    gap = max(3.6 * step, text_width + 2.0 * radius + 20.0) if wire_values else 2.5 * step
    index_width = len(str(n - 1)) * CHAR_WIDTH * font
    label_x = 12.0 + index_width
    input_x = label_x + 16.0 + text_width / 2
    wire_start = input_x + text_width / 2 + 8.0 if texts is not None else label_x + 6.0
    cursor = wire_start + max(2.0 * step, gap / 2)
    xs = [0.0] * network.size
    extents = []
    for members in layer_members(network):
        columns = sub_columns([tuple(sorted(network.comparators[i])) for i in members])
        for index, column in zip(members, columns):
            xs[index] = cursor + column * step
        extents.append((cursor, cursor + max(columns) * step))
        cursor = extents[-1][1] + gap
    wire_end = (extents[-1][1] if extents else wire_start + step) + max(2.0 * step, gap / 2)
    output_x = wire_end + 8.0 + text_width / 2
    right_label_x = output_x + text_width / 2 + 16.0 if texts is not None else wire_end + 6.0
    channel_y = tuple(top + spacing * (k + 0.5) for k in range(n))
    return Geometry(spacing, radius, max(1.0, min(1.6, 0.06 * spacing)), step, gap, font, channel_y, tuple(xs),
                    tuple(extents), label_x, input_x, wire_start, wire_end, output_x, right_label_x,
                    right_label_x + index_width + 12.0, top + spacing * n, wire_values)
