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


# --- gate circuits: SAT sweeping (encodings/gate-sat-sweeping.md) ------------------------------------------------

#: The simulated inputs ``(x0, x1)`` of the sweeping example: every input with ``x1 != 2``; pattern ``p`` is bit
#: ``p`` of every signature.
SWEEP_PATTERNS = tuple((x0, x1) for x0 in range(4) for x1 in range(4) if x1 != 2)
#: Signals of the reference that windows take as free cut points (and that are preferred as candidates' targets).
SWEEP_CUT = ("c0_gtupto0", "c0_gt")


class _RecordingSolver:
    """Stands in for python-sat's ``Solver`` inside the prover: records every clause and every call."""

    calls: list = []
    pairs: list = []

    def __init__(self, name, bootstrap_with=None, **kwargs):
        from pysat.solvers import Solver
        self.unsent = [list(clause) for clause in bootstrap_with or ()]
        self.solver = Solver(name, bootstrap_with=self.unsent, **kwargs)

    def add_clause(self, clause, no_return=True):
        self.unsent.append(list(clause))
        return self.solver.add_clause(clause, no_return)

    def solve_limited(self, assumptions=(), expect_interrupt=False):
        found = self.solver.solve_limited(assumptions=assumptions, expect_interrupt=expect_interrupt)
        self.calls.append((self, self.unsent, list(assumptions), found, list(self.pairs)))
        self.unsent = []
        return found

    def __getattr__(self, name):  # conf_budget, get_model, interrupt, clear_interrupt, delete
        return getattr(self.solver, name)

    def __enter__(self):
        return self

    def __exit__(self, *exception):
        self.solver.delete()


def _signature_text(value, patterns):
    """A signature as 0/1 characters, pattern 0 first."""
    return "".join(str(value >> p & 1) for p in range(patterns))


def _graph_record(graph, literals, netlist):
    return {"netlist": netlist.name,
            "signals": {name: literal for name, literal in literals.items() if isinstance(name, str)},
            "and_nodes": [[node, *fanin] for node, fanin in enumerate(graph.fanins) if fanin is not None]}


