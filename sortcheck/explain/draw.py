"""Diagrams of comparator networks as SVG documents.

:func:`draw_network` draws the channels as horizontal lines (channel 0 at the
top) and every comparator as a vertical line with a dot on each of its two
channels, layer by layer in the greedy layering.  Comparators of one layer
whose spans overlap are set side by side in sub-columns, so no comparator
line passes over another one's dots.  A reversed comparator (``a > b``: the
larger value leaves on the upper channel) has a hollow end where the larger
value leaves.

Given an input, the diagram also shows the value on every channel between
layers, the comparators that swapped, and the inputs and outputs at the two
ends, with wrong outputs in red.  Given a :class:`Diagnosis` of that input,
it marks the two out-of-order outputs, the paths their values took and the
comparator after which neither moves again, and says in a caption line what
went wrong.

The document is built with :mod:`xml.etree.ElementTree`, so every text is
escaped; styling is by presentation attributes, and every element a reader
(or a test) looks for has a class: ``channel``, ``comparator`` (with
``reversed``, ``swapped``, ``fault``), ``value`` (with ``input``, ``wire``,
``output``, ``wrong``, ``fault``), ``trace``, ``caption``, ``legend``.
Placing the parts and running the input through the layers is done in
:mod:`sortcheck.explain.draw_layout`.

Examples
--------
>>> import xml.etree.ElementTree as ET
>>> svg = draw_network(ComparatorNetwork(3, ((0, 1), (1, 2), (0, 1))), values=[3, 1, 2])
>>> root = ET.fromstring(svg)
>>> groups = root.iter("{http://www.w3.org/2000/svg}g")
>>> [g.get("class") for g in groups if "comparator" in g.get("class", "").split()]
['comparator swapped', 'comparator swapped', 'comparator']
"""

from __future__ import annotations

import re
import textwrap
import xml.etree.ElementTree as ET
from typing import Sequence

from sortcheck.errors import UsageError
from sortcheck.explain.diagnose import Diagnosis
from sortcheck.explain.draw_layout import Geometry, layout, run_by_layers, value_paths, wrong_outputs
from sortcheck.explain.draw_layout import sub_columns  # noqa: F401  (re-exported: sortcheck.explain.draw.sub_columns)
from sortcheck.model import ComparatorNetwork, Property, Sorts, check_fits

SVG_NAMESPACE = "http://www.w3.org/2000/svg"

INK = "#1f2937"        # comparators and text
WIRE = "#9aa3ae"       # channel lines
MUTED = "#5f6b7a"      # labels and unchanged values
BAND = "#f1f3f6"       # every other layer
SWAP = "#1f5fbf"       # comparators that swapped
FAULT = "#b42318"      # the fault: sealing comparator, out-of-order outputs, wrong outputs
FAULT_TINT = "#fbe0dd"
TRACE = "#e8847b"
SANS = "Helvetica, Arial, 'DejaVu Sans', sans-serif"
MONO = "'DejaVu Sans Mono', Menlo, Consolas, monospace"

SANS_WIDTH = 0.56
"""Average width of a character of running text, as a fraction of the font size (an estimate)."""

CAPTION_SIZE = 12.0
LEGEND_SIZE = 11.5

_NOT_XML = re.compile("[^\u0009\u000a\u000d\u0020-\ud7ff\ue000-\ufffd\U00010000-\U0010ffff]")


