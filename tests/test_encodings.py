"""Pins the documented encodings to their golden files (see encodings/)."""

from __future__ import annotations

import dataclasses
import itertools
import json
from pathlib import Path

import numpy as np
import z3

from sortcheck.engines.networks.bitslice import AllVectors, MergeInputs, apply_network, failure_mask
from sortcheck.engines.smt import smtlib_text
from sortcheck.load import parse_property
from sortcheck.model import ComparatorNetwork, Gate, Merges, Sorts
from sortcheck.model.lowering import lower_network
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


# --- gate circuits: the Tseitin CNF and the threshold conditions (encodings/gate-*.md) --------------------------

def _pair_circuit():
    from sortcheck.model.lowering import lower_network
    return lower_network(ComparatorNetwork(2, ((0, 1),), name="pair"), 2, style="mux")


def _golden_cnf(name):
    text = (ENCODINGS / name).read_text()
    words = {}
    for line in text.splitlines():
        parts = line.split()
        if line.startswith(("c input word", "c output word", "c threshold word")):
            words[parts[3]] = [int(p) for p in parts[6:parts.index("(least")]]
    clauses = [[int(p) for p in line.split()[:-1]] for line in text.splitlines() if line and line[0] not in "cp"]
    return text, words, clauses


def test_gate_circuit_cnf_matches_its_golden_file():
    from pysat.solvers import Solver
    from sortcheck.engines.gates.threshold.spec import circuit_cnf
    from sortcheck.engines.networks.cnf import dimacs

    text, words, clauses = _golden_cnf("gate-circuit-cnf.golden.cnf")
    assert dimacs(*circuit_cnf(_pair_circuit())) == text
    # Independent reading: on every input the CNF forces the outputs to (min, max), computed with sorted.
    with Solver(name="cadical195", bootstrap_with=clauses) as solver:
        for a, b in itertools.product(range(4), repeat=2):
            fixed = [v if (value >> i) & 1 else -v for name, value in (("x0", a), ("x1", b))
                     for i, v in enumerate(words[name])]
            assert solver.solve(assumptions=fixed)
            true = {l for l in solver.get_model() if l > 0}
            got = [sum(1 << i for i, l in enumerate(words[y]) if (abs(l) in true) == (l > 0)) for y in ("y0", "y1")]
            assert got == sorted([a, b])
            for literal in words["y0"] + words["y1"]:  # the outputs are functions of the inputs
                other = -literal if (abs(literal) in true) == (literal > 0) else literal
                assert not solver.solve(assumptions=fixed + [other])


def test_gate_threshold_conditions_match_their_golden_file():
    from pysat.solvers import Solver
    from sortcheck.engines.gates.threshold.spec import gate_violation_cnf
    from sortcheck.engines.networks.cnf import dimacs
    from sortcheck.model import GateCircuit, OutputWord, Sorts

    text, words, clauses = _golden_cnf("gate-threshold-conditions.golden.cnf")
    circuit = _pair_circuit()
    assert dimacs(*gate_violation_cnf(circuit, Sorts())) == text
    with Solver(name="cadical195", bootstrap_with=clauses) as solver:
        assert not solver.solve()  # a compare-and-swap sorts two words (Python's sorted, above)
    swapped = GateCircuit(circuit.inputs, circuit.gates, tuple(OutputWord(w.name, w.bits) for w in circuit.outputs[::-1]))
    with Solver(name="cadical195", bootstrap_with=gate_violation_cnf(swapped, Sorts())[0]) as solver:
        assert solver.solve()  # (max, min) does not


GOLDEN_PAIR = lower_network(ComparatorNetwork(2, ((0, 1),)), 2, style="mux")


def z3_answer(text):
    solver = z3.Solver()
    solver.add(z3.parse_smt2_string(text))
    return solver.check()


def test_gate_circuit_smt_script_matches_its_golden_file_and_z3_proves_it():
    text = smtlib_text(GOLDEN_PAIR, Sorts())
    assert (ENCODINGS / "gate-circuit-smt.golden.smt2").read_text() == text
    assert len(GOLDEN_PAIR.gates) == 7
    inputs = itertools.product(range(4), repeat=2)
    assert all(GOLDEN_PAIR.evaluate(list(v)) == sorted(v) for v in inputs)  # it sorts, by sorted
    assert z3_answer(text) == z3.unsat  # z3's own SMT-LIB parser, nothing of pysmt's conversion
    gate = GOLDEN_PAIR.gates[1]  # the xor of the high bits becomes an xnor
    broken = dataclasses.replace(GOLDEN_PAIR, gates=GOLDEN_PAIR.gates[:1] + (Gate(gate.out, "xnor", gate.inputs),)
                                 + GOLDEN_PAIR.gates[2:])
    assert z3_answer(smtlib_text(broken, Sorts())) == z3.sat


# --- gate circuits: threshold conditions as BDDs (encodings/gate-bdd-thresholds.md) ----------------------------------

def golden_circuits():
    """(circuit, property, order) of the golden file: a counting sorter, it broken, and a pair asked signed order."""
    from sortcheck.model import Gate
    from sortcheck.model.counting import counting_sorter
    sorter = counting_sorter(3, 2)
    first_and = next(i for i, gate in enumerate(sorter.gates) if gate.op == "and")
    gate = sorter.gates[first_and]
    broken = dataclasses.replace(sorter, gates=sorter.gates[:first_and] + (Gate(gate.out, "or", gate.inputs),)
                                 + sorter.gates[first_and + 1:], name="counting-3-w2-first-and-as-or")
    return [(sorter, Sorts(), "word-major"), (broken, Sorts(), "word-major"),
            (GOLDEN_PAIR, Sorts(signed=True), "interleaved")]


def golden_tables(backend=None):
    from sortcheck.engines.gates.bdd.attempt import threshold_table
    return [threshold_table(circuit, prop, order, backend) for circuit, prop, order in golden_circuits()]


def test_gate_bdd_thresholds_match_their_golden_file():
    from gate_reference import run_gates, signed_values
    from sortcheck.engines.gates.bdd.manager import BACKENDS, cudd_available

    golden = json.loads((ENCODINGS / "gate-bdd-thresholds.golden.json").read_text())
    for backend in BACKENDS if cudd_available() else ("python",):
        assert golden_tables(backend) == golden, backend
    # Independent reading: each threshold's failing inputs, by evaluating every input with the reference
    # evaluator and comparing [y_i >= v] with the thresholded inputs sorted by Python's sorted.
    for (circuit, prop, _), table in zip(golden_circuits(), golden):
        width = circuit.width
        for row in table["thresholds"]:
            v = row["v"]
            weights = []
            for raw in itertools.product(range(1 << width), repeat=circuit.words):
                x = signed_values(raw, width, prop.signed)
                y = signed_values(run_gates(circuit, raw), width, prop.signed)
                if [int(value >= v) for value in y] != sorted(int(value >= v) for value in x):
                    weights.append(sum(bin(word).count("1") for word in raw))
            assert (row["violation_nodes"] == 1) == (not weights), (table["circuit"], v)
            assert row["fewest_ones"] == (min(weights) if weights else None), (table["circuit"], v)
    assert [row["fewest_ones"] for row in golden[1]["thresholds"]] == [None, None, None, 1]
