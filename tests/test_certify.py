"""Certificates: the DRUP checker against tampered proofs, the independent re-evaluation, and --certify end to end.

Proofs come from python-sat's glucose 4 (the engine's solver); that a formula
is satisfiable or not is decided by a second solver, CaDiCaL 1.9.5 through
python-sat, so the checker is judged against something outside the project.
"""

from __future__ import annotations

import io
import json
import os
import random
import stat
from pathlib import Path

import pytest
from pysat.solvers import Solver

from reference import breaks, run
from strategies import properties_for, reference_holds
from sortcheck import cli
from sortcheck.engines import ENGINES
from sortcheck.engines.base import Budget, Options
from sortcheck.engines.networks.cnf import dimacs, plain_cnf
from sortcheck.engines.networks.sat import SatEngine
from sortcheck.load import write_netlist
from sortcheck.model import ComparatorNetwork, Sorts
from sortcheck.model.families import build_family
from sortcheck.certify.check import certify_result
from sortcheck.certify.drup import ProofFormatError, check_proof, parse_dimacs
from sortcheck.certify.reevaluate import recheck_space, relations_sort

CORPUS = Path(__file__).resolve().parent.parent / "corpus"


def glucose_proof(clauses):
    with Solver(name="glucose4", bootstrap_with=clauses, with_proof=True) as solver:
        assert solver.solve() is False
        return "\n".join(solver.get_proof()) + "\n"


def satisfiable(clauses) -> bool:
    with Solver(name="cadical195", bootstrap_with=clauses) as solver:
        return solver.solve()


def sorter_cnf(network):
    encoding = plain_cnf(network, Sorts())
    return encoding.clauses, dimacs(encoding.clauses, encoding.pool)


# -- the DRUP checker ------------------------------------------------------------------------------------------


def test_glucose_proofs_of_sorting_networks_are_accepted():
    for family, n in [("merge-exchange", 8), ("merge-exchange", 12), ("bitonic", 16), ("pairwise", 16)]:
        clauses, text = sorter_cnf(build_family(family, n))
        outcome = check_proof(text, glucose_proof(clauses))
        assert outcome.accepted, (family, n, outcome.reason)
        assert outcome.lemmas > 0 and outcome.failed_line is None


