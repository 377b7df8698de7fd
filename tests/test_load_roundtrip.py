"""Writing a netlist and reading it back gives the same model; files are read safely.

Also pins the metrics and the behaviour of a small gate circuit whose figures
are worked out by hand and whose outputs are compared with Python's min/max.
"""

from __future__ import annotations

import itertools
import json

import jsonschema
import pytest
from hypothesis import given, settings, strategies as st

from sortcheck.errors import NetlistError
from sortcheck.load import dump_netlist, netlist_schema, parse_netlist, read_netlist, write_netlist
from sortcheck.model import (
    ComparatorNetwork, Gate, GateCircuit, Median, Merges, OutputWord, PartialSort, Selects, Sorts, Word,
    check_fits,
)

from conftest import assert_error, network_doc, text_of

SCHEMA_VALIDATOR = jsonschema.validators.validator_for(netlist_schema())(netlist_schema())

TEXT = st.text(st.characters(codec="utf-8", exclude_categories=["Cs"]), max_size=12)


def network_properties():
    """Properties of every shape the format allows on a network (fitting or not)."""
    return st.one_of(
        st.none(),
        st.builds(Sorts, signed=st.booleans(), order=st.sampled_from(["ascending", "descending"])),
        st.builds(Merges, signed=st.booleans(), split=st.integers(1, 25)),
        st.builds(Selects, signed=st.booleans(), count=st.integers(1, 25), sorted=st.booleans()),
        st.builds(Median, signed=st.booleans()),
    )


@st.composite
def networks(draw):
    channels = draw(st.integers(1, 20))
    if channels == 1:
        comparators = []
    else:
        pair = st.tuples(st.integers(0, channels - 1), st.integers(0, channels - 1)).filter(lambda p: p[0] != p[1])
        comparators = draw(st.lists(pair, max_size=60))
    return ComparatorNetwork(
        channels, tuple(comparators),
        name=draw(st.none() | TEXT), description=draw(st.none() | TEXT),
        claim=draw(network_properties()),
    )


@settings(max_examples=150, deadline=None)
@given(networks())
def test_comparator_network_round_trip(net):
    text = dump_netlist(net)
    SCHEMA_VALIDATOR.validate(json.loads(text))  # what is written satisfies the published schema
    again = parse_netlist(text, "written.json")
    assert again == net
    assert again.comparators == net.comparators  # same order, reversed comparators kept as written
    assert again.claim == net.claim
    assert (again.name, again.description) == (net.name, net.description)
    assert again.stats() == net.stats()
    assert dump_netlist(again) == text


def test_round_trip_keeps_the_order_of_comparators_on_disjoint_channels():
    # Greedy layering would put (3, 4) before (1, 2); the network as a value must not change.
    net = ComparatorNetwork(5, ((0, 1), (1, 2), (3, 4), (4, 3)))
    again = parse_netlist(dump_netlist(net))
    assert again.comparators == ((0, 1), (1, 2), (3, 4), (4, 3))
    assert again.stats()["reversed_comparators"] == 1


def test_written_layers_use_each_channel_once():
    net = ComparatorNetwork(4, ((0, 1), (2, 3), (0, 2), (1, 3), (1, 2)))
    layers = json.loads(dump_netlist(net))["layers"]
    assert layers == [[[0, 1], [2, 3]], [[0, 2], [1, 3]], [[1, 2]]]


def test_empty_network_round_trip():
    net = ComparatorNetwork(3, ())
    assert parse_netlist(dump_netlist(net)) == net


