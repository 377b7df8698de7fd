"""The build (gate circuits), draw, repair and stats --redundant commands through ``main``."""

from __future__ import annotations

import itertools
import json
import xml.etree.ElementTree as ElementTree
from pathlib import Path

from sortcheck.load import parse_netlist, read_netlist
from reference import run as evaluate
from cli_runner import run

CORPUS = Path(__file__).resolve().parent.parent / "corpus"
BROKEN = CORPUS / "broken" / "merge-exchange-16-missing-comparator.json"


def test_build_lowers_a_family_to_a_gate_circuit_that_sorts_every_input():
    status, out, _ = run("build", "odd-even-transposition", "3", "--width", "2", "--style", "mux")
    assert status == 0
    circuit = parse_netlist(out)
    assert (circuit.words, circuit.width) == (3, 2)
    for values in itertools.product(range(4), repeat=3):
        assert circuit.evaluate(list(values)) == sorted(values)


def test_build_counting_needs_a_width_and_writes_a_file(tmp_path):
    assert run("build", "counting", "4")[0] == 2
    target = tmp_path / "counting.json"
    status, _, err = run("build", "counting", "4", "--width", "2", "--output", target)
    assert status == 0 and "counting-4-w2" in err
    circuit = read_netlist(target)
    for values in itertools.product(range(4), repeat=4):
        assert circuit.evaluate(list(values)) == sorted(values)


def test_stats_redundant_finds_the_comparators_that_never_swap(tmp_path):
    # The same comparator twice in a row: the second can never swap; nor can [0, 1] after a full sorter.
    network = {"sortcheck": 1, "kind": "comparator-network", "channels": 3,
               "comparators": [[0, 1], [0, 1], [1, 2], [0, 1], [0, 2]]}
    path = tmp_path / "net.json"
    path.write_text(json.dumps(network))
    status, out, _ = run("stats", path, "--redundant", "--format", "json")
    assert status == 0
    stats = json.loads(out)["results"][0]["stats"]
    assert stats["redundant"] == [1, 4] and stats["pruned_size"] == 3


def test_repair_writes_a_verified_fix(tmp_path):
    fixed = tmp_path / "fixed.json"
    status, out, _ = run("repair", BROKEN, "--output", fixed, "--format", "json")
    assert status == 0
    repair = json.loads(out)["results"][0]["repair"]
    assert repair["verified"] is True and len(repair["changes"]) == 1
    network = read_netlist(fixed)
    for vector in itertools.product((0, 1), repeat=network.channels):
        assert evaluate(network.comparators, vector) == sorted(vector)


def test_repair_of_a_correct_network_or_circuit_exits_0_and_a_flipped_gate_is_repaired():
    assert run("repair", CORPUS / "merge-exchange-16.json")[0] == 0
    status, out, _ = run("repair", CORPUS / "compare-and-swap-2x2.json")
    assert status == 0 and "already meets" in out
    status, out, _ = run("repair", CORPUS / "broken" / "compare-and-swap-2x2-flipped-gate.json", "--format", "json")
    repair = json.loads(out)["results"][0]["repair"]
    assert status == 0 and repair["verified"] is True and repair["changes"][0]["gate"] == "low_less"


def test_draw_shows_the_counterexample_on_the_wires(tmp_path):
    target = tmp_path / "broken.svg"
    status, _, err = run("draw", BROKEN, "--output", target)
    assert status == 0 and "with input" in err
    root = ElementTree.parse(target).getroot()
    classes = [element.get("class", "") for element in root.iter()]
    assert sum("comparator" in c.split() for c in classes) == read_netlist(BROKEN).size
    assert any("fault" in c.split() for c in classes)


def test_draw_takes_an_explicit_input_and_rejects_a_wrong_one(tmp_path):
    target = tmp_path / "given.svg"
    assert run("draw", CORPUS / "insertion-8.json", "--output", target, "--input", "7,6,5,4,3,2,1,0")[0] == 0
    assert run("draw", CORPUS / "insertion-8.json", "--output", target, "--input", "1,2")[0] == 2