def parse_input_values(text: str, channels: int, positions: str = "the network has {} channels"
                       ) -> tuple[int, ...]:
    """An input from the command line: comma-separated integers, or a string of 0s and 1s.

    Spaces and underscores in a 0-1 string are ignored (``1010 0110``).  ``positions`` words the error
    for a wrong count (``{}`` stands for ``channels``).

    >>> parse_input_values("3,1,2", 3)
    (3, 1, 2)
    >>> parse_input_values("1010_0110", 8)
    (1, 0, 1, 0, 0, 1, 1, 0)
    """
    stripped = text.strip()
    if "," in stripped or re.fullmatch(r"-?\d+", stripped) and channels == 1:
        try:
            values = tuple(int(part) for part in stripped.split(","))
        except ValueError:
            raise UsageError(f"--input: expected comma-separated integers or a 0-1 string, got {text!r}") from None
    elif re.fullmatch(r"[01 _]+", stripped):
        values = tuple(int(bit) for bit in stripped if bit in "01")
    else:
        raise UsageError(f"--input: expected comma-separated integers or a 0-1 string, got {text!r}")
    if len(values) != channels:
        raise UsageError(f"--input: {positions.format(channels)}, got {len(values)} values")
    return values


def _number(x: float) -> str:
    return f"{x:.2f}".rstrip("0").rstrip(".")


def _clean(text: str) -> str:
    """Text with the characters XML 1.0 cannot carry replaced by U+FFFD."""
    return _NOT_XML.sub("\ufffd", str(text))


def _show(value) -> str:
    return _clean(str(int(value)) if isinstance(value, bool) else str(value))


def _add(parent: ET.Element, tag: str, text: str | None = None, **attributes) -> ET.Element:
    """Append a child; attribute names use ``_`` for ``-`` and ``cls`` for ``class``; numbers are rounded."""
    names = {"cls": "class"}
    element = ET.SubElement(parent, tag, {names.get(key, key.replace("_", "-")):
                                          _number(value) if isinstance(value, float) else str(value)
                                          for key, value in attributes.items() if value is not None})
    if text is not None:
        element.text = _clean(text)
    return element


def draw_network(network: ComparatorNetwork, values: Sequence | None = None, diagnosis: Diagnosis | None = None,
                 title: str | None = None, *, prop: Property | None = None, notes: Sequence[str] = ()) -> str:
    """An SVG document of the network, optionally run on one input and with a diagnosis of it.

    Parameters
    ----------
    network : ComparatorNetwork
    values : sequence or None
        One input, a value per channel (0s and 1s, integers, anything that
        compares): the diagram then shows the value on every wire, the
        comparators that swapped, and the inputs and outputs, with the wrong
        outputs in red.
    diagnosis : Diagnosis or None
        A diagnosis of ``values`` (:func:`~sortcheck.explain.diagnose.diagnose_network`):
        the two out-of-order outputs, their paths and the comparator where
        their order was sealed are marked, and a caption says what went wrong.
    title : str or None
        The heading and the document's ``<title>``; by default the network's name.
    notes : sequence of str
        Sentences added to the caption (what the drawing stands for, say).
    prop : Property or None
        The property the wrong outputs are judged by; by default the one the
        network claims, else sorting ascending.

    Returns
    -------
    str
        A standalone SVG 1.1 document with a ``viewBox``.

    Raises
    ------
    ValueError
        When ``values`` has the wrong length, or ``diagnosis`` does not fit
        the network or (with ``values``) is not a diagnosis of that input.

    Examples
    --------
    >>> svg = draw_network(ComparatorNetwork(2, ((1, 0),)), title="a < b")
    >>> "<title>a &lt; b</title>" in svg, 'class="comparator reversed"' in svg
    (True, True)
    """
    n = network.channels
    prop = prop or network.claim or Sorts()
    if values is not None and len(values) != n:
        raise ValueError(f"expected {n} values, got {len(values)}")
    states, swapped = run_by_layers(network, values) if values is not None else (None, set())
    if diagnosis is not None:
        _check_diagnosis(network, diagnosis)
    check_fits(prop, network, None)
    heading = _clean(title if title is not None else network.name or f"comparator network on {n} channels")
    texts = [_show(value) for state in states for value in state] if states else None
    geometry = layout(network, texts, top=58.0)
    root = ET.Element("svg", {"xmlns": SVG_NAMESPACE, "version": "1.1", "font-family": SANS})
    _add(root, "title", heading)
    _add(root, "rect", cls="background", x=0, y=0, width="100%", height="100%", fill="#ffffff")
    _add(root, "text", heading, cls="heading", x=12.0, y=24.0, font_size=15, font_weight="bold", fill=INK)
    _draw_layers(root, network, geometry)
    fault_index = diagnosis.sealed_at if diagnosis is not None else None
    if fault_index is not None:
        _draw_fault_mark(root, network, geometry, fault_index, "fault-mark")
    met_index = diagnosis.last_meeting if diagnosis is not None else None
    if met_index is not None and met_index != fault_index:
        _draw_fault_mark(root, network, geometry, met_index, "met-mark")
    crossings = _draw_paths(root, geometry, network, values, swapped, diagnosis) if diagnosis and states else set()
    _draw_channels(root, network, geometry, diagnosis if values is None else None)
    _draw_comparators(root, network, geometry, swapped, fault_index)
    wrong: set[int] = set()
    if states is not None:
        wrong = wrong_outputs(prop, states[0], states[-1])
        _draw_values(root, geometry, states, wrong, set(diagnosis.outputs) if diagnosis else set())
    lines = [*notes, *_caption_lines(network, geometry, states, swapped, wrong, diagnosis, prop)]
    if crossings:
        lines.append(f"Equal values are followed in input order, so a path may change channel where a comparator "
                     f"meets two equal values without swapping them "
                     f"({'comparator' if len(crossings) == 1 else 'comparators'} {_listing(crossings)}).")
    return _finish(root, geometry, lines, _legend_entries(network, states is not None, diagnosis))


