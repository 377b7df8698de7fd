"""The SVG drawings of comparator networks, read back with ElementTree and checked against our own evaluation.

Every expectation about values is computed here, independently of the drawing
code: comparators applied one by one in network order (``reference.run``),
greedy layers recomputed from their definition, and Python's ``sorted`` for
what a sorter must output.
"""

from __future__ import annotations

import random
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
from hypothesis import given, settings, strategies as st

import sortcheck
from reference import run
from sortcheck.errors import UsageError
from sortcheck.explain.diagnose import diagnose_network
from sortcheck.explain.draw import draw_network, parse_input_values, sub_columns
from sortcheck.model import ComparatorNetwork, Sorts
from sortcheck.model.families import bitonic, merge_exchange

SVG = "{http://www.w3.org/2000/svg}"
CORPUS = Path(__file__).resolve().parent.parent / "corpus"


# --- our own reading of a drawing and our own evaluation --------------------------------------------------------


def classes(element) -> set[str]:
    return set(element.get("class", "").split())


def with_class(root, name: str, tag: str | None = None) -> list:
    return [e for e in root.iter() if name in classes(e) and (tag is None or e.tag == SVG + tag)]


def comparator_groups(root) -> list:
    groups = with_class(root, "comparator", "g")
    return sorted(groups, key=lambda g: int(g.get("data-index")))


def channel_ys(root) -> dict[int, float]:
    return {int(line.get("data-channel")): float(line.get("y1")) for line in with_class(root, "channel", "line")}


def comparator_x(group) -> float:
    return float(group.find(SVG + "line").get("x1"))


def greedy_layers(channels: int, comparators) -> list[int]:
    """Layer of every comparator: one more than the last layer that used either of its channels."""
    last = [-1] * channels
    layers = []
    for a, b in comparators:
        layer = max(last[a], last[b]) + 1
        layers.append(layer)
        last[a] = last[b] = layer
    return layers


def swaps(comparators, values) -> set[int]:
    """Indices of the comparators that exchange their two values (min to ``a``, max to ``b``)."""
    wires, swapped = list(values), set()
    for index, (a, b) in enumerate(comparators):
        if wires[a] > wires[b]:
            swapped.add(index)
        wires[a], wires[b] = min(wires[a], wires[b]), max(wires[a], wires[b])
    return swapped


def after_layer(channels: int, comparators, values, layer: int) -> list:
    """The values once every comparator of layers 0..layer has run (those comparators, in network order)."""
    layers = greedy_layers(channels, comparators)
    return run([c for c, lay in zip(comparators, layers) if lay <= layer], values)


def value_labels(root, kind: str) -> dict:
    return {(int(t.get("data-channel")), t.get("data-after-layer")): t.text for t in with_class(root, kind, "text")
            if "value" in classes(t)}


def caption(root) -> str:
    return " ".join(t.text for t in with_class(root, "caption-line", "text"))


def broken_eight():
    """The corpus bitonic sorter on 8 channels with one comparator reversed, and the input the engine refutes it with."""
    network = sortcheck.load(CORPUS / "broken" / "bitonic-8-reversed-comparator.json")
    counterexample = sortcheck.check(network).counterexample
    return network, list(counterexample.input)


# --- structure -----------------------------------------------------------------------------------------------------


def test_one_channel_line_and_one_group_per_comparator():
    network = bitonic(16)
    root = ET.fromstring(draw_network(network))
    assert sorted(channel_ys(root)) == list(range(16))
    groups = comparator_groups(root)
    assert [int(g.get("data-index")) for g in groups] == list(range(network.size))
    for group, (a, b) in zip(groups, network.comparators):
        assert group.get("data-channels") == f"{a} {b}"
        assert len(group.findall(SVG + "line")) == 1 and len(group.findall(SVG + "circle")) == 2


def test_document_has_title_viewbox_and_size():
    svg = draw_network(bitonic(8))
    root = ET.fromstring(svg)
    assert root.tag == SVG + "svg"
    assert root.find(SVG + "title").text == "bitonic-8"
    width, height = float(root.get("width")), float(root.get("height"))
    assert root.get("viewBox").split() == ["0", "0", root.get("width"), root.get("height")]
    assert 300 < width < 2000 and 200 < height < 1500


def test_reversed_comparators_have_a_hollow_end_on_the_channel_that_gets_the_larger_value():
    network, _ = broken_eight()
    root = ET.fromstring(draw_network(network))
    for group, (a, b) in zip(comparator_groups(root), network.comparators):
        assert ("reversed" in classes(group)) == (a > b)
        fills = {int(c.get("data-channel")): c.get("fill") for c in group.findall(SVG + "circle")}
        assert (fills.get(b) == "#ffffff") == (a > b)  # b receives the larger value
        assert fills.get(a) != "#ffffff"
    assert len(with_class(root, "reversed", "g")) == sum(1 for a, b in network.comparators if a > b) == 1


