"""Properties: the short forms, their JSON objects, their errors, and whether they fit a netlist."""

from __future__ import annotations

import json

import pytest

from sortcheck.errors import PropertyError
from sortcheck.load import parse_netlist, parse_property
from sortcheck.model import (
    ComparatorNetwork, Median, Merges, PartialSort, Selects, Sorts, check_fits, property_from_json,
)

from conftest import assert_error

# --- parse_property: every short form -----------------------------------------------------------

SHORT_FORMS = [
    ("sorts", {"name": "sorts", "order": "ascending", "signed": False}),
    ("sorts:asc", {"name": "sorts", "order": "ascending", "signed": False}),
    ("sorts:desc", {"name": "sorts", "order": "descending", "signed": False}),
    ("sorts:signed", {"name": "sorts", "order": "ascending", "signed": True}),
    ("sorts:desc:signed", {"name": "sorts", "order": "descending", "signed": True}),
    ("merges:4", {"name": "merges", "split": 4}),
    ("merges:1:signed", {"name": "merges", "split": 1, "signed": True}),
    ("selects:3", {"name": "selects", "count": 3, "sorted": False}),
    ("selects:3:sorted", {"name": "selects", "count": 3, "sorted": True}),
    ("selects:2:sorted:signed", {"name": "selects", "count": 2, "sorted": True, "signed": True}),
    ("median", {"name": "median"}),
    ("median:signed", {"name": "median", "signed": True}),
    ("partial-sort:2", {"name": "partial-sort", "key_bits": 2, "stable": False}),
    ("partial-sort:2:stable", {"name": "partial-sort", "key_bits": 2, "stable": True}),
    ("partial-sort:5:stable:signed", {"name": "partial-sort", "key_bits": 5, "stable": True, "signed": True}),
    ("  sorts:desc \n", {"name": "sorts", "order": "descending", "signed": False}),
]


@pytest.mark.parametrize("text, expected", SHORT_FORMS, ids=[text.strip() for text, _ in SHORT_FORMS])
def test_short_form(text, expected):
    prop = parse_property(text)
    assert prop.to_json() == expected
    assert list(prop.to_json()) == list(expected)  # keys in the documented order too
    assert parse_property(prop.short()) == prop
    assert property_from_json(expected) == prop
    assert parse_property(json.dumps(expected)) == prop


@pytest.mark.parametrize("data, expected", [
    ({"name": "sorts"}, Sorts()),
    ({"name": "sorts", "order": "descending", "signed": True}, Sorts(signed=True, order="descending")),
    ({"name": "merges", "split": 3, "signed": False}, Merges(split=3)),
    ({"name": "selects", "count": 2}, Selects(count=2)),
    ({"name": "median", "signed": True}, Median(signed=True)),
    ({"name": "partial-sort", "key_bits": 1, "stable": True}, PartialSort(key_bits=1, stable=True)),
])
def test_json_objects_fill_in_the_defaults(data, expected):
    assert parse_property(json.dumps(data)) == expected
    assert property_from_json(data) == expected


def test_signed_is_written_only_when_true_except_for_sorts():
    assert "signed" not in Merges(split=2).to_json()
    assert "signed" not in Selects(count=1).to_json()
    assert "signed" not in Median().to_json()
    assert "signed" not in PartialSort(key_bits=1).to_json()
    assert Sorts().to_json()["signed"] is False


