"""Every bad-input rule of netlist format version 1 gives one clear, located error.

Each case checks the error type, that ``str(error)`` is one line starting with
the source name, the exact place, and a key phrase of the message.  The last
part pins the fast bulk predicates of the schema check to jsonschema itself.
"""

from __future__ import annotations

import time

import jsonschema
import pytest
from hypothesis import HealthCheck, example, given, settings, strategies as st

from sortcheck.errors import NetlistError, PropertyError
from sortcheck.load import netlist_schema, parse_netlist
from sortcheck.load.decode import MAX_NESTING, NotAnInteger, TooLargeInteger
from sortcheck.load.schema import BULK_ITEM_RULES

from conftest import assert_error, circuit_doc, network_doc, text_of

SOURCE = "cases/bad-net.json"

HOLE = '"@HOLE@"'


def with_raw(doc: dict, raw: str) -> str:
    """The JSON text of ``doc`` with the value ``"@HOLE@"`` replaced by raw JSON text."""
    text = text_of(doc)
    assert text.count(HOLE) == 1
    return text.replace(HOLE, raw)


def expect(text: str | bytes, where: str | None, phrase: str, error_type: type = NetlistError):
    return assert_error(lambda: parse_netlist(text, SOURCE), error_type, SOURCE, where, phrase)


def gates_with(*extra: dict, before: list | None = None) -> dict:
    """The base circuit with gates appended (or replacing the list when ``before`` is given)."""
    gates = circuit_doc()["gates"] if before is None else before
    return circuit_doc(gates=gates + list(extra))


def comparators_with(index: int, bad) -> dict:
    good = [[0, 1], [2, 3], [1, 2], [3, 4], [4, 5], [5, 6], [6, 7], [0, 7], [1, 6]]
    return network_doc(comparators=good[:index] + [bad] + good[index:])


# --- decoding -----------------------------------------------------------------------------------

@pytest.mark.parametrize("text, where, phrase", [
    pytest.param('{"a": 1,}', "line 1, column 9", "not JSON: expecting property name", id="trailing-comma"),
    pytest.param('{\n  "sortcheck": 1\n  "kind": "gate-circuit"\n}', "line 3, column 3",
                 "not JSON: expecting ',' delimiter", id="missing-comma-line-3"),
    pytest.param("sortcheck: 1", "line 1, column 1", "not JSON", id="not-json-at-all"),
    pytest.param('{"sortcheck": 1', "line 1, column 16", "not JSON", id="truncated"),
    pytest.param("", None, "empty file", id="empty"),
    pytest.param(" \n\t\r\n  ", None, "empty file", id="whitespace-only"),
    pytest.param(b"", None, "empty file", id="empty-bytes"),
    pytest.param("[]", None, "the top level must be a JSON object, got a list", id="top-list"),
    pytest.param('"comparator-network"', None, "the top level must be a JSON object, got a string", id="top-string"),
    pytest.param("42", None, "the top level must be a JSON object, got an integer", id="top-integer"),
    pytest.param("null", None, "the top level must be a JSON object", id="top-null"),
])
def test_decoding_errors(text, where, phrase):
    expect(text, where, phrase)


def test_column_of_a_json_error_points_at_the_offending_character():
    text = '{"sortcheck": 1, "kind": "comparator-network", "channels": 8 "comparators": []}'
    column = text.index('"comparators"') + 1
    expect(text, f"line 1, column {column}", "not JSON")


@pytest.mark.parametrize("data, offset", [
    pytest.param('{"sortcheck": 1, "name": "café"}'.encode("latin-1"), 29, id="latin-1"),
    pytest.param(b"\xff\xfe{\x00}\x00", 0, id="utf-16"),
    pytest.param(b'{"name": "ok"}\x80', 14, id="stray-continuation-byte"),
    pytest.param(b'{"name": "\xe2\x82"}', 10, id="truncated-sequence"),
])
def test_bytes_that_are_not_utf8(data, offset):
    with pytest.raises(UnicodeDecodeError) as info:
        data.decode("utf-8")
    assert info.value.start == offset  # the hand-counted offset agrees with Python's codec
    expect(data, f"byte {offset}", f"not UTF-8 text (0x{data[offset]:02x})")


def test_nesting_just_over_the_limit_is_located():
    depth = 40
    doc = network_doc(description="@HOLE@")
    expect(with_raw(doc, "[" * depth + "]" * depth), "description" + "[0]" * MAX_NESTING, "nesting too deep")


def test_nesting_under_the_limit_reaches_the_schema_check():
    depth = 20
    doc = network_doc(description="@HOLE@")
    expect(with_raw(doc, "[" * depth + "]" * depth), "description", "expected a string")