# --- coordinates -----------------------------------------------------------------------------------------------------


def check_geometry(network: ComparatorNetwork, root) -> None:
    ys = channel_ys(root)
    assert all(ys[k] < ys[k + 1] for k in range(network.channels - 1)), "channel 0 is at the top"
    wire = with_class(root, "channel", "line")[0]
    left, right = float(wire.get("x1")), float(wire.get("x2"))
    groups = comparator_groups(root)
    layers = greedy_layers(network.channels, network.comparators)
    columns: dict[float, list[tuple[int, int]]] = {}
    for group, (a, b) in zip(groups, network.comparators):
        line = group.find(SVG + "line")
        x = comparator_x(group)
        assert float(line.get("x2")) == x and left < x < right
        assert {float(line.get("y1")), float(line.get("y2"))} == {ys[a], ys[b]}
        for circle in group.findall(SVG + "circle"):
            assert float(circle.get("cx")) == x
            assert float(circle.get("cy")) == ys[int(circle.get("data-channel"))]
        assert sorted(int(c.get("data-channel")) for c in group.findall(SVG + "circle")) == sorted((a, b))
        columns.setdefault(x, []).append((min(a, b), max(a, b)))
    for group, layer in zip(groups, layers):
        assert int(group.get("data-layer")) == layer
    for i, j in ((i, j) for i in range(len(groups)) for j in range(len(groups)) if layers[i] < layers[j]):
        assert comparator_x(groups[i]) < comparator_x(groups[j]), f"comparator {j} is not right of {i}"
    for x, spans in columns.items():
        for p, (low, high) in enumerate(spans):
            for other_low, other_high in spans[p + 1:]:
                assert high < other_low or other_high < low, f"spans {low}-{high} and {other_low}-{other_high} at x={x}"


@pytest.mark.parametrize("network", [bitonic(16), merge_exchange(13), broken_eight()[0]], ids=lambda n: n.name)
def test_coordinates(network):
    check_geometry(network, ET.fromstring(draw_network(network)))


def test_sub_columns_keep_overlapping_spans_apart_and_use_as_few_as_the_deepest_overlap():
    spans = [(0, 7), (1, 6), (2, 5), (3, 4)]  # nested: all four overlap at channel 3
    assert sorted(sub_columns(spans)) == [0, 1, 2, 3]
    assert sub_columns([(0, 3), (1, 2), (4, 6), (5, 7)]) == [0, 1, 0, 1]


# --- values ----------------------------------------------------------------------------------------------------------


def test_value_labels_are_the_values_of_our_own_evaluation():
    network = bitonic(16)
    values = [5, 12, 3, 9, 14, 0, 7, 11, 2, 15, 8, 1, 13, 6, 10, 4]
    root = ET.fromstring(draw_network(network, values))
    assert value_labels(root, "input") == {(k, None): str(v) for k, v in enumerate(values)}
    outputs = run(network.comparators, values)
    assert outputs == sorted(values)  # the bitonic sorter sorts (checked against Python's sorted)
    assert value_labels(root, "output") == {(k, None): str(v) for k, v in enumerate(outputs)}
    wires = value_labels(root, "wire")
    assert len(wires) == 16 * (network.depth - 1)
    for layer in range(network.depth - 1):
        state = after_layer(16, network.comparators, values, layer)
        assert {k: text for (k, after), text in wires.items() if after == str(layer)} == \
            {k: str(v) for k, v in enumerate(state)}


def test_wire_labels_sit_between_their_layer_and_the_next():
    network = bitonic(8)
    root = ET.fromstring(draw_network(network, [3, 7, 0, 5, 1, 6, 2, 4]))
    xs_by_layer: dict[int, list[float]] = {}
    for group in comparator_groups(root):
        xs_by_layer.setdefault(int(group.get("data-layer")), []).append(comparator_x(group))
    for text in with_class(root, "wire", "text"):
        layer, x = int(text.get("data-after-layer")), float(text.get("x"))
        assert max(xs_by_layer[layer]) < x < min(xs_by_layer[layer + 1])


def test_swapped_marks_exactly_the_comparators_that_swap():
    network, values = broken_eight()
    root = ET.fromstring(draw_network(network, values))
    marked = {int(g.get("data-index")) for g in comparator_groups(root) if "swapped" in classes(g)}
    assert marked == swaps(network.comparators, values) and marked


