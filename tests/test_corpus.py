"""Tests of the reference corpus: listed verdicts, completeness, regeneration, counterexamples.

Besides asking sortcheck for each file's verdict, the claims of the corpus
networks are decided here by an evaluator of this file (a comparator puts the
smaller value on the first channel of its pair) on every relevant 0-1 input,
and each counterexample sortcheck reports is replayed with it.
"""

from __future__ import annotations

import importlib.util
import json
from itertools import product
from pathlib import Path

import pytest

from sortcheck.load import dump_netlist
from sortcheck.report import check_file

ROOT = Path(__file__).resolve().parent.parent
CORPUS = ROOT / "corpus"
EXPECTED = {path: verdict for verdict, path in (line.split() for line in
            (CORPUS / "expected-verdicts.txt").read_text(encoding="utf-8").splitlines()
            if line.strip() and not line.startswith("#"))}


def load_make_corpus():
    spec = importlib.util.spec_from_file_location("make_corpus", CORPUS / "make_corpus.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def raw(relative: str) -> dict:
    return json.loads((CORPUS / relative).read_text(encoding="utf-8"))


def comparators_of(doc: dict) -> list[tuple[int, int]]:
    pairs = doc["comparators"] if "comparators" in doc else [pair for layer in doc["layers"] for pair in layer]
    return [(a, b) for a, b in pairs]


def evaluate(comparators, values) -> list[int]:
    """Apply each comparator (a, b): the minimum goes to channel a, the maximum to channel b."""
    wires = list(values)
    for a, b in comparators:
        low, high = min(wires[a], wires[b]), max(wires[a], wires[b])
        wires[a], wires[b] = low, high
    return wires


def claim_of(doc: dict) -> dict:
    return doc.get("property", {"name": "sorts", "order": "ascending"})


def relevant(prop: dict, values) -> bool:
    """Merge properties speak only about inputs whose two runs are each ascending."""
    if prop["name"] != "merges":
        return True
    split = prop["split"]
    first, second = list(values[:split]), list(values[split:])
    return first == sorted(first) and second == sorted(second)


def breaks(prop: dict, values, outputs) -> bool:
    """Whether ``outputs`` for the input ``values`` break the property, judged with ``sorted``."""
    name = prop["name"]
    if name in ("sorts", "merges"):
        return list(outputs) != sorted(values, reverse=prop.get("order") == "descending")
    if name == "selects":
        count = prop["count"]
        head = list(outputs[:count])
        smallest = sorted(values)[:count]
        return head != smallest if prop.get("sorted") else sorted(head) != smallest
    if name == "median":
        middle = (len(values) - 1) // 2
        return outputs[middle] != sorted(values)[middle]
    raise AssertionError(f"unexpected property {prop}")


def channel_mask(i: int, channels: int) -> int:
    """The integer whose bit ``x`` is bit ``i`` of ``x``, for x below 2^channels (built byte-wise, in linear time)."""
    total = 1 << channels
    if total < 8:
        return sum(((x >> i) & 1) << x for x in range(total))
    if i < 3:
        period = bytes([sum(((x >> i) & 1) << x for x in range(8))])
    else:
        half = (1 << i) // 8
        period = b"\x00" * half + b"\xff" * half
    return int.from_bytes(period * (total // 8 // len(period)), "little")


def first_unsorted_zero_one_input(channels: int, comparators):
    """The first 0-1 input (by index) left unsorted, or None; all 2^n inputs at once.

    Wire ``i`` is an integer whose bit ``x`` is bit ``i`` of input ``x``; on 0-1
    values the minimum is AND and the maximum OR.  Input ``x`` is unsorted when
    some channel holds a 1 at bit ``x`` where the next channel holds a 0.
    """
    wires = [channel_mask(i, channels) for i in range(channels)]
    for a, b in comparators:
        wires[a], wires[b] = wires[a] & wires[b], wires[a] | wires[b]
    failures = 0
    for i in range(channels - 1):
        failures |= wires[i] & ~wires[i + 1]
    if failures == 0:
        return None
    index = (failures & -failures).bit_length() - 1
    return tuple((index >> i) & 1 for i in range(channels))


def first_breaking_input(doc: dict):
    """A 0-1 input the network gets wrong for its claim, or None when every 0-1 input is right."""
    channels, comparators, prop = doc["channels"], comparators_of(doc), claim_of(doc)
    if prop["name"] == "sorts" and prop.get("order", "ascending") == "ascending":
        return first_unsorted_zero_one_input(channels, comparators)
    for values in product((0, 1), repeat=channels):
        if relevant(prop, values) and breaks(prop, values, evaluate(comparators, values)):
            return values
    return None


NETWORKS = [path for path in EXPECTED if raw(path)["kind"] == "comparator-network"]


# --- the listed verdicts ----------------------------------------------------------------

@pytest.mark.parametrize("relative", list(EXPECTED))
def test_each_file_gets_its_listed_verdict(relative):
    result = check_file(str(CORPUS / relative))
    assert result.error is None, str(result.error)
    assert result.status == EXPECTED[relative]
    doc = raw(relative)
    claimed = doc.get("property", {"name": "sorts", "order": "ascending", "signed": False})
    assert {key: value for key, value in result.prop.to_json().items() if key != "signed" or value} == \
        {key: value for key, value in claimed.items() if key != "signed" or value}


@pytest.mark.parametrize("relative", NETWORKS)
def test_listed_verdict_agrees_with_the_independent_evaluator(relative):
    found = first_breaking_input(raw(relative))
    expected = EXPECTED[relative]
    assert expected in ("proved", "refuted")
    assert (found is None) == (expected == "proved"), found


@pytest.mark.parametrize("relative", [path for path in NETWORKS if EXPECTED[path] == "refuted"])
def test_counterexample_replays_and_breaks_the_claim(relative):
    result = check_file(str(CORPUS / relative))
    assert result.status == "refuted"
    entry = result.to_json()
    example = entry["counterexample"]
    doc = raw(relative)
    prop = claim_of(doc)
    assert len(example["input"]) == doc["channels"]
    assert set(example["input"]) <= {0, 1}
    assert example["output"] == evaluate(comparators_of(doc), example["input"])
    assert relevant(prop, example["input"])
    assert breaks(prop, example["input"], example["output"])


def test_broken_files_claim_what_their_originals_claim():
    for relative in EXPECTED:
        if relative.startswith("broken/"):
            assert "property" in raw(relative), relative


def test_evaluator_can_tell_right_from_wrong():
    # The helpers above must be able to fail: a 3-channel network missing its last comparator.
    broken = {"channels": 3, "comparators": [[0, 1], [1, 2]]}
    whole = {"channels": 3, "comparators": [[0, 1], [1, 2], [0, 1]]}
    found = first_breaking_input(broken)
    assert found is not None and evaluate([(0, 1), (1, 2)], found) != sorted(found)
    assert first_breaking_input(whole) is None
    for channels in (1, 2, 3, 4, 9):
        for i in range(channels):
            assert channel_mask(i, channels) == sum(((x >> i) & 1) << x for x in range(1 << channels))
    # Input 3 is (1, 1, 0) by channel; (0, 1), (1, 2) leave it as (1, 0, 1).
    assert first_unsorted_zero_one_input(3, [(0, 1), (1, 2)]) == (1, 1, 0)
    assert first_unsorted_zero_one_input(3, [(0, 1), (1, 2), (0, 1)]) is None
    assert first_breaking_input({"channels": 8, "property": {"name": "merges", "split": 4},
                                 "comparators": [[0, 4], [1, 5], [2, 6], [3, 7]]}) is not None
    assert breaks({"name": "selects", "count": 2, "sorted": True}, [2, 1, 3], [2, 1, 3])
    assert not breaks({"name": "selects", "count": 2}, [2, 1, 3], [2, 1, 3])
    assert breaks({"name": "median"}, [0, 1, 1], [1, 0, 1])
    assert not breaks({"name": "median"}, [0, 1, 1], [1, 1, 0])


# --- the listing is complete ------------------------------------------------------------

def test_every_corpus_file_is_listed_and_every_listed_file_exists():
    on_disk = {path.relative_to(CORPUS).as_posix() for path in CORPUS.rglob("*.json")}
    assert on_disk == set(EXPECTED)


def test_listed_verdicts_are_verdicts():
    assert set(EXPECTED.values()) <= {"proved", "refuted", "unknown"}


# --- regeneration -------------------------------------------------------------------------

def test_make_corpus_regenerates_exactly_the_committed_files():
    generated = load_make_corpus().corpus()
    assert set(generated) == set(EXPECTED)
    for relative, netlist in generated.items():
        assert dump_netlist(netlist) == (CORPUS / relative).read_text(encoding="utf-8"), relative