def sweep_golden():
    """The sweeping example of encodings/gate-sat-sweeping.md, as the code runs it (every SAT call recorded)."""
    from unittest import mock
    from sortcheck.engines.base import Budget
    from sortcheck.engines.gates.lifting.discover import circuit_graph
    from sortcheck.engines.gates.sweeping import prover as prover_module, sweep as sweep_module

    pair = ComparatorNetwork(2, ((0, 1),))
    circuit_netlist, reference_netlist = lower_network(pair, 2, style="and-or"), lower_network(pair, 2, style="mux")
    signatures = [sum((words[k] >> i & 1) << p for p, words in enumerate(SWEEP_PATTERNS))
                  for k in range(2) for i in range(2)]
    circuit, circuit_literals = circuit_graph(circuit_netlist, signatures, len(SWEEP_PATTERNS))
    reference, reference_literals = circuit_graph(reference_netlist, signatures, len(SWEEP_PATTERNS))
    limit = len(reference)
    and_nodes = [node for node, fanin in enumerate(circuit.fanins) if fanin is not None]
    preferred = {reference_literals[name] >> 1 for name in SWEEP_CUT}
    prover = prover_module.EquivalenceProver(reference, Budget(), cut=frozenset(preferred))
    rounds = []
    rebuild, refuted = sweep_module._Sweeper.rebuild, sweep_module._Sweeper._refuted
    prove_all = prover_module.EquivalenceProver.prove_all

    def recording_rebuild(state):
        classes = {}
        for graph, side, nodes in ((reference, "reference", range(1, limit)), (circuit, "circuit", and_nodes)):
            for node in nodes:
                signature, phase = graph.normal(2 * node)
                classes.setdefault(signature, {"reference": [], "circuit": []})[side].append(2 * node + phase)
        obligations = rebuild(state)
        rounds.append({"patterns": reference.patterns,
                       "classes": [{"signature": _signature_text(signature, reference.patterns), **members}
                                   for signature, members in sorted(classes.items())
                                   if members["circuit"] and members["reference"]],
                       "obligations": [[ob.node, ob.rebuilt, ob.wanted] for ob in obligations],
                       "mapping": {str(node): state.result.mapping[node] for node in and_nodes},
                       "refuted": None})
        return obligations

    def recording_refuted(state, obligation, pattern):
        rounds[-1]["refuted"] = {"node": obligation.node,
                                 "pattern": {str(k): v for k, v in sorted(pattern.items())}}
        return refuted(state, obligation, pattern)

    def recording_prove_all(self, pairs):
        _RecordingSolver.pairs = [list(pair) for pair in pairs]
        return prove_all(self, pairs)

    _RecordingSolver.calls = []
    outputs = []
    with mock.patch.object(prover_module, "Solver", _RecordingSolver), \
            mock.patch.object(sweep_module._Sweeper, "rebuild", recording_rebuild), \
            mock.patch.object(sweep_module._Sweeper, "_refuted", recording_refuted), \
            mock.patch.object(prover_module.EquivalenceProver, "prove_all", recording_prove_all):
        swept = sweep_module.sweep(circuit, reference, Budget(), prover=prover, preferred=preferred)
        for mine, theirs in zip(circuit_netlist.outputs, reference_netlist.outputs):
            for i, (bit, wanted_bit) in enumerate(zip(mine.bits, theirs.bits)):
                outputs.append({"bit": f"{mine.name}[{i}]", "circuit": circuit_literals[bit],
                                "mapped": swept.literal(circuit_literals[bit]),
                                "reference": reference_literals[wanted_bit]})
        # The output bits not mapped onto the reference's own output literals, asked in one batch.
        batch = prover.prove_all([(output["mapped"], output["reference"]) for output in outputs
                                  if output["mapped"] != output["reference"]])
        for output in outputs:
            output["answer"] = "same literal" if output["mapped"] == output["reference"] else batch.status
    queries = [{"solver": "incremental" if solver is prover._solver else "window", "pairs": pairs,
                "clauses": clauses, "assumptions": assumptions, "answer": "sat" if found else "unsat"}
               for solver, clauses, assumptions, found, pairs in _RecordingSolver.calls]
    figures = swept.figures()
    del figures["seconds"]
    prover.close()
    return {"about": "SAT sweeping of the 2-bit compare-and-swap written with AND/OR/NOT (the circuit) against the "
                     "one written with muxes (the reference); see gate-sat-sweeping.md",
            "patterns": [list(words) for words in SWEEP_PATTERNS], "cut": list(SWEEP_CUT),
            "circuit": _graph_record(circuit, circuit_literals, circuit_netlist),
            "reference": {**_graph_record(reference, reference_literals, reference_netlist),
                          "nodes_before_sweep": limit},
            "rounds": rounds, "finished": swept.finished,
            "mapping": {str(node): swept.mapping[node] for node in and_nodes},
            "outputs": outputs, "queries": queries,
            "incremental_variables": {str(node): variable for node, variable in sorted(prover._variables.items())},
            "figures": figures}


def compact_json(value, indent=0):
    """JSON with every list or object that fits in 110 characters on one line, and short items packed."""
    flat = json.dumps(value)
    if not isinstance(value, (list, dict)) or not value or indent + len(flat) <= 110:
        return flat
    pad = " " * (indent + 1)
    items = value if isinstance(value, list) else value.items()
    texts = [compact_json(item, indent + 1) if isinstance(value, list)
             else json.dumps(item[0]) + ": " + compact_json(item[1], indent + 1) for item in items]
    lines = []
    for text in texts:
        if lines and "\n" not in text and "\n" not in lines[-1] and len(lines[-1]) + len(text) + 2 <= 110 \
                and len(text) <= 32:
            lines[-1] += ", " + text
        else:
            lines.append(pad + text)
    opening, closing = "[]" if isinstance(value, list) else "{}"
    return opening + "\n" + ",\n".join(lines) + "\n" + " " * indent + closing


def _aig_values(and_nodes, words):
    """Every node's value for the input words ``(x0, x1)`` of 2 bits (input nodes 1-4: x0[0], x0[1], x1[0],
    x1[1]), evaluated here from the recorded fanins (node 0 is false; literal ``2n + 1`` is NOT node ``n``)."""
    values = {0: 0, 1: words[0] & 1, 2: words[0] >> 1 & 1, 3: words[1] & 1, 4: words[1] >> 1 & 1}
    for node, left, right in sorted(and_nodes):
        values[node] = (values[left >> 1] ^ left & 1) & (values[right >> 1] ^ right & 1)
    return values


def _literal_value(values, literal):
    return values[literal >> 1] ^ literal & 1