@pytest.mark.parametrize("text", [
    pytest.param("[" * 100_000 + "]" * 100_000, id="lists"),
    pytest.param('{"a": ' * 100_000 + "1" + "}" * 100_000, id="objects"),
    pytest.param('{"sortcheck": 1, "kind": "comparator-network", "channels": 2, "comparators": '
                 + "[" * 100_000 + "]" * 100_000 + "}", id="inside-a-netlist"),
])
def test_hostile_nesting_never_escapes_as_recursion_error(text):
    expect(text, None, "nesting too deep")


@pytest.mark.parametrize("raw, where, phrase", [
    pytest.param("9" * 25, "channels", "integer too large (an integer of 25 digits)", id="25-digits"),
    pytest.param("9" * 5000, "channels", "integer too large (an integer of 5000 digits)", id="5000-digits"),
    pytest.param("-" + "9" * 5000, "channels", "integer too large (an integer of 5000 digits)", id="negative-5000"),
    pytest.param("NaN", None, "NaN is not a JSON number", id="nan"),
    pytest.param("Infinity", None, "Infinity is not a JSON number", id="infinity"),
    pytest.param("-Infinity", None, "-Infinity is not a JSON number", id="minus-infinity"),
])
def test_numbers_json_should_not_carry(raw, where, phrase):
    expect(with_raw(network_doc(channels="@HOLE@"), raw), where, phrase)


def test_huge_integer_inside_a_comparator_is_located():
    expect(with_raw(comparators_with(3, [0, "@HOLE@"]), "7" * 5000), "comparators[3][1]", "integer too large")


@pytest.mark.parametrize("text, phrase", [
    pytest.param('{"sortcheck": 1, "kind": "comparator-network", "kind": "gate-circuit"}',
                 "duplicate key 'kind'", id="top-level"),
    pytest.param('{"sortcheck": 1, "kind": "gate-circuit", "inputs": [{"name": "a", "width": 1, "name": "b"}]}',
                 "duplicate key 'name'", id="nested"),
])
def test_duplicate_keys(text, phrase):
    expect(text, None, phrase)


# --- header -------------------------------------------------------------------------------------

@pytest.mark.parametrize("doc, where, phrase", [
    pytest.param(network_doc(sortcheck=None), None, 'missing format version: add "sortcheck": 1', id="missing"),
    pytest.param(network_doc(sortcheck=2), "sortcheck",
                 "unsupported format version 2 (this sortcheck reads version 1)", id="version-2"),
    pytest.param(network_doc(sortcheck=0), "sortcheck", "unsupported format version 0", id="version-0"),
    pytest.param(network_doc(sortcheck="1"), "sortcheck", 'unsupported format version "1"', id="string"),
    pytest.param(network_doc(sortcheck=True), "sortcheck", "unsupported format version true", id="true"),
    pytest.param(network_doc(sortcheck=[1]), "sortcheck", "unsupported format version [1]", id="list"),
    pytest.param(network_doc(kind=None), None, "missing key 'kind' (one of comparator-network, gate-circuit)",
                 id="kind-missing"),
    pytest.param(network_doc(kind="sorting-network"), "kind", 'unknown kind "sorting-network"', id="kind-unknown"),
    pytest.param(network_doc(kind=1), "kind", "unknown kind 1", id="kind-number"),
])
def test_header_errors(doc, where, phrase):
    error = expect(text_of(doc), where, phrase)
    if where == "sortcheck":
        assert "reads version 1" in error.message


def test_version_written_as_a_float_is_refused():
    expect(with_raw(network_doc(sortcheck="@HOLE@"), "1.0"), "sortcheck", "unsupported format version 1.0")


# --- comparator networks ------------------------------------------------------------------------

@pytest.mark.parametrize("value, phrase", [
    pytest.param(0, "0 is below the minimum 1", id="zero"),
    pytest.param(-1, "-1 is below the minimum 1", id="negative"),
    pytest.param(4.5, "expected an integer, got 4.5", id="fraction"),
    pytest.param("8", 'expected an integer, got "8"', id="string"),
    pytest.param(True, "expected an integer, got true", id="true"),
    pytest.param([8], "expected an integer, got [8]", id="list"),
])
def test_channel_count_must_be_a_positive_integer(value, phrase):
    expect(text_of(network_doc(channels=value)), "channels", phrase)


def test_channel_count_is_required():
    expect(text_of(network_doc(channels=None)), None, "missing key 'channels'")


@pytest.mark.parametrize("raw", ["4.0", "8e0", "-0.0"])
def test_channel_count_written_as_a_float_is_refused(raw):
    expect(with_raw(network_doc(channels="@HOLE@"), raw), "channels", f"expected an integer, got {raw}")