@st.composite
def circuits(draw):
    """Random acyclic gate circuits: every gate reads input bits, constants or earlier gates."""
    words = [Word(f"w{i}", draw(st.integers(1, 3))) for i in range(draw(st.integers(1, 3)))]
    signals: list = [f"{w.name}[{b}]" for w in words for b in range(w.width)]
    gates = []
    for index in range(draw(st.integers(0, 12))):
        op = draw(st.sampled_from(["and", "or", "nand", "nor", "xor", "xnor", "not", "mux"]))
        count = {"not": 1, "mux": 3}.get(op) or draw(st.integers(2, 4))
        inputs = tuple(draw(st.sampled_from(signals + [0, 1])) for _ in range(count))
        gates.append(Gate(f"n{index}", op, inputs))
        signals.append(f"n{index}")
    outputs = tuple(OutputWord(f"y{i}", tuple(draw(st.lists(st.sampled_from(signals + [0, 1]), min_size=1,
                                                                   max_size=3))))
                    for i in range(draw(st.integers(1, 3))))
    claim = draw(st.none() | st.builds(PartialSort, key_bits=st.integers(1, 3), stable=st.booleans(),
                                       signed=st.booleans()))
    return GateCircuit(tuple(words), tuple(gates), outputs, name=draw(st.none() | TEXT), claim=claim)


@settings(max_examples=80, deadline=None)
@given(circuits())
def test_gate_circuit_round_trip(circuit):
    text = dump_netlist(circuit)
    SCHEMA_VALIDATOR.validate(json.loads(text))
    again = parse_netlist(text, "written.json")
    assert again == circuit
    assert again.claim == circuit.claim
    assert again.stats() == circuit.stats()
    for values in itertools.islice(itertools.product(*(range(2 ** w.width) for w in circuit.inputs)), 16):
        assert again.evaluate(list(values)) == circuit.evaluate(list(values))


# --- files --------------------------------------------------------------------------------------

def test_write_then_read_a_file(tmp_path):
    net = ComparatorNetwork(4, ((0, 1), (2, 3), (0, 2), (1, 3), (1, 2)), name="sorter 4", claim=Sorts())
    path = tmp_path / "net.json"
    write_netlist(net, path)
    again = read_netlist(path)
    assert again == net and again.claim == Sorts()
    assert [again.apply(list(p)) for p in itertools.permutations(range(4))] == [[0, 1, 2, 3]] * 24


def test_read_a_hand_written_file(tmp_path):
    path = tmp_path / "hand.json"
    path.write_text(text_of(network_doc(name="two layers", property={"name": "merges", "split": 4})), "utf-8")
    net = read_netlist(str(path))
    assert net.channels == 8 and net.size == 8 and net.depth == 2
    assert net.claim == Merges(split=4)


def test_errors_of_a_file_name_the_path_as_given(tmp_path):
    path = tmp_path / "bad.json"
    path.write_text(text_of(network_doc(comparators=[[0, 1], [1, 9]])), "utf-8")
    assert_error(lambda: read_netlist(path), NetlistError, str(path), "comparators[1]",
                 "channel 9 is out of range for 8 channels")


def test_missing_file(tmp_path):
    path = tmp_path / "nowhere" / "net.json"
    assert_error(lambda: read_netlist(path), NetlistError, str(path), None, "no such file")


def test_directory_is_not_a_netlist(tmp_path):
    assert_error(lambda: read_netlist(tmp_path), NetlistError, str(tmp_path), None, "is a directory")


def test_empty_file(tmp_path):
    path = tmp_path / "empty.json"
    path.write_bytes(b"")
    assert_error(lambda: read_netlist(path), NetlistError, str(path), None, "empty file")


def test_byte_order_mark_is_allowed(tmp_path):
    text = text_of(network_doc())
    expected = parse_netlist(text)
    assert parse_netlist(b"\xef\xbb\xbf" + text.encode("utf-8")) == expected
    assert parse_netlist("\ufeff" + text) == expected
    path = tmp_path / "bom.json"
    path.write_bytes(text.encode("utf-8-sig"))
    assert path.read_bytes().startswith(b"\xef\xbb\xbf")
    assert read_netlist(path) == expected