def test_wrong_outputs_are_those_that_differ_from_the_sorted_input():
    network, values = broken_eight()
    root = ET.fromstring(draw_network(network, values))
    outputs = run(network.comparators, values)
    expected = {k for k, (got, want) in enumerate(zip(outputs, sorted(values))) if got != want}
    assert expected  # the corpus file is broken, so the counterexample gives some wrong output
    assert {int(t.get("data-channel")) for t in with_class(root, "wrong", "text")} == expected


@settings(max_examples=60, deadline=None)
@given(st.data())
def test_random_networks_drawn_with_random_inputs(data):
    n = data.draw(st.integers(1, 9), label="channels")
    pairs = st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)).filter(lambda p: p[0] != p[1])
    comparators = data.draw(st.lists(pairs, max_size=24) if n > 1 else st.just([]), label="comparators")
    values = data.draw(st.lists(st.integers(-3, 3), min_size=n, max_size=n), label="values")
    network = ComparatorNetwork(n, tuple(comparators))
    root = ET.fromstring(draw_network(network, values))
    check_geometry(network, root)
    marked = {int(g.get("data-index")) for g in comparator_groups(root) if "swapped" in classes(g)}
    assert marked == swaps(network.comparators, values)
    assert value_labels(root, "output") == {(k, None): str(v) for k, v in enumerate(run(comparators, values))}
    for (k, after), text in value_labels(root, "wire").items():
        assert text == str(after_layer(n, comparators, values, int(after))[k])


# --- the diagnosis -----------------------------------------------------------------------------------------------


def followed(comparators, values, start: int) -> list[tuple[int, int]]:
    """(comparator, channel) for every move of the value entering at ``start``; equal values ranked by position."""
    order = sorted(range(len(values)), key=lambda p: (values[p], p))
    tokens = [0] * len(values)
    for rank, position in enumerate(order):
        tokens[position] = rank
    mine, moves = tokens[start], []
    for index, (a, b) in enumerate(comparators):
        if tokens[a] > tokens[b]:
            tokens[a], tokens[b] = tokens[b], tokens[a]
            moves += [(index, channel) for channel in (a, b) if tokens[channel] == mine]
    return moves


def on_channels(comparators, values, starts, before: int) -> list[int]:
    """The channels the values entering at ``starts`` are on just before comparator ``before``."""
    channels = list(starts)
    for k, start in enumerate(starts):
        for index, channel in followed(comparators, values, start):
            if index < before:
                channels[k] = channel
    return channels


def test_fault_is_the_last_comparator_that_moves_either_out_of_order_value():
    network, values = broken_eight()
    diagnosis = diagnose_network(network, Sorts(), values)
    root = ET.fromstring(draw_network(network, values, diagnosis))
    outputs = run(network.comparators, values)
    p, q = diagnosis.outputs
    assert p < q and outputs[p] > outputs[q]  # the pair really is out of order
    moves = [followed(network.comparators, values, start) for start in diagnosis.inputs]
    assert [m[-1][1] if m else s for m, s in zip(moves, diagnosis.inputs)] == [p, q]
    last_move = max(index for m in moves for index, _ in m)
    faults = with_class(root, "fault", "g")
    assert [int(g.get("data-index")) for g in faults] == [last_move]
    assert {int(t.get("data-channel")) for t in with_class(root, "fault", "text")} == {p, q}
    ys = channel_ys(root)
    for trace, start, output in zip(with_class(root, "trace", "polyline"), diagnosis.inputs, diagnosis.outputs):
        points = [tuple(map(float, point.split(","))) for point in trace.get("points").split()]
        assert points[0][1] == ys[start] and points[-1][1] == ys[output]
    assert f"What went wrong: {diagnosis.describe()}." in caption(root)
    met = [index for index, (a, b) in enumerate(network.comparators) if {a, b} == set(on_channels(
        network.comparators, values, diagnosis.inputs, index))]
    assert met and diagnosis.last_meeting == met[-1] != last_move  # they last met at the reversed comparator
    assert [int(r.get("data-index")) for r in with_class(root, "met-mark", "rect")] == [met[-1]]


def test_fault_in_a_worked_example():
    # Worked by hand: the three-channel sorter without its last comparator, on 1 1 0.  The outputs are 1 0 1,
    # so outputs 0 and 1 are out of order; the 0 (input 2) moves up at comparator 1, the first 1 never moves,
    # so comparator 1 is the last place either of them moves.
    network = ComparatorNetwork(3, ((0, 1), (1, 2)))
    diagnosis = diagnose_network(network, Sorts(), [1, 1, 0])
    root = ET.fromstring(draw_network(network, [1, 1, 0], diagnosis))
    assert [int(g.get("data-index")) for g in with_class(root, "fault", "g")] == [1]
    assert value_labels(root, "output") == {(0, None): "1", (1, None): "0", (2, None): "1"}
    assert {int(t.get("data-channel")) for t in with_class(root, "fault", "text")} == {0, 1}


