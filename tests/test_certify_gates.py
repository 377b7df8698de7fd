"""Certificates of gate circuits: threshold-SAT proofs written, checked again, and tampering rejected.

That a circuit has its property is judged independently by ``tests/gate_reference.py`` (every op's truth table
written out, outputs judged with Python's ``sorted``); that a tampered CNF means something else is judged by a
second solver, CaDiCaL 1.9.5 through python-sat.
"""

from __future__ import annotations

import io
import os
import json
from dataclasses import replace
from pathlib import Path

import pytest
from pysat.solvers import Solver

from gate_reference import breaks_words, holds_everywhere, run_gates
from sortcheck import cli
from sortcheck.engines.base import Budget, Options, Status
from sortcheck.engines.gates.threshold.certificates import claim_clauses
from sortcheck.engines.gates.threshold.sat import GateSatEngine
from sortcheck.engines.gates.threshold.spec import threshold_question
from sortcheck.load import read_netlist, write_netlist
from sortcheck.model import PartialSort, Selects, Sorts
from sortcheck.model.counting import counting_sorter
from sortcheck.model.families import merge_exchange, odd_even_transposition
from sortcheck.model.lowering import lower_network
from sortcheck.certify.check import certify_result
from sortcheck.certify.drup import check_proof, parse_dimacs

CORPUS = Path(__file__).resolve().parent.parent / "corpus"


def run_cli(*argv):
    out, err = io.StringIO(), io.StringIO()
    status = cli.main(list(argv), stdout=out, stderr=err)
    return status, out.getvalue(), err.getvalue()


def json_results(tmp_path, *argv):
    report = tmp_path / "report.json"
    status, _, _ = run_cli("check", *argv, "--quiet", "--jobs", "1", "--format", "json", "--output", str(report))
    return status, json.loads(report.read_text())["results"]


def written(tmp_path, circuit, name):
    path = tmp_path / name
    write_netlist(circuit, str(path))
    return str(path)


def certified_verdict(circuit, prop=Sorts(), **settings):
    return GateSatEngine(**settings).check(circuit, prop, Budget(), Options(certify=True))


# -- end to end -------------------------------------------------------------------------------------------------


def test_counting_sorters_proved_by_sat_are_certified_with_every_file_written(tmp_path):
    paths = [written(tmp_path, counting_sorter(words, width), f"c{words}x{width}.json")
             for words, width in ((4, 2), (5, 2), (3, 4))]
    for path in paths:  # the reference evaluator agrees that they sort (every input)
        assert holds_everywhere(read_netlist(path), Sorts())
    status, results = json_results(tmp_path, *paths, "--engine", "sat", "--certify", str(tmp_path / "certs"))
    assert status == 0
    for path, result, thresholds in zip(paths, results, (4, 4, 16)):
        assert result["verdict"] == "proved" and result["certified"] is True, result["certificate"]
        certificate = result["certificate"]
        assert certificate["method"] == "drup"
        assert "sortcheck drup (certify/drup.py)" in certificate["checked_by"]
        assert f"cover all {thresholds} thresholds" in certificate["scope"]
        folder = Path(certificate["directory"])
        cnfs = sorted(folder.glob("*.cnf"))
        # 2-bit words: one question per threshold; 4-bit words: one question with the threshold free
        assert len(cnfs) == (thresholds if thresholds == 4 else 1) == len(list(folder.glob("*.drup")))
        assert sorted(certificate["files"]) == sorted(["certificate.json"] + [p.name for p in folder.iterdir()
                                                                              if p.suffix in (".cnf", ".drup")])
        for cnf in cnfs:  # the files on disk check on their own, and say what they mean
            text = cnf.read_text()
            assert check_proof(text, cnf.with_suffix(".drup").read_text()).accepted
            assert "c input word x0 = vars" in text and "c threshold word v = vars" in text
            assert "unsatisfiable exactly when no input of" in text
        manifest = json.loads((folder / "certificate.json").read_text())
        assert manifest["certified"] is True and manifest["netlist"] == path
        assert manifest["coverage"]["thresholds"] == thresholds
        if thresholds == 4:
            assert sorted(call["claim"]["thresholds"][0] for call in manifest["calls"]) == [0, 1, 2, 3]
            assert "at threshold v = 2" in manifest["calls"][2]["label"]
        else:
            assert manifest["calls"][0]["label"].endswith("at any threshold")


def test_a_lifted_verdict_is_not_certified_and_says_why(tmp_path):
    path = written(tmp_path, lower_network(merge_exchange(4), 3), "me4w3.json")
    _, [result] = json_results(tmp_path, path, "--certify", str(tmp_path / "certs"))
    assert result["verdict"] == "proved" and result["engine"] == "lift" and result["certified"] is False
    assert "lifted verdicts are not certified" in result["certificate"]["scope"]