def test_absurd_channel_count_fails_fast():
    text = text_of(network_doc(channels=10**12, comparators=[[0, 10**12 - 1]]))
    start = time.perf_counter()
    expect(text, "channels", "1000000000000 is too large")
    assert time.perf_counter() - start < 2.0


@pytest.mark.parametrize("doc, where, phrase", [
    pytest.param(comparators_with(7, [0, 9]), "comparators[7]", "channel 9 is out of range for 8 channels",
                 id="out-of-range"),
    pytest.param(comparators_with(2, [8, 0]), "comparators[2]", "channel 8 is out of range for 8 channels",
                 id="first-channel-equal-to-count"),
    pytest.param(comparators_with(3, [-1, 2]), "comparators[3][0]", "channel -1 is negative", id="negative"),
    pytest.param(comparators_with(4, [3, -5]), "comparators[4][1]", "channel -5 is negative", id="negative-second"),
    pytest.param(comparators_with(5, [2, 2]), "comparators[5]", "comparator [2, 2] joins channel 2 to itself",
                 id="self"),
    pytest.param(comparators_with(0, [1]), "comparators[0]", "a comparator is a pair of channels [a, b], got [1]",
                 id="one-channel"),
    pytest.param(comparators_with(1, [1, 2, 3]), "comparators[1]", "a comparator is a pair of channels",
                 id="three-channels"),
    pytest.param(comparators_with(6, []), "comparators[6]", "a comparator is a pair of channels", id="empty"),
    pytest.param(comparators_with(2, "ab"), "comparators[2]", 'a comparator is a pair of channels [a, b], got "ab"',
                 id="string"),
    pytest.param(comparators_with(3, {"a": 1}), "comparators[3]", "a comparator is a pair of channels",
                 id="object"),
    pytest.param(comparators_with(1, [0, "1"]), "comparators[1][1]", 'expected an integer, got "1"',
                 id="string-channel"),
    pytest.param(comparators_with(1, [True, 1]), "comparators[1][0]", "expected an integer, got true",
                 id="bool-channel"),
    pytest.param(network_doc(comparators={"0": 1}), "comparators", "expected a list", id="not-a-list"),
])
def test_comparator_errors(doc, where, phrase):
    expect(text_of(doc), where, phrase)


def test_comparator_channel_written_as_a_float_is_refused():
    expect(with_raw(comparators_with(2, [0, "@HOLE@"]), "1.0"), "comparators[2][1]", "expected an integer, got 1.0")


LAYERS = [[[0, 1], [2, 3], [4, 5], [6, 7]], [[0, 2], [1, 3]], [[1, 2], [5, 6]]]


def layers_doc(layers) -> dict:
    return network_doc(comparators=None, layers=layers)


@pytest.mark.parametrize("doc, where, phrase", [
    pytest.param(network_doc(layers=LAYERS), None, "give exactly one of 'comparators' or 'layers', not both",
                 id="both"),
    pytest.param(network_doc(comparators=None), None, "give exactly one of 'comparators' or 'layers'",
                 id="neither"),
    pytest.param(layers_doc(LAYERS[:2] + [[[1, 2], [0, 9]]]), "layers[2][1]",
                 "channel 9 is out of range for 8 channels", id="out-of-range"),
    pytest.param(layers_doc(LAYERS[:2] + [[[1, 2], [3, 4], [2, 5]]]), "layers[2][2]",
                 "channel 2 is used twice in layer 2 (also by layers[2][0])", id="channel-twice"),
    pytest.param(layers_doc(LAYERS[:1] + [[[4, 5], [5, 4]]]), "layers[1][1]", "used twice in layer 1",
                 id="same-pair-twice"),
    pytest.param(layers_doc(LAYERS[:2] + [[[1, 2], [-1, 4]]]), "layers[2][1][0]", "channel -1 is negative",
                 id="negative"),
    pytest.param(layers_doc(LAYERS[:1] + [[[3, 3]]]), "layers[1][0]", "joins channel 3 to itself", id="self"),
    pytest.param(layers_doc(LAYERS[:1] + [[0, 1]]), "layers[1][0]", "a comparator is a pair of channels",
                 id="comparator-instead-of-layer"),
    pytest.param(layers_doc(LAYERS[:1] + [5]), "layers[1]", "expected a list, got 5", id="layer-not-a-list"),
])
def test_layer_errors(doc, where, phrase):
    expect(text_of(doc), where, phrase)


def test_name_and_description_must_be_text():
    expect(text_of(network_doc(name=5)), "name", "expected a string, got 5")
    expect(text_of(network_doc(description=["x"])), "description", "expected a string")


# --- gate circuits ------------------------------------------------------------------------------

BASE_GATES = circuit_doc()["gates"]