def test_diagnosis_without_values_marks_the_comparator_and_the_output_labels():
    network, values = broken_eight()
    diagnosis = diagnose_network(network, Sorts(), values)
    root = ET.fromstring(draw_network(network, diagnosis=diagnosis))
    assert [int(g.get("data-index")) for g in with_class(root, "fault", "g")] == [diagnosis.sealed_at]
    assert sorted(t.text for t in with_class(root, "fault", "text")) == sorted(map(str, diagnosis.outputs))
    assert not with_class(root, "value") and not with_class(root, "trace")


def test_a_diagnosis_of_another_input_is_refused():
    network, values = broken_eight()
    diagnosis = diagnose_network(network, Sorts(), values)
    with pytest.raises(ValueError, match="not one of this input"):
        draw_network(network, [0] * 8 if values != [0] * 8 else [1] * 8, diagnosis)
    with pytest.raises(ValueError, match="expected 8 values"):
        draw_network(network, values[:-1])


# --- size, scaling, escaping ----------------------------------------------------------------------------------------


def test_merge_exchange_64_stays_valid_and_of_reasonable_size():
    network = merge_exchange(64)
    values = list(range(64))
    random.Random(64).shuffle(values)
    svg = draw_network(network, values)
    assert len(svg) < 1_000_000
    root = ET.fromstring(svg)
    assert len(comparator_groups(root)) == network.size and len(channel_ys(root)) == 64
    width, height = float(root.get("width")), float(root.get("height"))
    assert width < 5000 and height < 1500
    ys = sorted(channel_ys(root).values())
    assert min(b - a for a, b in zip(ys, ys[1:])) >= 10  # room for a readable channel label
    assert all(float(t.get("font-size")) >= 8 for t in with_class(root, "channel-labels", "g"))
    assert not with_class(root, "wire")  # too dense for values between layers ...
    assert len(with_class(root, "input", "text")) == len(with_class(root, "output", "text")) == 64  # ... but not ends
    assert "too close together" in caption(root)
    check_geometry(network, root)


def test_two_hundred_and_fifty_six_channels_give_a_large_but_valid_document():
    network = merge_exchange(256)
    svg = draw_network(network, [k % 2 for k in range(256)])
    assert len(svg) < 5_000_000
    root = ET.fromstring(svg)
    assert len(comparator_groups(root)) == network.size and root.get("viewBox")


def test_special_characters_in_titles_are_escaped():
    title = 'a < b && "c" > \'d\' ]]> <script>x</script> \x00\x07 \u00e9'
    svg = draw_network(ComparatorNetwork(2, ((0, 1),), name="n"), title=title)
    assert "<script>" not in svg
    root = ET.fromstring(svg)
    cleaned = title.replace("\x00", "\ufffd").replace("\x07", "\ufffd")
    assert root.find(SVG + "title").text == cleaned
    assert with_class(root, "heading", "text")[0].text == cleaned
    named = ComparatorNetwork(2, ((0, 1),), name="x<y&z")
    assert ET.fromstring(draw_network(named)).find(SVG + "title").text == "x<y&z"


def test_small_cases():
    for network in (ComparatorNetwork(1, ()), ComparatorNetwork(4, ())):
        root = ET.fromstring(draw_network(network, [1] * network.channels))
        assert len(channel_ys(root)) == network.channels and not comparator_groups(root)
    root = ET.fromstring(draw_network(ComparatorNetwork(2, ((0, 1),)), [True, False]))
    assert value_labels(root, "output") == {(0, None): "0", (1, None): "1"}


def test_parse_input_values():
    assert parse_input_values("3, 1,2", 3) == (3, 1, 2)
    assert parse_input_values("-4,0", 2) == (-4, 0)
    assert parse_input_values("1010 0110", 8) == (1, 0, 1, 0, 0, 1, 1, 0)
    assert parse_input_values("7", 1) == (7,)
    with pytest.raises(UsageError, match="has 3 channels, got 2 values"):
        parse_input_values("1,2", 3)
    for bad in ("1,x,2", "abc", "1012", ""):
        with pytest.raises(UsageError, match="comma-separated integers or a 0-1 string"):
            parse_input_values(bad, 3)