def test_auto_passes_certify_to_threshold_sat(tmp_path):
    # 13 words of 2 bits: 26 input bits, beyond exhaustive simulation, and a counting sorter does not lift
    path = written(tmp_path, counting_sorter(13, 2), "c13x2.json")
    _, [result] = json_results(tmp_path, path, "--property", "selects:1", "--certify", str(tmp_path / "certs"))
    assert result["verdict"] == "proved" and result["engine"] == "sat", result
    assert result["certified"] is True and "cover all 4 thresholds" in result["certificate"]["scope"]


def test_a_refuted_gate_circuit_is_certified_by_its_counterexample(tmp_path):
    broken = CORPUS / "broken" / "compare-and-swap-2x2-flipped-gate.json"
    status, [result] = json_results(tmp_path, str(broken), "--engine", "sat", "--certify", str(tmp_path / "c"))
    assert status == 1 and result["certified"] is True
    assert result["certificate"]["method"] == "counterexample"
    circuit = read_netlist(str(broken))
    example = result["counterexample"]
    assert run_gates(circuit, example["input"]) == example["output"]  # tests/gate_reference.py
    assert breaks_words(circuit.claim or Sorts(), example["input"], example["output"], circuit.width)


def test_a_refutation_by_a_certified_sat_call_is_a_true_counterexample():
    sorter = lower_network(merge_exchange(4), 2, style="mux")
    broken = replace(sorter, outputs=(sorter.outputs[1], sorter.outputs[0], *sorter.outputs[2:]))
    verdict = certified_verdict(broken, samples=0)  # no simulation: the proof-logging solver finds it
    assert verdict.status is Status.REFUTED and verdict.certificate is None
    example = verdict.counterexample
    assert breaks_words(Sorts(), list(example.input), run_gates(broken, list(example.input)), 2)


# -- tampering --------------------------------------------------------------------------------------------------


@pytest.fixture(scope="module")
def proved_5x2():
    circuit = counting_sorter(5, 2)
    verdict = certified_verdict(circuit)
    assert verdict.status is Status.PROVED and len(verdict.certificate.calls) == 4
    return circuit, verdict


def certify_with(tmp_path, circuit, verdict, calls):
    path = written(tmp_path, circuit, "c5x2.json")
    tampered = replace(verdict, certificate=replace(verdict.certificate, calls=tuple(calls)))
    return certify_result(circuit, path, tampered, tmp_path / "certs")


def test_the_untampered_certificate_is_certified(tmp_path, proved_5x2):
    circuit, verdict = proved_5x2
    outcome = certify_with(tmp_path, circuit, verdict, verdict.certificate.calls)
    assert outcome["certified"] is True, outcome


def test_a_proof_missing_a_lemma_is_rejected(tmp_path, proved_5x2):
    circuit, verdict = proved_5x2
    calls = list(verdict.certificate.calls)
    number = max(range(len(calls)), key=lambda i: len(calls[i].proof))
    lines = calls[number].proof.splitlines()
    for index, line in enumerate(lines[:-1]):  # drop lemmas one at a time until the proof no longer checks
        if line.startswith("d"):
            continue
        shorter = "\n".join(lines[:index] + lines[index + 1:]) + "\n"
        if not check_proof(calls[number].dimacs, shorter).accepted:
            break
    else:
        pytest.fail("no lemma of the proof was needed")
    calls[number] = replace(calls[number], proof=shorter)
    outcome = certify_with(tmp_path, circuit, verdict, calls)
    assert outcome["certified"] is False
    assert any("does not follow" in failure or "ends before" in failure
               for failure in outcome["certificate"]["failures"])


def test_a_changed_cnf_is_rejected_even_when_its_proof_still_checks(tmp_path, proved_5x2):
    circuit, verdict = proved_5x2
    calls = list(verdict.certificate.calls)
    variables, clauses = parse_dimacs(calls[1].dimacs)
    # a contradiction appended: the old proof still checks, but the CNF no longer states the claim
    extra = clauses + [[variables], [-variables]]
    text = f"p cnf {variables} {len(extra)}\n" + "".join(" ".join(map(str, c)) + " 0\n" for c in extra)
    assert check_proof(text, calls[1].proof).accepted
    calls[1] = replace(calls[1], dimacs=text)
    outcome = certify_with(tmp_path, circuit, verdict, calls)
    assert outcome["certified"] is False
    assert any("call-0002.cnf: the CNF is not the encoding" in f for f in outcome["certificate"]["failures"])


def test_a_cnf_fixing_another_threshold_is_rejected(tmp_path, proved_5x2):
    circuit, verdict = proved_5x2
    calls = list(verdict.certificate.calls)
    # call 3's CNF and proof under call 2's claim: a true proof of the wrong question
    calls[1] = replace(calls[1], dimacs=calls[2].dimacs, proof=calls[2].proof)
    outcome = certify_with(tmp_path, circuit, verdict, calls)
    assert outcome["certified"] is False
    failures = outcome["certificate"]["failures"]
    assert any("call-0002.cnf: the CNF is not the encoding" in f for f in failures)
    assert any("threshold 1 is covered by no question" in f for f in failures)