def _z3_answer(clauses, assumptions):
    variables = {}

    def literal(number):
        variable = variables.setdefault(abs(number), z3.Bool(f"v{abs(number)}"))
        return variable if number > 0 else z3.Not(variable)
    solver = z3.Solver()
    for clause in clauses:
        solver.add(z3.Or([literal(number) for number in clause]))
    return ("sat" if solver.check([literal(number) for number in assumptions]) == z3.sat else "unsat"), solver, literal


def _window_cnf(and_nodes, cut, left, right):
    """The window query as gate-sat-sweeping.md states it: variable 1 false, then the free leaves in node order,
    then the window's AND nodes in node order, then the difference variable; written here from the document."""
    fanins = {node: (a, b) for node, a, b in and_nodes}
    stop = set(cut) - {left >> 1, right >> 1}
    inner, leaves, stack = set(), set(), [left >> 1, right >> 1]
    while stack:
        node = stack.pop()
        if node == 0 or node in inner or node in leaves:
            continue
        if node not in fanins or node in stop:
            leaves.add(node)
        else:
            inner.add(node)
            stack += [fanins[node][0] >> 1, fanins[node][1] >> 1]
    number = {0: 1}
    for node in sorted(leaves) + sorted(inner):
        number[node] = len(number) + 1

    def signed(literal):
        return -number[literal >> 1] if literal & 1 else number[literal >> 1]
    clauses = [[-1]]
    for node in sorted(inner):
        a, b = signed(fanins[node][0]), signed(fanins[node][1])
        clauses += [[-number[node], a], [-number[node], b], [number[node], -a, -b]]
    d, x, y = len(number) + 1, signed(left), signed(right)
    clauses += [[-d, x, y], [-d, -x, -y], [d, -x, y], [d, x, -y]]
    return clauses, [d], sorted(leaves)


def _incremental_cnf(and_nodes, queries):
    """The clauses each query of the incremental solver adds, as gate-sat-sweeping.md states them: the cones
    not loaded yet (new leaves in node order, then new AND nodes in node order, three clauses each), then one
    difference variable per pair and the switch; written here from the document."""
    fanins = {node: (a, b) for node, a, b in and_nodes}
    number = {0: 1}
    added = []
    for position, query in enumerate(queries):
        clauses = [[-1]] if position == 0 else []
        inner, leaves, stack = set(), set(), [literal >> 1 for pair in query["pairs"] for literal in pair]
        while stack:
            node = stack.pop()
            if node in number or node in inner or node in leaves:
                continue
            if node not in fanins:
                leaves.add(node)
            else:
                inner.add(node)
                stack += [fanins[node][0] >> 1, fanins[node][1] >> 1]
        for node in sorted(leaves) + sorted(inner):
            number[node] = len(number) + 1 + sum(len(q["pairs"]) + 1 for q in queries[:position])

        def signed(literal):
            return -number[literal >> 1] if literal & 1 else number[literal >> 1]
        for node in sorted(inner):
            a, b = signed(fanins[node][0]), signed(fanins[node][1])
            clauses += [[-number[node], a], [-number[node], b], [number[node], -a, -b]]
        fresh = len(number) + sum(len(q["pairs"]) + 1 for q in queries[:position])
        differences = []
        for left, right in query["pairs"]:
            fresh += 1
            x, y = signed(left), signed(right)
            clauses += [[-fresh, x, y], [-fresh, -x, -y], [fresh, -x, y], [fresh, x, -y]]
            differences.append(fresh)
        clauses.append([-(fresh + 1), *differences])
        added.append((clauses, [fresh + 1]))
    return added, {str(node): variable for node, variable in sorted(number.items()) if node}


