"""sortcheck export: the CNFs and SMT-LIB scripts are unsatisfiable exactly when the property holds.

Exported CNFs are solved with MiniSat 2.2 through python-sat (not the sat
engine's glucose), SMT-LIB scripts with z3's own parser and solver; whether
the property holds is decided by ``tests/reference.py`` (value by value, with
``sorted``) or, for the corpus, by ``corpus/expected-verdicts.txt``.
"""

from __future__ import annotations

import importlib.util
import io
import random
from pathlib import Path

import pytest
import z3
from pysat.formula import CNF
from pysat.solvers import Solver

from strategies import properties_for, reference_holds
from sortcheck import cli
from sortcheck.load import read_netlist
from sortcheck.model import ComparatorNetwork, GateCircuit, Sorts
from sortcheck.report.export import export_text

CORPUS = Path(__file__).resolve().parent.parent / "corpus"
GATE_CNF = importlib.util.find_spec("sortcheck.engines.gates.threshold.spec") is not None

#: Corpus circuits whose exported condition takes MiniSat or z3 a second or more (measured): left to the
#: corpus tests, to keep this file fast.
SLOW_CIRCUITS = {"gates/merge-exchange-4-w8-mux.json", "gates/merge-exchange-6-w4-and-or.json",
                 "gates/merge-exchange-6-w4-mux-signed.json", "gates/median-of-9-w3-and-or.json"}


def expected_verdicts() -> dict[str, str]:
    rows = [line.split() for line in (CORPUS / "expected-verdicts.txt").read_text().splitlines()
            if line.strip() and not line.startswith("#")]
    return {path: verdict for verdict, path in rows}


def cnf_unsatisfiable(text: str) -> bool:
    with Solver(name="minisat22", bootstrap_with=CNF(from_string=text).clauses) as solver:
        return not solver.solve()


def smtlib_unsatisfiable(text: str) -> bool:
    solver = z3.Solver()
    solver.add(z3.parse_smt2_string(text))
    answer = solver.check()
    assert answer in (z3.sat, z3.unsat)
    return answer == z3.unsat


def run_cli(*argv):
    out, err = io.StringIO(), io.StringIO()
    return cli.main(list(argv), stdout=out, stderr=err), out.getvalue(), err.getvalue()


def test_corpus_networks_export_to_conditions_that_match_their_verdicts():
    for path, verdict in expected_verdicts().items():
        netlist = read_netlist(str(CORPUS / path))
        if not isinstance(netlist, ComparatorNetwork):
            continue
        prop = netlist.claim or Sorts()
        holds = verdict == "proved"
        assert cnf_unsatisfiable(export_text(netlist, prop, "dimacs")) == holds, path
        if netlist.channels <= 10 and path != "median-of-9.json":  # z3 needs 9 s for the median of 9, minutes
            #                                                           for 20 channels (measured under load)
            assert smtlib_unsatisfiable(export_text(netlist, prop, "smtlib")) == holds, path


def test_random_networks_export_to_conditions_that_match_the_reference_evaluator():
    rng = random.Random(5)
    checked = {True: 0, False: 0}
    for _ in range(40):
        n = rng.randint(2, 6)
        comparators = tuple(tuple(rng.sample(range(n), 2)) for _ in range(rng.randint(n, 3 * n)))
        network = ComparatorNetwork(n, comparators)
        for prop in rng.sample(properties_for(n), 3):
            holds = reference_holds(network, prop)
            checked[holds] += 1
            assert cnf_unsatisfiable(export_text(network, prop, "dimacs")) == holds, (comparators, prop)
            assert smtlib_unsatisfiable(export_text(network, prop, "smtlib")) == holds, (comparators, prop)
    assert checked[True] > 5 and checked[False] > 5


def test_exported_cnf_names_channels_and_a_model_is_a_failing_input():
    path = CORPUS / "broken" / "insertion-6-truncated.json"
    text = export_text(read_netlist(str(path)), Sorts(), "dimacs")
    assert "c var 1 = input 0" in text and "output channel 0 = var" in text
    with Solver(name="minisat22", bootstrap_with=CNF(from_string=text).clauses) as solver:
        assert solver.solve()
        model = set(solver.get_model())
    network = read_netlist(str(path))
    failing = [int(c + 1 in model) for c in range(network.channels)]
    from reference import breaks, run
    assert breaks(Sorts(), failing, run(network.comparators, failing))


def test_cli_export_writes_the_file_and_refuses_bad_requests(tmp_path):
    target = tmp_path / "insertion-8.smt2"
    status, _, err = run_cli("export", str(CORPUS / "insertion-8.json"), "--to", "smtlib",
                             "--output", str(target))
    assert status == 0 and "wrote" in err and smtlib_unsatisfiable(target.read_text())
    status, out, _ = run_cli("export", str(CORPUS / "merge-exchange-16.json"), "--to", "dimacs",
                             "--property", "selects:3:sorted")
    assert status == 0 and cnf_unsatisfiable(out)
    assert run_cli("export", str(CORPUS / "merge-exchange-16.json"), "--to", "aiger")[0] == 2
    assert run_cli("export", str(CORPUS / "merge-exchange-16.json"), "--to", "dimacs",
                   "--property", "merges:20")[0] == 2


def test_gate_circuits_export_as_cnf_or_are_refused_clearly():
    verdicts = expected_verdicts()
    gates = [path for path, verdict in verdicts.items() if verdict != "unknown" and path not in SLOW_CIRCUITS
             and isinstance(read_netlist(str(CORPUS / path)), GateCircuit)]
    assert gates
    for path in gates:
        status, out, err = run_cli("export", str(CORPUS / path), "--to", "dimacs")
        if not GATE_CNF:
            assert status == 2 and "not available" in err
            continue
        assert status == 0 and "input word" in out
        assert cnf_unsatisfiable(out) == (verdicts[path] == "proved"), path


def test_gate_circuits_export_as_smtlib_scripts_that_z3_decides_like_the_corpus():
    verdicts = expected_verdicts()
    checked = 0
    for path, verdict in verdicts.items():
        if verdict == "unknown" or not path.endswith(".json") or path in SLOW_CIRCUITS:
            continue
        circuit = read_netlist(str(CORPUS / path))
        if not isinstance(circuit, GateCircuit):
            continue
        status, out, _ = run_cli("export", str(CORPUS / path), "--to", "smtlib")
        assert status == 0 and "; x0 is input word" in out
        assert smtlib_unsatisfiable(out) == (verdict == "proved"), path
        checked += 1
    assert checked >= 3
