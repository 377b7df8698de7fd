"""Pins the documented encodings to their golden files (see encodings/)."""

from __future__ import annotations

import itertools
import json
from pathlib import Path

import numpy as np

from sortcheck.engines.bitslice import AllVectors, MergeInputs, apply_network, failure_mask
from sortcheck.load import parse_property
from sortcheck.model import ComparatorNetwork, Merges
from reference import breaks, run

ENCODINGS = Path(__file__).resolve().parent.parent / "encodings"


def failing_inputs(network, prop):
    source = MergeInputs(network.channels, prop.split) if isinstance(prop, Merges) else AllVectors(network.channels)
    rows = [np.empty(source.words, dtype=np.uint64) for _ in range(network.channels)]
    block = source.fill(0, rows)
    apply_network(rows, network.comparators, np.empty(source.words, dtype=np.uint64))
    bits = np.unpackbits(failure_mask(prop, rows).view(np.uint8), bitorder="little")
    return ["".join(map(str, source.vector(i))) for i in range(block.vectors) if bits[i]]


def test_zero_one_conditions_match_their_golden_file():
    golden = json.loads((ENCODINGS / "zero-one-conditions.golden.json").read_text())
    network = ComparatorNetwork(golden["channels"], tuple(map(tuple, golden["comparators"])))
    assert any(a > b for a, b in network.comparators), "the golden network should exercise reversed comparators"
    for short, expected in golden["failing_inputs"].items():
        prop = parse_property(short)
        assert failing_inputs(network, prop) == expected, short
        # Independent derivation: the property's definition with sorted, over every 0-1 input.
        derived = ["".join(map(str, v)) for v in itertools.product((0, 1), repeat=network.channels)
                   if breaks(prop, list(v), run(network.comparators, v))]
        assert sorted(derived) == sorted(expected), short