def test_gate_sat_sweeping_matches_its_golden_file():
    from gate_reference import OPS, evaluation_order

    golden = json.loads((ENCODINGS / "gate-sat-sweeping.golden.json").read_text())
    assert sweep_golden() == golden
    every_input = list(itertools.product(range(4), repeat=2))
    circuit_nodes, reference_nodes = golden["circuit"]["and_nodes"], golden["reference"]["and_nodes"]
    circuit_values = {words: _aig_values(circuit_nodes, words) for words in every_input}
    reference_values = {words: _aig_values(reference_nodes, words) for words in every_input}
    pair = ComparatorNetwork(2, ((0, 1),))

    # 1. The graphs are the netlists: every signal's literal, evaluated here, is the signal's value by the truth
    # tables of tests/gate_reference.py, on every input.
    for record, values, style in (("circuit", circuit_values, "and-or"), ("reference", reference_values, "mux")):
        netlist = lower_network(pair, 2, style=style)
        for words in every_input:
            signals = {f"x{k}[{i}]": words[k] >> i & 1 for k in range(2) for i in range(2)}
            for gate in evaluation_order(netlist):
                signals[gate.out] = OPS[gate.op]([signals.get(s, s) for s in gate.inputs])
            for name, literal in golden[record]["signals"].items():
                assert _literal_value(values[words], literal) == signals[name], (record, name, words)

    # 2. Signatures: each class's literals take the class's signature on the simulated inputs (the listed
    # patterns, then the inputs learnt from refutations), evaluated here.
    patterns = [tuple(words) for words in golden["patterns"]]
    for number, round_ in enumerate(golden["rounds"]):
        assert round_["patterns"] == len(patterns)
        for members in round_["classes"]:
            for side, values in (("reference", reference_values), ("circuit", circuit_values)):
                for literal in members[side]:
                    text = "".join(str(_literal_value(values[words], literal)) for words in patterns)
                    assert text == members["signature"], (number, side, literal)
        # 3. Obligations, in order: each rebuilt literal is the AND of the mapped fanins of its circuit node;
        # every one before the refuted one holds on every input; the refuted one fails on its pattern.
        fanins = {node: (a, b) for node, a, b in reference_nodes}
        mapping = {int(node): literal for node, literal in round_["mapping"].items()}
        mapped = lambda literal: literal if literal >> 1 <= 4 else mapping[literal >> 1] ^ literal & 1
        for node, rebuilt, wanted in round_["obligations"]:
            _, left, right = next(n for n in circuit_nodes if n[0] == node)
            assert rebuilt % 2 == 0 and sorted(fanins[rebuilt >> 1]) == sorted((mapped(left), mapped(right)))
            holds = all(_literal_value(reference_values[w], rebuilt) == _literal_value(reference_values[w], wanted)
                        for w in every_input)
            refuted = round_["refuted"]
            if refuted is not None and refuted["node"] == node:
                bits = {int(k): v for k, v in refuted["pattern"].items()}
                words = (bits.get(1, 0) | bits.get(2, 0) << 1, bits.get(3, 0) | bits.get(4, 0) << 1)
                failing = [w for w in every_input if _literal_value(reference_values[w], rebuilt)
                           != _literal_value(reference_values[w], wanted)]
                assert failing == [words]  # the only input on which the candidate is wrong: the model is forced
                patterns.append(words)
                break
            assert holds, (number, node)
        else:
            assert round_["refuted"] is None
    assert patterns[len(golden["patterns"]):] == [(3, 2)]

    # 4. What the sweep proved: every circuit node's final literal computes what the node computes, on every
    # input; the outputs are proved equal to the reference's, and they are (min, max) by Python's sorted.
    assert golden["finished"]
    for node, literal in golden["mapping"].items():
        assert all(circuit_values[w][int(node)] == _literal_value(reference_values[w], literal) for w in every_input)
    for output in golden["outputs"]:
        assert output["answer"] in ("same literal", "equal")
        assert all(_literal_value(reference_values[w], output["mapped"]) ==
                   _literal_value(reference_values[w], output["reference"]) for w in every_input)
    for words in every_input:
        bits = [_literal_value(circuit_values[words], output["circuit"]) for output in golden["outputs"]]
        assert [bits[0] | bits[1] << 1, bits[2] | bits[3] << 1] == sorted(words)

    # 5. The queries: the clauses are those the document states (re-encoded here), z3 agrees with every answer,
    # and every answer means what the document says it means.
    cut = {golden["reference"]["signals"][name] >> 1 for name in golden["cut"]}
    incremental = [query for query in golden["queries"] if query["solver"] == "incremental"]
    added, variables = _incremental_cnf(reference_nodes, incremental)
    assert [(q["clauses"], q["assumptions"]) for q in incremental] == added
    assert golden["incremental_variables"] == variables
    held = []
    for position, query in enumerate(golden["queries"]):
        equal = all(_literal_value(reference_values[w], left) == _literal_value(reference_values[w], right)
                    for w in every_input for left, right in query["pairs"])
        if query["solver"] == "window":
            (left, right), = query["pairs"]
            clauses, assumptions, leaves = _window_cnf(reference_nodes, cut, left, right)
            assert (query["clauses"], query["assumptions"]) == (clauses, assumptions)
            if query["answer"] == "unsat":
                assert equal  # a proof on the window is a proof
            else:  # a model that sets a cut point freely is not reported; the full cones are asked next
                assert set(leaves) & cut and golden["queries"][position + 1]["pairs"] == query["pairs"]
        else:
            held += query["clauses"]
            clauses = held
            assert query["answer"] == ("unsat" if equal else "sat")
        assert _z3_answer(clauses, query["assumptions"])[0] == query["answer"], position

    # 6. The Tseitin clauses define every loaded node: with the inputs fixed, z3 finds one model, and it gives
    # each node's variable the value evaluated here.
    loaded = {int(node): variable for node, variable in golden["incremental_variables"].items()}
    for words in every_input:
        values = reference_values[words]
        fixed = [variable if values[node] else -variable for node, variable in loaded.items() if node <= 4]
        answer, solver, literal = _z3_answer(held, fixed)
        assert answer == "sat"
        model = solver.model()
        assert all(z3.is_true(model.eval(literal(variable))) == bool(values[node]) for node, variable in loaded.items())
        solver.add(z3.Or([literal(-variable if values[node] else variable) for node, variable in loaded.items()]))
        assert solver.check([literal(number) for number in fixed]) == z3.unsat