@pytest.mark.parametrize("text, where, phrase", [
    pytest.param("sortz", None, "unknown property 'sortz' (expected one of sorts, merges, selects, median, "
                 "partial-sort)", id="unknown-name"),
    pytest.param("", None, "unknown property ''", id="empty"),
    pytest.param("Sorts", None, "unknown property 'Sorts'", id="case"),
    pytest.param("merges", None, "'merges' needs a split position, as in merges:4", id="merges-without-split"),
    pytest.param("merges:", None, "'merges' needs a split", id="merges-empty-split"),
    pytest.param("merges:x", None, "'merges' needs a split", id="merges-word"),
    pytest.param("merges:-2", None, "'merges' needs a split", id="merges-negative"),
    pytest.param("merges:\u00b2", None, "'merges' needs a split", id="superscript-digit"),
    pytest.param("merges:\u0663", None, "'merges' needs a split", id="arabic-indic-digit"),
    pytest.param("merges:" + "9" * 5000, None, "split of 5000 digits is too large", id="huge-split"),
    pytest.param("selects", None, "'selects' needs a count, as in selects:4", id="selects-without-count"),
    pytest.param("selects:sorted", None, "'selects' needs a count", id="selects-flag-first"),
    pytest.param("partial-sort", None, "'partial-sort' needs a number of key bits", id="partial-sort-without-key-bits"),
    pytest.param("merges:0", "split", "split must be at least 1, got 0", id="split-0"),
    pytest.param("selects:0", "count", "count must be at least 1, got 0", id="count-0"),
    pytest.param("sorts:sorted", None, "unknown option 'sorted' in 'sorts:sorted' (allowed for sorts: asc, desc, "
                 "signed)", id="sorts-sorted"),
    pytest.param("sorts:", None, "unknown option ''", id="sorts-empty-flag"),
    pytest.param("median:3", None, "unknown option '3'", id="median-number"),
    pytest.param("median:stable", None, "unknown option 'stable'", id="median-stable"),
    pytest.param("merges:4:desc", None, "unknown option 'desc' in 'merges:4:desc' (allowed for merges: signed)",
                 id="merges-desc"),
    pytest.param("selects:2:stable", None, "allowed for selects: signed, sorted", id="selects-stable"),
    pytest.param("{bad", "line 1, column 2", "not JSON", id="bad-json"),
    pytest.param('{"name": "sorts",}', "line 1, column 18", "not JSON", id="trailing-comma"),
    pytest.param("{" + '"a": {' * 100_000, None, "nesting too deep", id="deep-json"),
    pytest.param('{"name": "merges", "split": 2, "split": 3}', None, "duplicate key 'split'", id="duplicate-key"),
    pytest.param('{"name": "merges", "split": NaN}', None, "NaN is not a JSON number", id="nan"),
    pytest.param('{"name": "median", "count": 1}', None, "unknown key 'count' for median", id="json-unknown-key"),
    pytest.param('{"name": "sorts", "order": "up"}', "order", 'order must be "ascending" or "descending", got "up"',
                 id="json-order"),
    pytest.param('{"name": "merges", "split": "4"}', "split", 'split must be an integer, got "4"',
                 id="json-split-string"),
    pytest.param('{"name": "merges", "split": 4.0}', "split", "split must be an integer, got 4.0",
                 id="json-split-float"),
    pytest.param('{"name": "selects", "count": 2, "sorted": "yes"}', "sorted", 'sorted must be true or false',
                 id="json-sorted-string"),
    pytest.param('{"name": "selects", "count": true}', "count", "count must be an integer, got true",
                 id="json-count-true"),
    pytest.param('{"name": 5}', "name", "unknown property 5", id="json-name-number"),
    pytest.param('{"split": 5}', None, "missing key 'name'", id="json-missing-name"),
])
def test_parse_property_errors(text, where, phrase):
    assert_error(lambda: parse_property(text), PropertyError, "--property", where, phrase)


def test_parse_property_names_its_source():
    assert_error(lambda: parse_property("merges", source="sortcheck.toml"), PropertyError, "sortcheck.toml", None,
                 "needs a split")


def test_property_from_json_requires_an_object():
    assert_error(lambda: property_from_json(["sorts"], "net.json"), PropertyError, "net.json", "property",
                 'a property must be an object, got ["sorts"]')


# --- check_fits on comparator networks ----------------------------------------------------------

def network(channels: int) -> ComparatorNetwork:
    return ComparatorNetwork(channels, tuple((i, i + 1) for i in range(channels - 1)))


def misfit(prop, netlist, expected_where, phrase, source="net.json", **kwargs):
    return assert_error(lambda: check_fits(prop, netlist, source, **kwargs), PropertyError, source, expected_where,
                        phrase)


@pytest.mark.parametrize("channels", [2, 4, 8])
def test_median_needs_an_odd_channel_count(channels):
    misfit(Median(), network(channels), "property",
           f"median needs an odd number of values, got {channels} channels")


@pytest.mark.parametrize("channels", [1, 3, 9])
def test_median_fits_an_odd_channel_count(channels):
    check_fits(Median(), network(channels), "net.json")


def test_split_zero_is_a_shape_error_split_n_a_fit_error():
    assert_error(lambda: property_from_json({"name": "merges", "split": 0}, "net.json"), PropertyError, "net.json",
                 "property.split", "split must be at least 1, got 0")
    assert_error(lambda: parse_property("merges:0"), PropertyError, "--property", "split", "at least 1")
    misfit(Merges(split=4), network(4), "property.split", "split 4 must lie inside 1..3 for 4 channels")
    misfit(Merges(split=9), network(4), "property.split", "split 9 must lie inside 1..3")
    for split in (1, 2, 3):
        check_fits(Merges(split=split), network(4), "net.json")


def test_merges_cannot_fit_one_channel():
    misfit(Merges(split=1), network(1), "property.split", "split 1 must lie inside 1..0 for 1 channels")