def _finish(root: ET.Element, geometry: Geometry, lines: list[str], entries: list[tuple[str, str]]) -> str:
    """Add the caption and the legend, size the document, and serialise it."""
    legend_width = max(44.0 + LEGEND_SIZE * SANS_WIDTH * len(text) + 12.0 for _, text in entries)
    width = max(geometry.width, 480.0, legend_width)
    bottom = _draw_caption(root, geometry.bottom, width, lines)
    bottom = _draw_legend(root, bottom, entries)
    width_text, height_text = _number(width), _number(bottom + 14.0)
    root.set("width", width_text)
    root.set("height", height_text)
    root.set("viewBox", f"0 0 {width_text} {height_text}")
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + ET.tostring(root, encoding="unicode") + "\n"


def _check_diagnosis(network: ComparatorNetwork, diagnosis: Diagnosis) -> None:
    positions = (*diagnosis.outputs, *diagnosis.inputs)
    if not all(0 <= position < network.channels for position in positions):
        raise ValueError(f"the diagnosis names channels outside the network's {network.channels}")
    for index in (diagnosis.sealed_at, diagnosis.last_meeting):
        if index is not None and not 0 <= index < network.size:
            raise ValueError(f"the diagnosis names comparator {index}; the network has {network.size}")


def _draw_layers(root: ET.Element, network: ComparatorNetwork, g: Geometry) -> None:
    """A light band behind every other layer, and the layer numbers above."""
    group = _add(root, "g", cls="layers")
    top, bottom = g.channel_y[0] - g.spacing / 2, g.channel_y[-1] + g.spacing / 2
    pad = 0.7 * g.step
    for layer, (first, last) in enumerate(g.layer_extent):
        if layer % 2:
            _add(group, "rect", cls="layer", x=first - pad, y=top, width=last - first + 2 * pad,
                 height=bottom - top, fill=BAND)
        _add(group, "text", str(layer), cls="layer-label", x=(first + last) / 2, y=top - 6.0, font_size=10,
             fill=MUTED, text_anchor="middle")


def _draw_fault_mark(root: ET.Element, network: ComparatorNetwork, g: Geometry, index: int, kind: str) -> None:
    """A tinted box behind the sealing comparator (``fault-mark``) or a dashed one around the last meeting."""
    low, high = sorted(network.comparators[index])
    x, half = g.comparator_x[index], 0.5 * g.step
    look = ({"fill": FAULT_TINT} if kind == "fault-mark" else
            {"fill": "none", "stroke": FAULT, "stroke_width": 1.0, "stroke_dasharray": "3 2"})
    _add(root, "rect", cls=kind, data_index=index, x=x - half, y=g.channel_y[low] - 0.45 * g.spacing,
         width=2 * half, height=g.channel_y[high] - g.channel_y[low] + 0.9 * g.spacing, rx=3, **look)