# --- two sorted runs as monotone profiles (encodings/two-run-profiles.md) ---------------------------------------

ODD_EVEN_MERGE_4_4 = [(0, 4), (2, 6), (2, 4), (1, 5), (3, 7), (3, 5), (1, 2), (3, 4), (5, 6)]
BITONIC_MERGE_4_4 = [(0, 4), (1, 5), (2, 6), (3, 7), (0, 2), (1, 3), (4, 6), (5, 7), (0, 1), (2, 3), (4, 5), (6, 7)]
PROFILE_QUESTIONS = [
    ("odd-even merge of two ascending runs of 4", [[0, 1, 2, 3], "ascending"], [[4, 5, 6, 7], "ascending"],
     ODD_EVEN_MERGE_4_4),
    ("the same without its last comparator", [[0, 1, 2, 3], "ascending"], [[4, 5, 6, 7], "ascending"],
     ODD_EVEN_MERGE_4_4[:-1]),
    ("bitonic merge of an ascending and a descending run of 4", [[0, 1, 2, 3], "ascending"],
     [[4, 5, 6, 7], "descending"], BITONIC_MERGE_4_4),
]


def profile_golden():
    from sortcheck.engines.networks.profiles import TwoRuns, apply_layers, check_profiles, layers_of
    questions = []
    for title, first, second, comparators in PROFILE_QUESTIONS:
        runs = TwoRuns([(tuple(first[0]), first[1]), (tuple(second[0]), second[1])])
        local = {channel: channel for channel in range(8)}
        profiles = runs.start(local, np.arange(runs.size + 1))
        apply_layers(profiles, layers_of(comparators, local), np.maximum, np.minimum)
        failing = check_profiles(comparators, runs, range(len(comparators)), [(tuple(range(8)), "ascending")])[0]
        questions.append({"title": title, "runs": [first, second], "comparators": [list(p) for p in comparators],
                          "axis": runs.axis, "profiles": profiles.tolist(),
                          "failing": None if failing is None else list(failing)})
    return questions


def _runs_vector(runs, counts: dict) -> list[int]:
    """The 0-1 vector of 8 channels whose sorted runs hold ``counts[group]`` ones each."""
    values = [0] * 8
    for group, (members, order) in enumerate(runs):
        ones = members[len(members) - counts[group]:] if order == "ascending" else members[:counts[group]]
        for channel in ones:
            values[channel] = 1
    return values


def test_two_run_profiles_match_their_golden_file_and_their_definition():
    golden = json.loads((ENCODINGS / "two-run-profiles.golden.json").read_text())
    assert profile_golden() == golden
    assert [q["failing"] is None for q in golden] == [True, False, True]
    for question in golden:
        runs, comparators = question["runs"], [tuple(p) for p in question["comparators"]]
        axis, height = question["axis"], 1 - question["axis"]
        tall = len(runs[height][0])
        for a in range(len(runs[axis][0]) + 1):
            outputs_by_b = []
            for b in range(tall + 1):
                values = _runs_vector(runs, {axis: a, height: b})
                outputs_by_b.append(run(comparators, values))
            for channel in range(8):   # the profile: the least b at which the output is 1, else t + 1
                least = next((b for b in range(tall + 1) if outputs_by_b[b][channel]), tall + 1)
                assert question["profiles"][channel][a] == least
        if question["failing"] is not None:
            a, b = question["failing"]
            values = _runs_vector(runs, {axis: a, height: b})
            assert breaks(Sorts(), values, run(comparators, values))