def test_a_dropped_threshold_is_rejected(tmp_path, proved_5x2):
    circuit, verdict = proved_5x2
    calls = [call for call in verdict.certificate.calls if call.claim["thresholds"] != [2, 2]]
    outcome = certify_with(tmp_path, circuit, verdict, calls)
    assert outcome["certified"] is False
    assert outcome["certificate"]["failures"] == ["threshold 2 is covered by no question"]  # the rest checks


def test_a_claim_about_another_property_is_rejected(tmp_path, proved_5x2):
    circuit, verdict = proved_5x2
    calls = list(verdict.certificate.calls)
    claim = {**calls[0].claim, "property": Selects(count=1).to_json()}
    calls[0] = replace(calls[0], claim=claim)
    outcome = certify_with(tmp_path, circuit, verdict, calls)
    assert outcome["certified"] is False
    assert any("another property" in failure for failure in outcome["certificate"]["failures"])


def test_the_cnf_of_a_claim_means_what_it_says():
    # CaDiCaL on the CNF of a broken circuit at each threshold: satisfiable exactly at the thresholds where the
    # reference evaluator finds an input whose 0-1 image at that threshold is not sorted
    sorter = lower_network(merge_exchange(3), 2, style="mux")
    broken = replace(sorter, outputs=(sorter.outputs[0], sorter.outputs[2], sorter.outputs[1]))
    question = threshold_question(broken, Sorts())
    answers = []
    for v in range(4):
        claim = {"question": "fixed", "thresholds": [v, v]}
        with Solver(name="cadical195", bootstrap_with=claim_clauses(question, claim)) as solver:
            found = solver.solve()
        expected = any(
            [int(y >= v) for y in run_gates(broken, words)] != sorted(int(x >= v) for x in words)
            for words in ((a, b, c) for a in range(4) for b in range(4) for c in range(4)))
        assert found == expected, v
        answers.append(found)
    assert answers[0] is False and True in answers  # threshold 0 maps every word to 1; some threshold fails


# -- the other kinds of question ---------------------------------------------------------------------------------


def test_a_threshold_range_and_a_stable_miter_are_certified(tmp_path):
    circuit = counting_sorter(3, 3)
    engine = GateSatEngine(samples=0, per_threshold_width=2)  # 3-bit words: one question per range of thresholds
    halves = [engine.check_piece(circuit, Sorts(), {"kind": "thresholds", "low": low, "high": high}, Budget(),
                                 Options(certify=True)) for low, high in ((0, 3), (4, 7))]
    assert all(v.status is Status.PROVED and v.certificate.calls[0].claim["question"] == "range" for v in halves)
    path = written(tmp_path, circuit, "c3x3.json")
    joined = replace(halves[0], certificate=replace(halves[0].certificate,
                                                    calls=halves[0].certificate.calls + halves[1].certificate.calls))
    assert certify_result(circuit, path, joined, tmp_path / "certs")["certified"] is True
    half = certify_result(circuit, path, halves[0], tmp_path / "certs")
    assert half["certified"] is False and "threshold 4 is covered by no question" in half["certificate"]["scope"]
    stable = lower_network(odd_even_transposition(4), 2, style="mux", key_bits=1)
    prop = PartialSort(key_bits=1, stable=True)
    assert holds_everywhere(stable, prop)  # tests/gate_reference.py
    verdict = certified_verdict(stable, prop)
    assert verdict.status is Status.PROVED and verdict.certificate.calls[0].claim["question"] == "miter"
    path = written(tmp_path, stable, "oet4.json")
    outcome = certify_result(stable, path, verdict, tmp_path / "certs")
    assert outcome["certified"] is True and "miter question covers every input" in outcome["certificate"]["scope"]


def test_certify_off_records_nothing_and_does_not_split():
    circuit = counting_sorter(4, 2)
    assert GateSatEngine().check(circuit, Sorts(), Budget()).certificate is None
    assert GateSatEngine().pieces(circuit, Sorts(), Options(certify=True)) is None
    assert len(GateSatEngine(min_split_gates=0).pieces(circuit, Sorts())) == 4
    assert GateSatEngine().pieces(circuit, Sorts()) is None  # too small to be worth worker processes


@pytest.mark.parametrize("answer, certified", [("s VERIFIED", True), ("s NOT VERIFIED", False)])
def test_drat_trim_on_the_path_checks_every_gate_proof(tmp_path, monkeypatch, answer, certified):
    folder = tmp_path / "bin"
    folder.mkdir()
    log = folder / "calls.log"
    script = folder / "drat-trim"  # a stand-in that records its arguments and gives a fixed answer
    script.write_text(f"#!/bin/sh\necho \"$1 $2\" >> '{log}'\necho '{answer}'\n")
    script.chmod(0o755)
    monkeypatch.setenv("PATH", f"{folder}{os.pathsep}{os.environ['PATH']}")
    path = written(tmp_path, counting_sorter(4, 2), "c4x2.json")
    _, [result] = json_results(tmp_path, path, "--engine", "sat", "--certify", str(tmp_path / "certs"))
    assert len(log.read_text().splitlines()) == 4  # one proof per threshold
    assert result["certified"] is certified and "drat-trim" in result["certificate"]["checked_by"]