def _draw_paths(root: ET.Element, g: Geometry, network: ComparatorNetwork, values: Sequence, swapped: set[int],
                diagnosis: Diagnosis) -> set[int]:
    """The two out-of-order values, followed from their inputs to their outputs.

    Returns the comparators where a path changes channel although the values
    there are equal (so the comparator does not swap them).
    """
    crossings = set()
    group = _add(root, "g", cls="traces", fill="none", stroke=TRACE, stroke_width=max(3.0, 0.3 * g.spacing),
                 stroke_linejoin="round", stroke_linecap="round", stroke_opacity="0.6")
    for path, output in zip(value_paths(network, values, diagnosis.inputs), diagnosis.outputs):
        if path[-1][1] != output:
            raise ValueError("the diagnosis is not one of this input: a value it follows ends elsewhere")
        points = [(g.wire_start, g.channel_y[path[0][1]])]
        for (_, before), (index, after) in zip(path, path[1:]):
            x = g.comparator_x[index]
            points += [(x, g.channel_y[before]), (x, g.channel_y[after])]
        points.append((g.wire_end, g.channel_y[path[-1][1]]))
        _add(group, "polyline", cls="trace", data_input=path[0][1], data_output=output,
             points=" ".join(f"{_number(x)},{_number(y)}" for x, y in points))
        crossings.update(index for index, _ in path[1:])
    return crossings - swapped


def _draw_channels(root: ET.Element, network: ComparatorNetwork, g: Geometry, diagnosis: Diagnosis | None) -> None:
    """The channel lines, numbered at both ends (the diagnosed outputs in red when no values are drawn)."""
    marked = set(diagnosis.outputs) if diagnosis is not None else set()
    lines = _add(root, "g", cls="channels", stroke=WIRE, stroke_width=1.0)
    labels = _add(root, "g", cls="channel-labels", font_size=g.font, fill=MUTED)
    for k, y in enumerate(g.channel_y):
        _add(lines, "line", cls="channel", data_channel=k, x1=g.wire_start, y1=y, x2=g.wire_end, y2=y)
        baseline = y + 0.35 * g.font
        _add(labels, "text", str(k), cls="channel-label", x=g.label_x, y=baseline, text_anchor="end")
        right = _add(labels, "text", str(k), cls="channel-label", x=g.right_label_x, y=baseline)
        if k in marked:
            right.set("class", "channel-label fault")
            right.set("fill", FAULT)
            right.set("font-weight", "bold")


def _draw_comparators(root: ET.Element, network: ComparatorNetwork, g: Geometry, swapped: set[int],
                      fault_index: int | None) -> None:
    """One group per comparator: its line, a dot on each channel, and a tooltip."""
    group = _add(root, "g", cls="comparators")
    for index, ((a, b), layer) in enumerate(zip(network.comparators, network.layer_of)):
        kinds = [kind for kind, present in (("reversed", a > b), ("swapped", index in swapped),
                                            ("fault", index == fault_index)) if present]
        colour = FAULT if index == fault_index else SWAP if index in swapped else INK
        width = g.stroke * (2.0 if kinds and kinds[-1] != "reversed" else 1.0)
        item = _add(group, "g", cls=" ".join(["comparator", *kinds]), data_index=index, data_layer=layer,
                    data_channels=f"{a} {b}", stroke=colour, fill=colour, stroke_width=width)
        _add(item, "title", f"comparator {index} [{a}, {b}], layer {layer}" + "".join(f", {k}" for k in kinds))
        x = g.comparator_x[index]
        _add(item, "line", x1=x, y1=g.channel_y[a], x2=x, y2=g.channel_y[b])
        radius = g.radius * (1.15 if "swapped" in kinds or "fault" in kinds else 1.0)
        _add(item, "circle", cls="end low", data_channel=a, cx=x, cy=g.channel_y[a], r=radius)
        hollow = {"fill": "#ffffff", "stroke_width": max(1.2, 0.9 * width)} if a > b else {}
        _add(item, "circle", cls="end high", data_channel=b, cx=x, cy=g.channel_y[b], r=radius, **hollow)