@pytest.mark.parametrize("doc, where, phrase", [
    pytest.param(gates_with({"out": "g", "op": "nad", "in": ["a[0]", "b[0]"]}), "gates[4].op",
                 'unknown op "nad" (expected one of and, or, nand, nor, xor, xnor, not, mux)', id="unknown-op"),
    pytest.param(gates_with({"out": "g", "op": "AND", "in": ["a[0]", "b[0]"]}), "gates[4].op", "unknown op",
                 id="op-case"),
    pytest.param(gates_with({"out": "g", "op": "not", "in": ["a[0]", "b[0]"]}), "gates[4].in",
                 "'not' takes exactly 1 input, got 2", id="not-with-2"),
    pytest.param(gates_with({"out": "g", "op": "mux", "in": ["a[0]", "b[0]"]}), "gates[4].in",
                 "'mux' takes exactly 3 inputs, got 2", id="mux-with-2"),
    pytest.param(gates_with({"out": "g", "op": "mux", "in": ["a[0]", "b[0]", "b[1]", "a[1]"]}), "gates[4].in",
                 "'mux' takes exactly 3 inputs, got 4", id="mux-with-4"),
    pytest.param(gates_with({"out": "g", "op": "and", "in": ["a[0]"]}), "gates[4].in",
                 "'and' takes at least 2 inputs, got 1", id="and-with-1"),
    pytest.param(gates_with({"out": "g", "op": "xnor", "in": [1]}), "gates[4].in",
                 "'xnor' takes at least 2 inputs, got 1", id="xnor-with-1"),
    pytest.param(gates_with({"out": "g", "op": "or", "in": []}), "gates[4].in", "expected at least 1 item, got 0",
                 id="no-inputs"),
    pytest.param(gates_with({"out": "g", "op": "or", "in": ["a[0]", "c"]}), "gates[4].in[1]",
                 "undefined signal 'c'", id="undefined"),
    pytest.param(gates_with({"out": "g", "op": "or", "in": ["a[0]", "a[2]"]}), "gates[4].in[1]",
                 "bit 2 is out of range for input word 'a' of width 2", id="bit-out-of-range"),
    pytest.param(gates_with({"out": "g", "op": "or", "in": ["lo0", "c[0]"]}), "gates[4].in[1]",
                 "undefined signal 'c[0]'", id="bit-of-unknown-word"),
    pytest.param(gates_with({"out": "lo1", "op": "not", "in": ["a[0]"]}), "gates[4].out",
                 "gate output 'lo1' is already defined by gates[2]", id="duplicate-output"),
    pytest.param(gates_with({"out": "b[1]", "op": "not", "in": ["a[0]"]}), "gates[4].out",
                 "gate output 'b[1]' is an input bit", id="output-is-input-bit"),
    pytest.param(gates_with({"out": "b[5]", "op": "not", "in": ["a[0]"]}), "gates[4].out",
                 "gate output 'b[5]' shadows a bit of input word 'b'", id="output-shadows-input-word"),
    pytest.param(gates_with({"out": "g", "op": "and", "in": ["a[0]", 2]}), "gates[4].in[1]",
                 "constant 2 is not 0 or 1", id="constant-2"),
    pytest.param(gates_with({"out": "g", "op": "and", "in": [-1, "a[0]"]}), "gates[4].in[0]",
                 "constant -1 is not 0 or 1", id="constant-minus-1"),
    pytest.param(gates_with({"out": "g", "op": "and", "in": ["a[0]", True]}), "gates[4].in[1]",
                 "a signal is a signal name or the constant 0 or 1, got true", id="constant-true"),
    pytest.param(gates_with({"out": "g", "op": "and", "in": ["a[0]", ""]}), "gates[4].in[1]",
                 'a signal is a signal name or the constant 0 or 1, got ""', id="empty-signal"),
    pytest.param(gates_with({"out": "", "op": "not", "in": ["a[0]"]}), "gates[4].out", "expected a non-empty string",
                 id="empty-output"),
    pytest.param(gates_with({"out": 7, "op": "not", "in": ["a[0]"]}), "gates[4].out", "expected a string, got 7",
                 id="numeric-output"),
    pytest.param(gates_with({"out": "g", "op": "not"}), "gates[4]", "missing key 'in'", id="missing-in"),
    pytest.param(gates_with({"out": "g", "op": "not", "in": ["a[0]"], "delay": 1}), "gates[4]",
                 "unknown key 'delay' (expected in, op, out)", id="extra-key"),
    pytest.param(circuit_doc(gates={"out": "g"}), "gates", "expected a list", id="gates-not-a-list"),
])
def test_gate_errors(doc, where, phrase):
    expect(text_of(doc), where, phrase)