def test_selects_count_larger_than_channels():
    misfit(Selects(count=5), network(4), "property.count", "count 5 exceeds the 4 channels")
    check_fits(Selects(count=4, sorted=True), network(4), "net.json")
    check_fits(Selects(count=1), network(4), "net.json")


def test_partial_sort_is_for_gate_circuits_only():
    misfit(PartialSort(key_bits=1), network(4), "property", "partial-sort applies to gate circuits only")


def test_fit_errors_on_the_command_line_are_placed_without_property_prefix():
    misfit(Merges(split=4), network(4), "split", "split 4 must lie inside", source="--property", where=None)
    misfit(Median(), network(4), None, "median needs an odd number", source="--property", where=None)


@pytest.mark.parametrize("prop", [Sorts(), Sorts(order="descending", signed=True)])
def test_sorts_fits_any_network(prop):
    for channels in (1, 2, 7):
        check_fits(prop, network(channels), "net.json")


# --- check_fits on gate circuits ----------------------------------------------------------------

def circuit(widths, outputs):
    """A gate-less circuit read from JSON: input words x0.. of the given widths; output words that copy
    input bits, one per entry of ``outputs`` (its width)."""
    doc = {
        "sortcheck": 1, "kind": "gate-circuit",
        "inputs": [{"name": f"x{i}", "width": w} for i, w in enumerate(widths)],
        "gates": [],
        "outputs": [{"name": f"y{j}", "bits": [f"x0[{b % widths[0]}]" for b in range(width)]}
                    for j, width in enumerate(outputs)],
    }
    return parse_netlist(json.dumps(doc), "circuit.json")


def test_sorts_with_fewer_output_words():
    misfit(Sorts(), circuit([2, 2, 2], [2, 2]), "outputs", "sorts needs 3 output words for 3 input words, got 2")
    misfit(Sorts(), circuit([2, 2], [2, 2, 2]), "outputs", "sorts needs 2 output words for 2 input words, got 3")
    check_fits(Sorts(), circuit([2, 2, 2], [2, 2, 2]), "net.json")


def test_output_width_differing_from_inputs():
    misfit(Sorts(), circuit([2, 2], [2, 3]), "outputs[1].bits", "output 'y1' has 3 bits but the input words have 2")
    misfit(Merges(split=1), circuit([3, 3], [1, 3]), "outputs[0].bits", "output 'y0' has 1 bits")


def test_median_output_words():
    misfit(Median(), circuit([2, 2, 2], [2, 2]), "outputs", "median needs 1 or 3 output words for 3 input words, got 2")
    check_fits(Median(), circuit([2, 2, 2], [2]), "net.json")
    check_fits(Median(), circuit([2, 2, 2], [2, 2, 2]), "net.json")
    misfit(Median(), circuit([2, 2], [2]), "property", "median needs an odd number of values, got 2 input words")


def test_selects_output_words():
    misfit(Selects(count=2), circuit([2, 2, 2], [2]), "outputs", "selects needs 2 or 3 output words")
    misfit(Selects(count=1), circuit([2] * 5, [2] * 6), "outputs", "selects needs 1 to 5 output words")
    misfit(Selects(count=4), circuit([2, 2, 2], [2, 2, 2]), "property.count", "count 4 exceeds the 3 input words")
    check_fits(Selects(count=2), circuit([2, 2, 2], [2, 2]), "net.json")


def test_key_bits_larger_than_the_word_width():
    misfit(PartialSort(key_bits=3), circuit([2, 2], [2, 2]), "property.key_bits", "key_bits 3 exceeds the word width 2")
    check_fits(PartialSort(key_bits=2, stable=True), circuit([2, 2], [2, 2]), "net.json")


def test_input_words_of_different_widths():
    misfit(Sorts(), circuit([2, 3, 2], [2, 2, 2]), "inputs[1].width",
           "sorts compares words of one width, but input 'x1' has width 3 and 'x0' has 2")


def test_merges_split_on_input_words():
    misfit(Merges(split=2), circuit([1, 1], [1, 1]), "property.split", "split 2 must lie inside 1..1 for 2 input words")
    check_fits(Merges(split=1), circuit([1, 1], [1, 1]), "net.json")


def test_claim_in_a_file_is_checked_by_check_fits():
    doc = {"sortcheck": 1, "kind": "comparator-network", "channels": 4, "comparators": [[0, 1]],
           "property": {"name": "median"}}
    net = parse_netlist(json.dumps(doc), "net.json")
    misfit(net.claim, net, "property", "median needs an odd number of values, got 4 channels")