def _draw_values(root: ET.Element, g: Geometry, states: list[tuple], wrong: set[int], fault: set[int]) -> None:
    """Inputs at the left, outputs at the right, and (when there is room) the values between layers."""
    group = _add(root, "g", cls="values", font_family=MONO, font_size=g.font, text_anchor="middle", fill=INK,
                 stroke="#ffffff", stroke_width=3.0, stroke_linejoin="round", paint_order="stroke")
    header_y = g.channel_y[0] - g.spacing / 2 - 6.0
    _add(group, "text", "in", cls="column-label", x=g.input_x, y=header_y, font_family=SANS, font_size=10, fill=MUTED)
    _add(group, "text", "out", cls="column-label", x=g.output_x, y=header_y, font_family=SANS, font_size=10,
         fill=MUTED)
    offset = 0.35 * g.font
    for k, y in enumerate(g.channel_y):
        _add(group, "text", _show(states[0][k]), cls="value input", data_channel=k, x=g.input_x, y=y + offset)
    if g.wire_values:
        for layer in range(len(g.layer_extent) - 1):
            x = (g.layer_extent[layer][1] + g.layer_extent[layer + 1][0]) / 2
            before, after = states[layer], states[layer + 1]
            for k, y in enumerate(g.channel_y):
                changed = after[k] != before[k]
                _add(group, "text", _show(after[k]), cls="value wire", data_channel=k, data_after_layer=layer,
                     x=x, y=y + offset, fill=INK if changed else MUTED, font_weight="bold" if changed else None)
    marks = _add(root, "g", cls="output-marks")
    root.remove(marks)
    root.insert(list(root).index(group), marks)
    for k, y in enumerate(g.channel_y):
        if k in fault:
            half = max(g.output_x - g.wire_end - 3.0, 0.5 * g.font)
            _add(marks, "rect", cls="fault-mark", x=g.output_x - half, y=y - 0.45 * g.spacing, width=2 * half,
                 height=0.9 * g.spacing, rx=3, fill=FAULT_TINT)
        kinds = [kind for kind, present in (("wrong", k in wrong), ("fault", k in fault)) if present]
        _add(group, "text", _show(states[-1][k]), cls=" ".join(["value", "output", *kinds]), data_channel=k,
             x=g.output_x, y=y + offset, fill=FAULT if kinds else None, font_weight="bold" if kinds else None,
             stroke="none" if k in fault else None)


def _listing(positions: Sequence[int], most: int = 12) -> str:
    shown = ", ".join(str(p) for p in sorted(positions)[:most])
    return shown + (f" and {len(positions) - most} more" if len(positions) > most else "")


def _caption_lines(network: ComparatorNetwork, g: Geometry, states: list[tuple] | None, swapped: set[int],
                   wrong: set[int], diagnosis: Diagnosis | None, prop: Property) -> list[str]:
    reversed_count = network.stats()["reversed_comparators"]
    lines = [f"What went wrong: {diagnosis.describe()}."] if diagnosis is not None else []
    lines += [f"{network.channels} channels, {network.size} comparators, depth {network.depth}"
             + (f", {reversed_count} reversed" if reversed_count else "") + "."]
    if states is not None:
        lines.append(f"On this input {len(swapped)} of the {network.size} comparators swap their values (blue).")
        if wrong:
            noun = "output holds" if len(wrong) == 1 else "outputs hold"
            lines.append(f"{len(wrong)} {noun} a value a network that {prop.describe()} would not put there "
                         f"(red): {_listing(wrong)}.")
        else:
            lines.append(f"The outputs are what a network that {prop.describe()} gives on this input.")
        if not g.wire_values and network.depth > 1:
            lines.append("The channels are too close together for a value on every wire between layers: only the "
                         "inputs (left) and the outputs (right) are written; hover over a comparator for its name.")
    return lines