@pytest.mark.parametrize("raw", ["1.0", "0.0"])
def test_gate_constant_written_as_a_float_is_refused(raw):
    doc = gates_with({"out": "g", "op": "and", "in": ["a[0]", "@HOLE@"]})
    expect(with_raw(doc, raw), "gates[4].in[1]", f"a signal is a signal name or the constant 0 or 1, got {raw}")


def test_cycle_names_the_signals_on_it():
    gates = [
        {"out": "ok", "op": "not", "in": ["a[0]"]},
        {"out": "r", "op": "or", "in": ["q", "b[0]"]},
        {"out": "p", "op": "and", "in": ["a[1]", "r"]},
        {"out": "q", "op": "not", "in": ["p"]},
    ]
    doc = circuit_doc(gates=gates, outputs=[{"name": "y", "bits": ["ok", "q"]}])
    error = expect(text_of(doc), "gates[1]", "combinational cycle through signals")
    assert error.message.endswith("r -> p -> q -> r")


def test_self_loop_is_a_cycle():
    doc = circuit_doc(gates=[{"out": "s", "op": "xor", "in": ["a[0]", "s"]}], outputs=[{"name": "y", "bits": ["s"]}])
    error = expect(text_of(doc), "gates[0]", "combinational cycle")
    assert error.message.endswith("s -> s")


def test_gates_may_come_in_any_order():
    gates = [{"out": "late", "op": "not", "in": ["early"]}, {"out": "early", "op": "nand", "in": ["a[0]", 1]}]
    circuit = parse_netlist(text_of(circuit_doc(gates=gates, outputs=[{"name": "y", "bits": ["late", 0]}])))
    assert [circuit.evaluate([a, 0])[0] for a in range(4)] == [0, 1, 0, 1]


@pytest.mark.parametrize("doc, where, phrase", [
    pytest.param(circuit_doc(inputs=[{"name": "a", "width": 2}, {"name": "b", "width": 0}]), "inputs[1].width",
                 "0 is below the minimum 1", id="zero-width"),
    pytest.param(circuit_doc(inputs=[{"name": "a", "width": 2}, {"name": "b", "width": "2"}]), "inputs[1].width",
                 'expected an integer, got "2"', id="string-width"),
    pytest.param(circuit_doc(inputs=[{"name": "a", "width": 2}, {"name": "a", "width": 2}]), "inputs[1].name",
                 "duplicate input word 'a' (also inputs[0])", id="duplicate-input"),
    pytest.param(circuit_doc(inputs=[{"name": "a", "width": 2}, {"name": "1b", "width": 2}]), "inputs[1].name",
                 'name "1b" is not an identifier', id="leading-digit"),
    pytest.param(circuit_doc(inputs=[{"name": "a", "width": 2}, {"name": "b[0]", "width": 2}]), "inputs[1].name",
                 'name "b[0]" is not an identifier', id="brackets"),
    pytest.param(circuit_doc(inputs=[{"name": "a b", "width": 2}]), "inputs[0].name", "is not an identifier",
                 id="space"),
    pytest.param(circuit_doc(inputs=[{"name": "", "width": 2}]), "inputs[0].name", "is not an identifier",
                 id="empty-name"),
    pytest.param(circuit_doc(inputs=[{"name": "a"}]), "inputs[0]", "missing key 'width'", id="missing-width"),
    pytest.param(circuit_doc(inputs=[{"name": "a", "width": 2, "signed": True}]), "inputs[0]",
                 "unknown key 'signed'", id="extra-input-key"),
    pytest.param(circuit_doc(inputs=[]), "inputs", "expected at least 1 item, got 0", id="no-inputs"),
    pytest.param(circuit_doc(inputs=None), None, "missing key 'inputs'", id="inputs-missing"),
])
def test_input_word_errors(doc, where, phrase):
    expect(text_of(doc), where, phrase)


def test_width_written_as_a_float_is_refused():
    doc = circuit_doc(inputs=[{"name": "a", "width": 2}, {"name": "b", "width": "@HOLE@"}])
    expect(with_raw(doc, "2.0"), "inputs[1].width", "expected an integer, got 2.0")


OUT0 = {"name": "y0", "bits": ["lo0", "lo1"]}