def test_a_lemma_removed_from_the_proof_is_rejected():
    # The smallest unsatisfiable 2-variable CNF: "2" follows by unit propagation, the empty clause then too,
    # but the empty clause alone does not.
    cnf = "p cnf 2 4\n1 2 0\n-1 2 0\n1 -2 0\n-1 -2 0\n"
    assert check_proof(cnf, "2 0\n0\n").accepted
    assert not check_proof(cnf, "0\n").accepted
    clauses, text = sorter_cnf(build_family("merge-exchange", 12))
    lines = glucose_proof(clauses).splitlines()
    lemmas = [i for i, line in enumerate(lines) if not line.startswith("d")]
    rejected = []
    for index in lemmas[:-1]:  # each lemma dropped in turn (the last is the empty clause)
        outcome = check_proof(text, "\n".join(lines[:index] + lines[index + 1:]) + "\n")
        if not outcome.accepted:
            rejected.append(outcome)
    assert rejected, "no single lemma of the proof was needed"
    assert all("does not follow" in o.reason or "ends before" in o.reason for o in rejected)
    truncated = check_proof(text, "\n".join(lines[:len(lines) // 3]) + "\n")
    assert not truncated.accepted and "ends before" in truncated.reason


def test_a_lemma_that_does_not_follow_is_rejected_with_its_line():
    clauses, text = sorter_cnf(build_family("merge-exchange", 8))
    variables, _ = parse_dimacs(text)
    proof = glucose_proof(clauses)
    fresh = f"{variables + 1} 0\n"  # a new variable is implied by nothing
    outcome = check_proof(text, fresh + proof)
    assert not outcome.accepted and outcome.failed_line == 1
    an_input = "-1 0\n"  # input 0 is 0 is not implied by the network either
    assert not check_proof(text, an_input + proof).accepted


def test_a_deleted_or_missing_original_clause_is_rejected():
    clauses, text = sorter_cnf(build_family("merge-exchange", 8))
    proof = glucose_proof(clauses)
    violation = clauses[-1]  # "some adjacent output pair is out of order": without it the CNF is satisfiable
    assert len(violation) > 1 and satisfiable(clauses[:-1])
    deletion = "d " + " ".join(map(str, violation)) + " 0\n"
    assert not check_proof(text, deletion + proof).accepted
    variables, _ = parse_dimacs(text)
    shortened = dimacs(clauses[:-1], plain_cnf(build_family("merge-exchange", 8)).pool)
    assert not check_proof(shortened, proof).accepted


def test_the_proof_of_another_cnf_is_rejected():
    good = build_family("merge-exchange", 8)
    broken = ComparatorNetwork(8, good.comparators[:5] + good.comparators[6:])
    broken_clauses, broken_text = sorter_cnf(broken)
    assert satisfiable(broken_clauses)  # cadical: the broken network has a failing input
    assert not check_proof(broken_text, glucose_proof(sorter_cnf(good)[0])).accepted


def test_random_cnfs_accepted_exactly_when_unsatisfiable():
    rng = random.Random(2026)
    unsatisfiable_seen = satisfiable_seen = 0
    donor = [[1, 2], [-1, 2], [1, -2], [-1, -2]]
    for _ in range(120):
        clauses = [[rng.choice((-1, 1)) * rng.randint(1, 10) for _ in range(3)] for _ in range(rng.randint(30, 55))]
        text = "p cnf 10 %d\n" % len(clauses) + "".join(" ".join(map(str, c)) + " 0\n" for c in clauses)
        if satisfiable(clauses):
            satisfiable_seen += 1
            assert not check_proof(text, glucose_proof(donor)).accepted  # no proof makes a satisfiable CNF fail
        else:
            unsatisfiable_seen += 1
            assert check_proof(text, glucose_proof(clauses)).accepted
    assert unsatisfiable_seen > 10 and satisfiable_seen > 10


def test_malformed_texts_name_their_line():
    with pytest.raises(ProofFormatError, match="proof line 2"):
        check_proof("p cnf 1 1\n1 0\n", "1 0\n1 x 0\n")
    with pytest.raises(ProofFormatError, match="header"):
        check_proof("p cnf 1 3\n1 0\n", "0\n")


# -- independent re-evaluation ---------------------------------------------------------------------------------


def test_recheck_space_agrees_with_the_reference_evaluator():
    rng = random.Random(7)
    for _ in range(60):
        n = rng.randint(2, 7)
        comparators = tuple(tuple(rng.sample(range(n), 2)) for _ in range(rng.randint(0, 14)))
        network = ComparatorNetwork(n, comparators)
        for prop in properties_for(n):
            holds, _ = recheck_space(comparators, n, prop, 1 << 20)
            assert holds == reference_holds(network, prop), (comparators, prop)


def test_relations_are_sound_against_the_reference_evaluator():
    rng = random.Random(11)
    for _ in range(300):
        n = rng.randint(2, 6)
        comparators = [tuple(rng.sample(range(n), 2)) for _ in range(rng.randint(0, 16))]
        for descending in (False, True):
            if relations_sort(n, comparators, descending):
                assert reference_holds(ComparatorNetwork(n, tuple(comparators)),
                                       Sorts(order="descending" if descending else "ascending"))
    assert relations_sort(30, build_family("odd-even-transposition", 30).comparators, False)


# -- certificates of verdicts ----------------------------------------------------------------------------------


def sat_verdict(network, prop=Sorts()):
    return SatEngine(enumeration_limit=0).check(network, prop, Budget(), Options(certify=True))


def test_a_complete_drup_certificate_is_certified_and_a_missing_part_is_not(tmp_path):
    network = build_family("merge-exchange", 8)
    path = tmp_path / "me8.json"
    write_netlist(network, str(path))
    verdict = sat_verdict(network)
    assert verdict.certificate.method == "drup" and len(verdict.certificate.calls) > 1
    outcome = certify_result(network, str(path), verdict, tmp_path / "certs")
    assert outcome["certified"] is True, outcome
    from dataclasses import replace
    fewer = replace(verdict.certificate, calls=verdict.certificate.calls[1:])
    outcome = certify_result(network, str(path), replace(verdict, certificate=fewer), tmp_path / "certs")
    assert outcome["certified"] is False
    assert any("composition" in failure for failure in outcome["certificate"]["failures"])
    calls = list(verdict.certificate.calls)
    longest = max(range(len(calls)), key=lambda i: len(calls[i].proof))  # not contradictory by propagation alone
    variables, _ = parse_dimacs(calls[longest].dimacs)
    calls[longest] = replace(calls[longest], proof=f"{variables + 1} 0\n" + calls[longest].proof)
    material = replace(verdict.certificate, calls=tuple(calls))
    outcome = certify_result(network, str(path), replace(verdict, certificate=material), tmp_path / "certs")
    assert outcome["certified"] is False and "does not follow" in outcome["certificate"]["scope"]


def run_cli(*argv):
    out, err = io.StringIO(), io.StringIO()
    status = cli.main(list(argv), stdout=out, stderr=err)
    return status, out.getvalue(), err.getvalue()


@pytest.fixture
def solver_only_sat(monkeypatch):
    """The CLI's sat engine sends every part to the solver, so small networks get DRUP proofs."""
    monkeypatch.setitem(ENGINES, "sat", SatEngine(enumeration_limit=0))


def json_results(tmp_path, *argv):
    report = tmp_path / "report.json"
    status, _, _ = run_cli("check", *argv, "--quiet", "--jobs", "1", "--format", "json", "--output", str(report))
    return status, json.loads(report.read_text())["results"]


def test_cli_certifies_merge_exchange_networks_by_drup(tmp_path, solver_only_sat):
    paths = []
    for n in (8, 12):
        path = tmp_path / f"me{n}.json"
        write_netlist(build_family("merge-exchange", n), str(path))
        paths.append(str(path))
    certs = tmp_path / "certs"
    status, results = json_results(tmp_path, *paths, "--engine", "sat", "--certify", str(certs))
    assert status == 0
    for result in results:
        assert result["verdict"] == "proved" and result["certified"] is True
        certificate = result["certificate"]
        assert certificate["method"] == "drup"
        assert "sortcheck drup (certify/drup.py)" in certificate["checked_by"]
        folder = Path(certificate["directory"])
        cnfs = sorted(folder.glob("*.cnf"))
        assert cnfs and len(cnfs) == len(list(folder.glob("*.drup")))
        assert set(certificate["files"]) >= {p.name for p in cnfs}
        assert "c var 1 = input 0" in cnfs[0].read_text()  # variables named in comments
        for cnf in cnfs:  # the files on disk check on their own
            assert check_proof(cnf.read_text(), cnf.with_suffix(".drup").read_text()).accepted
        manifest = json.loads((folder / "certificate.json").read_text())
        assert manifest["certified"] is True and manifest["netlist"] in paths


def test_cli_refuted_network_is_certified_by_its_counterexample(tmp_path):
    broken = CORPUS / "broken" / "merge-exchange-16-missing-comparator.json"
    status, results = json_results(tmp_path, str(broken), "--engine", "sat", "--certify", str(tmp_path / "c"))
    assert status == 1
    [result] = results
    assert result["certified"] is True and result["certificate"]["method"] == "counterexample"
    example = result["counterexample"]
    network = cli.read_netlist(str(broken))
    assert example["output"] == run(network.comparators, example["input"])  # tests/reference.py
    assert breaks(network.claim or Sorts(), example["input"], example["output"])


def test_cli_enumeration_records_a_digest_a_second_run_confirms(tmp_path):
    path = str(CORPUS / "merge-exchange-16.json")
    certs = str(tmp_path / "certs")
    _, [first] = json_results(tmp_path, path, "--engine", "enumerate", "--certify", certs)
    assert first["certified"] is True and first["certificate"]["method"] == "enumeration"
    _, [second] = json_results(tmp_path, path, "--engine", "enumerate", "--certify", certs)
    assert second["certified"] is True and "previous run's digest" in second["certificate"]["checked_by"]
    manifest = json.loads((Path(second["certificate"]["directory"]) / "certificate.json").read_text())
    [part] = manifest["enumerated"]
    assert part["previous_run"] == "same digest" and part["reevaluated"] == {"vectors": 65536, "holds": True}


def test_certified_is_never_true_without_certificate_material(tmp_path):
    certs = str(tmp_path / "certs")
    _, results = json_results(tmp_path, str(CORPUS / "insertion-8.json"), "--engine", "smt", "--certify", certs)
    assert results[0]["verdict"] == "proved" and results[0]["certified"] is False
    gate = str(CORPUS / "compare-and-swap-2x2.json")
    _, results = json_results(tmp_path, gate, "--engine", "simulate", "--certify", certs)
    assert results[0]["verdict"] == "proved" and results[0]["certified"] is False
    _, results = json_results(tmp_path, gate, "--certify", certs)  # whichever engine auto picks for gates
    assert results[0]["verdict"] == "proved" and results[0]["certified"] is False
    wide = tmp_path / "wide.json"
    write_netlist(build_family("merge-exchange", 70), str(wide))  # 2^70 inputs: enumerate refuses
    status, results = json_results(tmp_path, str(wide), "--engine", "enumerate", "--certify", certs)
    assert status == 3 and results[0]["verdict"] == "unknown" and results[0]["certified"] is False
    _, results = json_results(tmp_path, str(CORPUS / "insertion-8.json"), "--engine", "sat")
    assert "certified" not in results[0]  # only reported when asked for


def fake_drat_trim(folder: Path, answer: str) -> Path:
    script = folder / "drat-trim"
    log = folder / "calls.log"
    script.write_text(f"#!/bin/sh\necho \"$1 $2\" >> '{log}'\necho 'c fake checker'\necho '{answer}'\n")
    script.chmod(script.stat().st_mode | stat.S_IEXEC)
    return log


@pytest.mark.parametrize("answer, certified", [("s VERIFIED", True), ("s NOT VERIFIED", False)])
def test_drat_trim_on_the_path_is_run_on_every_proof(tmp_path, monkeypatch, solver_only_sat, answer, certified):
    bin_folder = tmp_path / "bin"
    bin_folder.mkdir()
    log = fake_drat_trim(bin_folder, answer)
    monkeypatch.setenv("PATH", f"{bin_folder}{os.pathsep}{os.environ['PATH']}")
    path = tmp_path / "me8.json"
    write_netlist(build_family("merge-exchange", 8), str(path))
    _, [result] = json_results(tmp_path, str(path), "--engine", "sat", "--certify", str(tmp_path / "certs"))
    calls = log.read_text().splitlines()
    folder = Path(result["certificate"]["directory"])
    assert len(calls) == len(list(folder.glob("*.cnf"))) > 0
    cnf, proof = calls[0].split()
    assert cnf.endswith(".cnf") and proof.endswith(".drup") and Path(cnf).exists()
    assert result["certified"] is certified
    assert "drat-trim" in result["certificate"]["checked_by"]


def test_a_proof_check_out_of_time_is_rejected_not_accepted():
    clauses, text = sorter_cnf(build_family("bitonic", 32))
    outcome = check_proof(text, glucose_proof(clauses), seconds=0.0)
    assert not outcome.accepted and "ran out" in outcome.reason


def test_an_unwritable_certificate_directory_leaves_the_verdict_uncertified(tmp_path):
    blocker = tmp_path / "file"
    blocker.write_text("not a directory")
    status, results = json_results(tmp_path, str(CORPUS / "insertion-8.json"), "--certify", str(blocker / "sub"))
    assert status == 0 and results[0]["certified"] is False
    assert "could not be written" in results[0]["certificate"]["scope"]