def _draw_caption(root: ET.Element, top: float, width: float, lines: list[str]) -> float:
    """The caption under the drawing, wrapped to the width; returns the y below it."""
    columns = max(60, int((width - 24.0) / (SANS_WIDTH * CAPTION_SIZE)))
    group = _add(root, "g", cls="caption", font_size=CAPTION_SIZE, fill=INK)
    y = top + 14.0
    for line in lines:
        for part in textwrap.wrap(line, columns) or [""]:
            y += 1.4 * CAPTION_SIZE
            _add(group, "text", part, cls="caption-line", x=12.0, y=y)
    return y


def _legend_entries(network: ComparatorNetwork, with_values: bool, diagnosis: Diagnosis | None
                    ) -> list[tuple[str, str]]:
    """The marks the drawing uses, as (icon, explanation)."""
    entries = [("plain", "comparator: the smaller value leaves on the upper channel, the larger on the lower")]
    if any(a > b for a, b in network.comparators):
        entries.append(("reversed", "reversed comparator: the larger value leaves at the hollow end, "
                                    "on the upper channel"))
    if with_values:
        entries.append(("swapped", "swapped its two values on this input"))
    if diagnosis is not None and diagnosis.sealed_at is not None:
        entries.append(("fault", "after this comparator neither out-of-order value moves again"))
    if diagnosis is not None and diagnosis.last_meeting not in (None, diagnosis.sealed_at):
        entries.append(("met", "the last comparator that compared the two out-of-order values"))
    if diagnosis is not None and with_values:
        entries.append(("trace", "the path of each out-of-order value, from its input to its output"))
    return entries


def _draw_legend(root: ET.Element, y: float, entries: list[tuple[str, str]]) -> float:
    """A small key to the marks used; returns the y below it."""
    group = _add(root, "g", cls="legend", font_size=LEGEND_SIZE, fill=INK)
    y += 10.0
    for kind, text in entries:
        y += 24.0
        _legend_icon(group, kind, 24.0, y - 4.0)
        _add(group, "text", text, cls="legend-text", x=44.0, y=y)
    return y + 6.0


def _legend_icon(group: ET.Element, kind: str, x: float, middle: float) -> None:
    top, bottom = middle - 7.0, middle + 7.0
    if kind == "trace":
        _add(group, "polyline", points=f"12,{_number(top)} {_number(x)},{_number(top)} {_number(x)},"
             f"{_number(bottom)} 36,{_number(bottom)}", fill="none", stroke=TRACE, stroke_width=4.0,
             stroke_opacity="0.6", stroke_linejoin="round")
        return
    for y in (top, bottom):
        _add(group, "line", x1=12.0, y1=y, x2=36.0, y2=y, stroke=WIRE)
    if kind == "fault":
        _add(group, "rect", x=x - 6.0, y=top - 5.0, width=12.0, height=24.0, rx=3, fill=FAULT_TINT)
    if kind == "met":
        _add(group, "rect", x=x - 6.0, y=top - 5.0, width=12.0, height=24.0, rx=3, fill="none", stroke=FAULT,
             stroke_width=1.0, stroke_dasharray="3 2")
    colour = {"swapped": SWAP, "fault": FAULT}.get(kind, INK)
    width = 3.0 if kind in ("swapped", "fault") else 1.5
    _add(group, "line", x1=x, y1=top, x2=x, y2=bottom, stroke=colour, stroke_width=width)
    _add(group, "circle", cx=x, cy=bottom, r=3.5, fill=colour)
    hollow = kind == "reversed"
    _add(group, "circle", cx=x, cy=top, r=3.5, fill="#ffffff" if hollow else colour, stroke=colour,
         stroke_width=1.5 if hollow else 0)