@pytest.mark.parametrize("doc, where, phrase", [
    pytest.param(circuit_doc(outputs=[OUT0, {"name": "y0", "bits": ["hi0", "hi1"]}]), "outputs[1].name",
                 "duplicate output word 'y0' (also outputs[0])", id="duplicate-name"),
    pytest.param(circuit_doc(outputs=[{"name": "y", "bits": ["lo0", 1, "zz"]}]), "outputs[0].bits[2]",
                 "undefined signal 'zz'", id="undefined-bit"),
    pytest.param(circuit_doc(outputs=[OUT0, {"name": "y1", "bits": ["hi0", "b[2]"]}]), "outputs[1].bits[1]",
                 "bit 2 is out of range for input word 'b' of width 2", id="bit-out-of-range"),
    pytest.param(circuit_doc(outputs=[{"name": "y", "bits": ["lo0", 2]}]), "outputs[0].bits[1]",
                 "constant 2 is not 0 or 1", id="constant-2"),
    pytest.param(circuit_doc(outputs=[{"name": "y", "bits": [False]}]), "outputs[0].bits[0]",
                 "a signal is a signal name or the constant 0 or 1, got false", id="constant-false"),
    pytest.param(circuit_doc(outputs=[{"name": "y", "bits": []}]), "outputs[0].bits",
                 "expected at least 1 item, got 0", id="no-bits"),
    pytest.param(circuit_doc(outputs=[{"name": "0y", "bits": ["lo0"]}]), "outputs[0].name", "is not an identifier",
                 id="bad-name"),
    pytest.param(circuit_doc(outputs=[{"bits": ["lo0"]}]), "outputs[0]", "missing key 'name'", id="missing-name"),
    pytest.param(circuit_doc(outputs=[]), "outputs", "expected at least 1 item, got 0", id="no-outputs"),
])
def test_output_word_errors(doc, where, phrase):
    expect(text_of(doc), where, phrase)


def test_output_bit_written_as_a_float_is_refused():
    doc = circuit_doc(outputs=[{"name": "y", "bits": ["lo0", "@HOLE@"]}])
    expect(with_raw(doc, "0.0"), "outputs[0].bits[1]", "got 0.0")


# --- properties in the file ---------------------------------------------------------------------

# Property objects in a file are checked before the schema, so every problem is a PropertyError
# with a message that knows which property it is about.
@pytest.mark.parametrize("prop, where, phrase", [
    pytest.param({"name": "sortz"}, "property.name", 'unknown property "sortz"', id="unknown-name"),
    pytest.param({"order": "ascending"}, "property", "missing key 'name'", id="missing-name"),
    pytest.param({"name": "sorts", "oder": "descending"}, "property", "unknown key 'oder' for sorts (expected order, "
                 "signed)", id="unknown-key"),
    pytest.param({"name": "median", "split": 1}, "property", "unknown key 'split' for median (expected signed)",
                 id="key-of-another-property"),
    pytest.param({"name": "merges", "split": "2"}, "property.split", 'split must be an integer, got "2"',
                 id="split-string"),
    pytest.param({"name": "merges", "split": True}, "property.split", "split must be an integer, got true",
                 id="split-true"),
    pytest.param({"name": "sorts", "signed": "yes"}, "property.signed", 'signed must be true or false, got "yes"',
                 id="signed-string"),
    pytest.param({"name": "selects", "count": 2, "sorted": 1}, "property.sorted", "sorted must be true or false, "
                 "got 1", id="sorted-number"),
    pytest.param({"name": "sorts", "order": "up"}, "property.order", 'order must be "ascending" or "descending"',
                 id="order"),
    pytest.param({"name": "merges", "split": 0}, "property.split", "split must be at least 1, got 0", id="split-0"),
    pytest.param({"name": "selects", "count": -3}, "property.count", "count must be at least 1, got -3",
                 id="count-negative"),
    pytest.param({"name": "merges"}, "property", "missing key 'split'", id="split-missing"),
    pytest.param({"name": "partial-sort", "stable": True}, "property", "missing key 'key_bits'",
                 id="key-bits-missing"),
    pytest.param("sorts", "property", 'a property must be an object, got "sorts"', id="short-form-in-file"),
])
def test_property_errors_in_the_file(prop, where, phrase):
    expect(text_of(network_doc(property=prop)), where, phrase, PropertyError)


def test_property_errors_in_a_gate_circuit_file():
    expect(text_of(circuit_doc(property={"name": "partial-sort", "key_bits": 0})), "property.key_bits",
           "key_bits must be at least 1, got 0", PropertyError)


def test_property_number_written_as_a_float_is_refused():
    expect(with_raw(network_doc(property={"name": "merges", "split": "@HOLE@"}), "2.0"), "property.split",
           "split must be an integer, got 2.0", PropertyError)


# --- the fast bulk predicates are exactly the schema's item rules -------------------------------

SCHEMA = netlist_schema()

#: Where each bulk array's item rule sits in the shipped schema.
ITEM_POINTERS = {
    "comparators": "#/$defs/comparatorNetwork/properties/comparators/items",
    "layers": "#/$defs/comparatorNetwork/properties/layers/items",
    "gates": "#/$defs/gateCircuit/properties/gates/items",
}