def test_non_ascii_text_survives(tmp_path):
    net = ComparatorNetwork(2, ((0, 1),), name="Sortiernetz für zwei", description='quotes " and \\ and\nnewline')
    path = tmp_path / "net.json"
    write_netlist(net, path)
    again = read_netlist(path)
    assert (again.name, again.description) == (net.name, net.description)


# --- a 2-word x 2-bit compare-and-swap written as gates -----------------------------------------

COMPARE_AND_SWAP = {
    "sortcheck": 1,
    "kind": "gate-circuit",
    "name": "compare-and-swap, 2 words of 2 bits",
    "property": {"name": "sorts"},
    "inputs": [{"name": "a", "width": 2}, {"name": "b", "width": 2}],
    # Listed out of order on purpose: the format allows gates in any order.
    "gates": [
        {"out": "min0", "op": "mux", "in": ["lt", "b[0]", "a[0]"]},
        {"out": "min1", "op": "mux", "in": ["lt", "b[1]", "a[1]"]},
        {"out": "max0", "op": "mux", "in": ["lt", "a[0]", "b[0]"]},
        {"out": "max1", "op": "mux", "in": ["lt", "a[1]", "b[1]"]},
        {"out": "lt", "op": "or", "in": ["high_lt", "low_lt"]},
        {"out": "high_lt", "op": "and", "in": ["not_a1", "b[1]"]},
        {"out": "low_lt", "op": "and", "in": ["high_eq", "not_a0", "b[0]"]},
        {"out": "high_eq", "op": "xnor", "in": ["a[1]", "b[1]"]},
        {"out": "not_a1", "op": "not", "in": ["a[1]"]},
        {"out": "not_a0", "op": "not", "in": ["a[0]"]},
    ],
    "outputs": [{"name": "lo", "bits": ["min0", "min1"]}, {"name": "hi", "bits": ["max0", "max1"]}],
}


def test_compare_and_swap_metrics_by_hand():
    circuit = parse_netlist(json.dumps(COMPARE_AND_SWAP), "cas.json")
    # not_a0, not_a1, high_eq: 1 gate deep; high_lt, low_lt: 2; lt: 3; the four muxes: 4.
    assert circuit.stats() == {
        "words": 2, "width": 2, "gates": 10, "depth": 4,
        "ops": {"and": 2, "mux": 4, "not": 2, "or": 1, "xnor": 1},
        "output_words": 2,
    }
    assert circuit.signal_depth["lt"] == 3 and circuit.signal_depth["high_eq"] == 1
    assert circuit.claim == Sorts()
    check_fits(circuit.claim, circuit, "cas.json")


def test_compare_and_swap_computes_min_and_max():
    circuit = parse_netlist(json.dumps(COMPARE_AND_SWAP), "cas.json")
    seen = set()
    for a, b in itertools.product(range(4), repeat=2):
        assert circuit.evaluate([a, b]) == [min(a, b), max(a, b)], (a, b)
        seen.add((a, b))
    assert len(seen) == 16


def test_compare_and_swap_round_trip():
    circuit = parse_netlist(json.dumps(COMPARE_AND_SWAP), "cas.json")
    again = parse_netlist(dump_netlist(circuit), "cas.json")
    assert again == circuit and again.claim == circuit.claim and again.name == COMPARE_AND_SWAP["name"]


@pytest.mark.parametrize("widths, expected_width", [((2, 3), 3), ((1,), 1)])
def test_circuit_with_words_of_different_widths_reports_them(widths, expected_width):
    words = [{"name": f"x{i}", "width": w} for i, w in enumerate(widths)]
    doc = {"sortcheck": 1, "kind": "gate-circuit", "inputs": words, "gates": [],
           "outputs": [{"name": "y", "bits": ["x0[0]"]}]}
    stats = parse_netlist(json.dumps(doc)).stats()
    assert stats["width"] == expected_width and stats["gates"] == 0 and stats["depth"] == 0
    assert stats.get("widths") == (list(widths) if len(set(widths)) > 1 else None)
