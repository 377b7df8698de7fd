"""``sortcheck equiv`` through ``main``: exit status, reports, and inputs that really tell netlists apart."""

from __future__ import annotations

import json
from pathlib import Path

from sortcheck.load import read_netlist
from reference import run as evaluate
from cli_runner import run

CORPUS = Path(__file__).resolve().parent.parent / "corpus"
BROKEN = CORPUS / "broken" / "merge-exchange-16-missing-comparator.json"


def test_two_sorters_are_equal_and_a_broken_one_differs_on_an_input_it_gets_wrong():
    # Both corpus networks sort 16 channels (Knuth, TAOCP vol. 3, 5.3.4), so they compute sorted(x).
    status, out, _ = run("equiv", CORPUS / "merge-exchange-16.json", CORPUS / "bitonic-16.json")
    assert status == 0 and ": equal (both proved to sort" in out
    status, out, _ = run("equiv", CORPUS / "merge-exchange-16.json", BROKEN, "--format", "json")
    assert status == 1
    answer = json.loads(out)["equivalence"]
    assert answer["status"] == "different"
    values = answer["input"]
    broken = read_netlist(BROKEN)
    assert evaluate(broken.comparators, values) != sorted(values) == answer["outputs"][0]
    assert answer["outputs"][1] == evaluate(broken.comparators, values)


def test_a_network_and_its_lowered_circuit_are_equal(tmp_path):
    circuit = tmp_path / "gates.json"
    assert run("build", "merge-exchange", "4", "--width", "3", "--style", "xor", "--output", circuit)[0] == 0
    status, out, _ = run("equiv", CORPUS / "merge-exchange-16.json", circuit)
    assert status == 2  # 16 channels against 4 words
    network = tmp_path / "me4.json"
    run("build", "merge-exchange", "4", "--output", network)
    status, out, _ = run("equiv", network, circuit)
    assert status == 0 and "equal" in out


def test_shape_mismatch_and_bad_files_are_errors_with_exit_2(tmp_path):
    status, _, err = run("equiv", CORPUS / "insertion-8.json", CORPUS / "merge-exchange-16.json")
    assert status == 2 and "merge-exchange-16.json: a comparator network of 16 channels, but" in err
    bad = tmp_path / "bad.json"
    bad.write_text("{")
    status, _, err = run("equiv", bad, CORPUS / "insertion-8.json")
    assert status == 2 and "bad.json" in err