def _item_validator(key: str):
    wrapper = {"$defs": SCHEMA["$defs"], "$ref": ITEM_POINTERS[key]}
    validator_class = jsonschema.validators.validator_for(SCHEMA)
    validator_class.check_schema(wrapper)
    return validator_class(wrapper)


VALIDATORS = {key: _item_validator(key) for key in ITEM_POINTERS}


def test_every_bulk_rule_has_a_schema_counterpart():
    assert set(BULK_ITEM_RULES) == set(ITEM_POINTERS)
    # The pointers lead to the $defs the format names: a comparator, a layer of comparators, a gate.
    network_keys = SCHEMA["$defs"]["comparatorNetwork"]["properties"]
    assert network_keys["comparators"]["items"] == {"$ref": "#/$defs/comparator"}
    assert network_keys["layers"]["items"]["items"] == {"$ref": "#/$defs/comparator"}
    assert SCHEMA["$defs"]["gateCircuit"]["properties"]["gates"]["items"] == {"$ref": "#/$defs/gate"}


# Everything the decoder can hand to the schema check: JSON values, where numbers are integers
# (maybe huge) and numbers with a fraction or exponent arrive as NotAnInteger.
OPS = ["and", "or", "nand", "nor", "xor", "xnor", "not", "mux"]
GATE_KEYS = ["out", "op", "in"]
SCALARS = st.one_of(
    st.integers(-3, 3), st.integers(), st.booleans(), st.none(),
    st.sampled_from(["", "a", "x0[1]", "not", "mux", "AND", "in", "0"]), st.text(max_size=4),
    st.builds(NotAnInteger, st.sampled_from(["0.0", "1.0", "2.5", "1e3", "-0.0"])),
    st.builds(TooLargeInteger, st.sampled_from(["9" * 19, "-" + "9" * 30])),
)
VALUES = st.recursive(
    SCALARS,
    lambda inner: st.lists(inner, max_size=4)
    | st.dictionaries(st.sampled_from(GATE_KEYS) | st.text(max_size=3), inner, max_size=4),
    max_leaves=10,
)
CHANNELS = st.one_of(st.integers(-2, 40), st.integers(), st.booleans(), SCALARS)
COMPARATOR_LIKE = st.one_of(st.lists(CHANNELS, max_size=3), st.lists(st.integers(-1, 9), min_size=2, max_size=2),
                            VALUES)
LAYER_LIKE = st.one_of(st.lists(COMPARATOR_LIKE, max_size=4),
                       st.lists(st.lists(st.integers(0, 9), min_size=2, max_size=2), max_size=4), VALUES)
SIGNAL_LIKE = st.one_of(st.integers(-1, 2), st.booleans(), st.sampled_from(["", "s", "a[0]", "0"]), SCALARS)


@st.composite
def gate_like(draw):
    """A valid gate, then zero to two mutations of its keys, values or input signals."""
    gate = {
        "out": draw(st.sampled_from(["g", "x0[1]", "0"])),
        "op": draw(st.sampled_from(OPS)),
        "in": draw(st.lists(st.sampled_from(["s", "a[0]", 0, 1]), min_size=1, max_size=4)),
    }
    for _ in range(draw(st.integers(0, 2))):
        mutation = draw(st.sampled_from(["out", "op", "in", "signal", "drop", "extra"]))
        if mutation == "out":
            gate["out"] = draw(st.one_of(st.just(""), SCALARS, VALUES))
        elif mutation == "op":
            gate["op"] = draw(st.one_of(st.sampled_from(["", "AND", "buf", "in"]), SCALARS, VALUES))
        elif mutation == "in":
            gate["in"] = draw(st.one_of(st.lists(SIGNAL_LIKE, max_size=4), VALUES))
        elif mutation == "signal" and type(gate.get("in")) is list and gate["in"]:
            gate["in"][draw(st.integers(0, len(gate["in"]) - 1))] = draw(SIGNAL_LIKE)
        elif mutation == "drop" and gate:
            del gate[draw(st.sampled_from(sorted(gate)))]
        elif mutation == "extra":
            gate[draw(st.sampled_from(GATE_KEYS) | st.text(max_size=3))] = draw(VALUES)
    return gate


GATE_LIKE = st.one_of(gate_like(), VALUES)

EQUIVALENCE = settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])


def _agree(key: str, item) -> None:
    fast = BULK_ITEM_RULES[key](item)
    assert isinstance(fast, bool)
    assert fast == VALIDATORS[key].is_valid(item), f"{key}: rule says {fast} for {item!r}"


@EQUIVALENCE
@given(COMPARATOR_LIKE)
@example([0, 1])
@example([5, 0])
@example([0, True])
@example([0, -1])
@example([0, 10**30])
@example([0, NotAnInteger("1.0")])
def test_comparator_rule_matches_schema(item):
    _agree("comparators", item)


@EQUIVALENCE
@given(LAYER_LIKE)
@example([])
@example([[0, 1], [2, 3]])
@example([[0, 1], [2]])
@example([[0, 1], [False, 3]])
def test_layer_rule_matches_schema(item):
    _agree("layers", item)


@EQUIVALENCE
@given(GATE_LIKE)
@example({"out": "g", "op": "mux", "in": ["s", 0, 1]})
@example({"out": "g", "op": "and", "in": ["s"]})  # arity is the loader's business, not the schema's
@example({"out": "g", "op": "and", "in": []})
@example({"out": "g", "op": "and", "in": ["s", True]})
@example({"out": "g", "op": "and", "in": ["s", 2]})
@example({"out": "g", "op": "and", "in": ["s", ""]})
@example({"out": "", "op": "and", "in": ["s", 1]})
@example({"out": "g", "op": "and", "in": ["s", 1], "x": 1})
@example({"out": "g", "op": "and"})
@example({"out": "g", "op": ["and"], "in": ["s", 1]})
@example({"out": "g", "op": "and", "in": ["s", NotAnInteger("1.0")]})
def test_gate_rule_matches_schema(item):
    _agree("gates", item)


@pytest.mark.parametrize("key, item, valid", [
    ("comparators", [3, 0], True),
    ("comparators", [0, True], False),
    ("comparators", [0, -1], False),
    ("comparators", [0, 1, 2], False),
    ("layers", [], True),
    ("layers", [[0, 1], [1]], False),
    ("gates", {"out": "g", "op": "xnor", "in": ["s", 0]}, True),
    ("gates", {"out": "g", "op": "xnor", "in": ["s", False]}, False),
    ("gates", {"out": "g", "op": "xnor", "in": ["s", 0], "in2": []}, False),
])
def test_rule_and_schema_agree_with_the_format_description(key, item, valid):
    assert BULK_ITEM_RULES[key](item) is valid
    assert VALIDATORS[key].is_valid(item) is valid


def _big_comparator_text(count: int, bad_index: int, bad_raw: str) -> str:
    pairs = [f"[{i % 15}, {i % 15 + 1}]" for i in range(count)]
    pairs[bad_index] = bad_raw
    return ('{"sortcheck": 1, "kind": "comparator-network", "channels": 16, "comparators": ['
            + ", ".join(pairs) + "]}")


@pytest.mark.parametrize("bad_raw, where, phrase", [
    pytest.param("[0, 16]", "comparators[5000]", "channel 16 is out of range for 16 channels", id="out-of-range"),
    pytest.param("[4, 4]", "comparators[5000]", "joins channel 4 to itself", id="self"),
    pytest.param("[-1, 3]", "comparators[5000][0]", "channel -1 is negative", id="negative"),
    pytest.param("[1]", "comparators[5000]", "a comparator is a pair of channels", id="not-a-pair"),
    pytest.param("[1, 2.0]", "comparators[5000][1]", "expected an integer, got 2.0", id="float"),
])
def test_one_bad_comparator_in_a_large_network_is_found(bad_raw, where, phrase):
    expect(_big_comparator_text(8000, 5000, bad_raw), where, phrase)


def test_one_bad_gate_in_a_large_circuit_is_found():
    gates = [{"out": f"g{i}", "op": "xor", "in": ["a[0]", f"g{i - 1}" if i else "a[1]"]} for i in range(6000)]
    gates[5000] = {"out": "g5000", "op": "xor", "in": ["a[0]", True]}
    doc = {"sortcheck": 1, "kind": "gate-circuit", "inputs": [{"name": "a", "width": 2}], "gates": gates,
           "outputs": [{"name": "y", "bits": ["g5999"]}]}
    expect(text_of(doc), "gates[5000].in[1]", "a signal is a signal name or the constant 0 or 1, got true")


def test_one_bad_layer_in_a_large_network_is_found():
    layers = [[[0, 1], [2, 3]] for _ in range(6000)]
    layers[5000] = [[0, 1], [2, -3]]
    expect(text_of(network_doc(comparators=None, layers=layers)), "layers[5000][1][1]", "channel -3 is negative")


# --- unknown top-level keys ---------------------------------------------------------------------

def test_a_misspelt_top_level_key_is_refused_with_a_suggestion():
    # A misspelt "property" must not silently fall back to checking the default property.
    expect(text_of(network_doc(propery={"name": "median"})), None, "unknown key 'propery' for a comparator-network "
           "(did you mean 'property'?)")


def test_keys_of_the_other_kind_are_refused():
    expect(text_of(circuit_doc(channels=4)), None, "unknown key 'channels' for a gate-circuit")
