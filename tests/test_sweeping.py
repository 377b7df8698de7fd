"""The sweeping package (and-inverter graphs, the equivalence prover, SAT sweeping) against references outside it.

The references: random Boolean expressions evaluated directly in Python (``value_of`` below) for
the graph builders; the truth tables of ``tests/gate_reference.py`` for gate circuits turned into
graphs; every input of a graph evaluated node by node from its fanins (``node_values`` below,
which uses nothing of the package but the fanin lists) for the prover's answers and the sweep's
mappings; and Python's ``>`` and ``sorted`` for the comparators and compare-and-swaps written by
hand in this file. What the package claims (encodings/gate-sat-sweeping.md): ``prove`` says
``equal`` only for literals equal on every input and ``different`` only with an input on which
they differ; a window model that sets a cut point is never reported; a finished sweep maps every
circuit node onto a reference literal that computes it.
"""

from __future__ import annotations

import dataclasses
import itertools
import random
import time

import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from sortcheck.engines.base import Budget
from sortcheck.engines.gates.lifting.discover import circuit_graph
from sortcheck.engines.gates.sweeping import sweep as sweep_module
from sortcheck.engines.gates.sweeping.aig import AndInverterGraph, cone
from sortcheck.engines.gates.sweeping.prover import EquivalenceProver
from sortcheck.engines.gates.sweeping.sweep import sweep
from sortcheck.model import Gate, GateCircuit, OutputWord, Word
from sortcheck.model.circuit import OP_ARITY
from sortcheck.model.families import merge_exchange
from sortcheck.model.lowering import lower_network
from gate_reference import run_gates

INPUTS = 4
EVERY_INPUT = list(itertools.product((0, 1), repeat=INPUTS))
FAST = settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])


# --- references ------------------------------------------------------------------------------------------------

def value_of(expression, bits):
    """The value of an expression tree on input bits, computed directly."""
    kind, *parts = expression
    if kind == "input":
        return bits[parts[0]]
    if kind == "const":
        return parts[0]
    values = [value_of(part, bits) for part in (parts[0] if kind.endswith("_all") else parts)]
    if kind == "not":
        return 1 - values[0]
    if kind == "mux":
        select, when0, when1 = values
        return when1 if select else when0
    if kind in ("and", "and_all"):
        return int(all(values))
    if kind in ("or", "or_all"):
        return int(any(values))
    return sum(values) % 2  # xor, xor_all


def node_values(graph, bits_by_input):
    """Every node's value, computed here from the fanin lists (inputs from ``bits_by_input``, node -> bit)."""
    values = [0] * len(graph)
    for node, fanin in enumerate(graph.fanins):
        if fanin is None:
            values[node] = bits_by_input.get(node, 0)
        else:
            left, right = fanin
            values[node] = (values[left >> 1] ^ left & 1) & (values[right >> 1] ^ right & 1)
    return values


def literal_of(values, literal):
    return values[literal >> 1] ^ literal & 1


def truth_table(graph, literal):
    """The literal's value on every assignment of the graph's first INPUTS inputs."""
    return tuple(literal_of(node_values(graph, dict(zip(graph.inputs, bits))), literal) for bits in EVERY_INPUT)


def signatures_of(assignments, count=INPUTS):
    """Input signatures for these input assignments (assignment ``p`` is bit ``p``)."""
    return [sum(bits[k] << p for p, bits in enumerate(assignments)) for k in range(count)]


# --- expressions -------------------------------------------------------------------------------------------------

LEAVES = st.one_of(st.tuples(st.just("input"), st.integers(0, INPUTS - 1)),
                   st.tuples(st.just("const"), st.integers(0, 1)))


def _extend(children):
    return st.one_of(st.tuples(st.just("not"), children),
                     st.tuples(st.sampled_from(["and", "or", "xor"]), children, children),
                     st.tuples(st.just("mux"), children, children, children),
                     st.tuples(st.sampled_from(["and_all", "or_all", "xor_all"]),
                               st.lists(children, max_size=4).map(tuple)))


EXPRESSIONS = st.recursive(LEAVES, _extend, max_leaves=14)


def build(graph, expression, inputs):
    """The expression in the graph, through the builder of each kind."""
    kind, *parts = expression
    if kind == "input":
        return inputs[parts[0]]
    if kind == "const":
        return parts[0]  # literal 0 is false, 1 is true
    if kind.endswith("_all"):
        literals = [build(graph, part, inputs) for part in parts[0]]
        return {"and_all": graph.and_all, "or_all": graph.or_all, "xor_all": graph.xor_all}[kind](literals)
    literals = [build(graph, part, inputs) for part in parts]
    if kind == "not":
        return literals[0] ^ 1
    return {"and": graph.and_, "or": graph.or_, "xor": graph.xor, "mux": graph.mux}[kind](*literals)


def rewritten(expression):
    """An expression of the same function written another way (De Morgan, XOR as AND/OR, MUX as XOR...)."""
    kind, *parts = expression
    if kind in ("input", "const"):
        return expression
    if kind.endswith("_all"):
        items = [rewritten(part) for part in parts[0]]
        if kind == "and_all":
            return ("not", ("or_all", tuple(("not", item) for item in items)))
        if kind == "or_all":
            return ("not", ("and_all", tuple(("not", item) for item in items)))
        result = ("const", 0)
        for item in reversed(items):
            result = ("xor", item, result)
        return result
    items = [rewritten(part) for part in parts]
    if kind == "not":
        return ("not", items[0])
    if kind == "and":
        return ("not", ("or", ("not", items[0]), ("not", items[1])))
    if kind == "or":
        return ("not", ("and", ("not", items[0]), ("not", items[1])))
    if kind == "xor":
        return ("or", ("and", items[0], ("not", items[1])), ("and", ("not", items[0]), items[1]))
    select, when0, when1 = items
    return ("xor", when0, ("and", select, ("xor", when0, when1)))


def minterm(bits):
    """The expression true on exactly this input assignment."""
    return ("and_all", tuple(("input", k) if bit else ("not", ("input", k)) for k, bit in enumerate(bits)))


def fresh_graph(patterns=EVERY_INPUT):
    graph = AndInverterGraph(patterns=len(patterns))
    inputs = [graph.add_input(signature) for signature in signatures_of(patterns)]
    return graph, inputs


# --- the graph ----------------------------------------------------------------------------------------------------

@FAST
@given(st.lists(EXPRESSIONS, min_size=1, max_size=5))
def test_graph_literals_evaluate_and_simulate_as_their_expressions(expressions):
    graph, inputs = fresh_graph()
    literals = [build(graph, expression, inputs) for expression in expressions]
    for p, bits in enumerate(EVERY_INPUT):
        assignment = dict(zip(graph.inputs, bits))
        expected = [value_of(expression, bits) for expression in expressions]
        assert graph.evaluate(literals, assignment) == expected
        assert [literal_of(node_values(graph, assignment), literal) for literal in literals] == expected
        assert [graph.value(literal) >> p & 1 for literal in literals] == expected  # signatures: one bit per pattern
    # Node numbers are a topological order, and every AND node is hashed: its fanins made it, once.
    seen = set()
    for node, fanin in enumerate(graph.fanins):
        if fanin is not None:
            assert fanin[0] < fanin[1] and max(fanin) >> 1 < node and fanin not in seen and fanin[0] > 1
            seen.add(fanin)
    # Building again makes no node and gives the same literals.
    size = len(graph)
    assert [build(graph, expression, inputs) for expression in expressions] == literals and len(graph) == size


@FAST
@given(EXPRESSIONS, st.integers(0, 2 * INPUTS + 1))
def test_and_folds_and_hashes_as_stated(expression, other):
    graph, inputs = fresh_graph()
    x = build(graph, expression, inputs)
    y = other if other < 2 else (inputs[(other - 2) // 2] ^ other & 1)
    assert graph.and_(x, 0) == 0 and graph.and_(0, x) == 0
    assert graph.and_(x, 1) == x and graph.and_(x, x) == x and graph.and_(x, x ^ 1) == 0
    assert graph.and_(x, y) == graph.and_(y, x)
    assert graph.xor(x, y ^ 1) == graph.xor(x, y) ^ 1  # negations are pulled out of XOR
    assert graph.mux(y, x, x) == x and graph.mux(y, x, x ^ 1) == graph.xor(y, x)


@FAST
@given(st.lists(EXPRESSIONS, min_size=1, max_size=4), st.integers(1, 15), st.integers(0, 2 ** 16 - 1))
def test_extend_gives_the_signatures_of_a_graph_built_on_all_patterns(expressions, first, order):
    shuffled = list(EVERY_INPUT)
    random.Random(order).shuffle(shuffled)
    whole, inputs = fresh_graph(shuffled)
    literals = [build(whole, expression, inputs) for expression in expressions]
    grown, grown_inputs = fresh_graph(shuffled[:first])
    assert [build(grown, expression, grown_inputs) for expression in expressions] == literals
    middle = (first + 16) // 2
    for start, stop in ((first, middle), (middle, 16)):  # two extensions, the second may be empty
        grown.extend(signatures_of(shuffled[start:stop]), stop - start)
    assert grown.patterns == 16 and grown.signatures == whole.signatures


@FAST
@given(st.lists(EXPRESSIONS, min_size=2, max_size=5))
def test_normal_signatures_match_exactly_for_equal_or_complementary_functions(expressions):
    graph, inputs = fresh_graph()
    literals = [build(graph, expression, inputs) for expression in expressions]
    for left, right in itertools.combinations(literals, 2):
        tables = truth_table(graph, left), truth_table(graph, right)
        complement = tuple(1 - bit for bit in tables[1])
        assert (graph.normal(left)[0] == graph.normal(right)[0]) == (tables[0] in (tables[1], complement))
    for literal in literals:
        signature, phase = graph.normal(literal)
        assert graph.value(literal ^ phase) == signature and signature & 1 == 0


def test_gate_ops_become_literals_of_their_truth_tables():
    """Every op of the netlist format with every arity up to 4 and constants among its inputs, against the
    truth tables of tests/gate_reference.py on every input."""
    sources = ["x0[0]", "x0[1]", "x1[0]", "x1[1]", 0, 1]
    rng = random.Random(7)
    gates = []
    for op, (fewest, most) in sorted(OP_ARITY.items()):
        for count in range(fewest, (most or 4) + 1):
            for k in range(6):
                picked = tuple(rng.choice(sources) for _ in range(count))
                gates.append(Gate(f"{op}{count}_{k}", op, picked))
    gates.append(Gate("chain", "mux", ("and2_0", "xor3_1", "nor2_2")))
    circuit = GateCircuit((Word("x0", 2), Word("x1", 2)), tuple(gates),
                          tuple(OutputWord(f"y{k}", (gate.out,)) for k, gate in enumerate(gates)))
    assignments = list(itertools.product(range(4), repeat=2))
    graph, literals = circuit_graph(circuit, signatures_of([[x0 & 1, x0 >> 1, x1 & 1, x1 >> 1]
                                                            for x0, x1 in assignments]), len(assignments))
    for p, words in enumerate(assignments):
        expected = run_gates(circuit, words)
        values = node_values(graph, {node: graph.signatures[node] >> p & 1 for node in graph.inputs})
        assert [literal_of(values, literals[gate.out]) for gate in gates] == expected, words


@FAST
@given(st.lists(EXPRESSIONS, min_size=1, max_size=4), st.sets(st.integers(0, 60), max_size=6))
def test_cone_is_the_transitive_fanin_up_to_the_stop_nodes(expressions, stop_choices):
    graph, inputs = fresh_graph()
    roots = [build(graph, expression, inputs) for expression in expressions]
    and_nodes = [node for node, fanin in enumerate(graph.fanins) if fanin is not None]
    stop = {and_nodes[k % len(and_nodes)] for k in stop_choices} if and_nodes else set()
    inner, leaves = cone(graph, roots, stop)
    reached, frontier = set(), {root >> 1 for root in roots} - {0}
    while frontier:  # written here: walk back from the roots, not through stop nodes or inputs
        node = frontier.pop()
        reached.add(node)
        if graph.fanins[node] is not None and node not in stop:
            frontier |= {literal >> 1 for literal in graph.fanins[node]} - reached - {0}
    assert inner == sorted(n for n in reached if graph.fanins[n] is not None and n not in stop)
    assert leaves == sorted(n for n in reached if graph.fanins[n] is None or n in stop)


# --- the prover ---------------------------------------------------------------------------------------------------

def pair_candidates(expressions):
    """Pairs with a known relation: an expression and its rewriting (equal), the same with one input flipped
    (different on exactly one input), and expressions side by side (anything)."""
    pairs = []
    for k, expression in enumerate(expressions):
        spot = EVERY_INPUT[k * 7 % 16]
        pairs.append((expression, rewritten(expression)))
        pairs.append((expression, ("xor", rewritten(expression), minterm(spot))))
    pairs += list(zip(expressions, expressions[1:]))
    return pairs


def check_answer(graph, answer, left, right):
    """The answer against every input: ``equal`` exactly when the tables agree; a pattern is an input on which
    the literals differ, whatever the inputs it leaves out are."""
    equal = truth_table(graph, left) == truth_table(graph, right)
    assert answer.status == ("equal" if equal else "different"), (left, right)
    if answer.status == "different":
        for filler in (0, 1):
            assignment = {node: answer.pattern.get(node, filler) for node in graph.inputs}
            values = node_values(graph, assignment)
            assert literal_of(values, left) != literal_of(values, right), (answer.pattern, filler)


@FAST
@given(st.lists(EXPRESSIONS, min_size=1, max_size=4))
def test_prove_says_equal_exactly_when_every_input_agrees_and_its_inputs_are_real(expressions):
    graph, inputs = fresh_graph()
    pairs = [(build(graph, a, inputs), build(graph, b, inputs)) for a, b in pair_candidates(expressions)]
    prover = EquivalenceProver(graph, Budget())  # one solver for every question, as in a sweep
    try:
        for left, right in pairs:
            check_answer(graph, prover.prove(left, right), left, right)
    finally:
        prover.close()


def test_a_pair_that_differs_on_one_input_is_refuted_with_exactly_that_input():
    graph, inputs = fresh_graph()
    prover = EquivalenceProver(graph, Budget())
    base = ("xor_all", (("and", ("input", 0), ("input", 1)), ("or", ("input", 2), ("input", 3))))
    for spot in EVERY_INPUT:
        answer = prover.prove(build(graph, base, inputs), build(graph, ("xor", base, minterm(spot)), inputs))
        assert answer.status == "different" and answer.pattern == dict(zip(graph.inputs, spot))
    prover.close()


@FAST
@given(st.lists(EXPRESSIONS, min_size=1, max_size=4), st.integers(0, 2 ** 16 - 1))
def test_prove_all_agrees_with_prove_pair_by_pair(expressions, seed):
    graph, inputs = fresh_graph()
    pairs = [(build(graph, a, inputs), build(graph, b, inputs)) for a, b in pair_candidates(expressions)]
    rng = random.Random(seed)
    batches = [rng.sample(pairs, rng.randint(1, len(pairs))) for _ in range(3)]
    batches.append([pair for pair in pairs if truth_table(graph, pair[0]) == truth_table(graph, pair[1])])
    single, shared = EquivalenceProver(graph, Budget()), EquivalenceProver(graph, Budget())
    for batch in batches:  # the shared prover carries every earlier batch's clauses and switch
        alone = [single.prove(left, right).status for left, right in batch]
        fresh = EquivalenceProver(graph, Budget())
        for prover in (shared, fresh):
            answer = prover.prove_all(batch)
            assert answer.status == ("equal" if set(alone) <= {"equal"} else "different")
            if answer.status == "different":
                values = node_values(graph, {node: answer.pattern.get(node, 0) for node in graph.inputs})
                assert any(literal_of(values, left) != literal_of(values, right) for left, right in batch)
        fresh.close()
    for prover in (single, shared):
        prover.close()


@FAST
@given(st.lists(EXPRESSIONS, min_size=1, max_size=4), st.sets(st.integers(0, 60), min_size=1, max_size=8))
def test_windows_answer_as_every_input_does_whatever_the_cut(expressions, cut_choices):
    graph, inputs = fresh_graph()
    pairs = [(build(graph, a, inputs), build(graph, b, inputs)) for a, b in pair_candidates(expressions)]
    and_nodes = [node for node, fanin in enumerate(graph.fanins) if fanin is not None]
    if not and_nodes:
        return
    prover = EquivalenceProver(graph, Budget(), cut=frozenset(and_nodes[k % len(and_nodes)] for k in cut_choices))
    for left, right in pairs:
        check_answer(graph, prover.prove(left, right), left, right)
    prover.close()


def _cut_example():
    """Four inputs and ``c = a AND b``, to be a cut point."""
    graph = AndInverterGraph(patterns=1)
    a, b, x, y = (graph.add_input(0) for _ in range(4))
    c = graph.and_(a, b)
    return graph, (a, b, x, y), c


def test_a_window_model_that_sets_a_cut_point_is_not_reported():
    graph, (a, b, x, y), c = _cut_example()
    # c AND NOT a is false on every input, but not for every value of c: the window has a model (c = 1,
    # a = 0) that no input gives; the answer must come from the whole cone.
    prover = EquivalenceProver(graph, Budget(), cut=frozenset({c >> 1}))
    answer = prover.prove(graph.and_(c, a ^ 1), 0)
    assert answer.status == "equal"
    assert (prover.figures.window_calls, prover.figures.windows_undecided, prover.figures.sat_calls) == (1, 1, 1)
    # The same window shape on a pair that really differs: the window's model is not taken either; the
    # whole cone gives a real input.
    left, right = graph.and_(c, x), graph.and_(a, x)
    answer = prover.prove(left, right)
    check_answer(graph, answer, left, right)
    assert (prover.figures.window_calls, prover.figures.windows_undecided, prover.figures.sat_calls) == (2, 2, 2)
    prover.close()


def test_a_window_proof_holds_for_every_value_of_the_cut_point():
    graph, (a, b, x, y), c = _cut_example()
    prover = EquivalenceProver(graph, Budget(), cut=frozenset({c >> 1}))
    left, right = graph.mux(c, x, y), graph.xor(x, graph.and_(c, graph.xor(x, y)))  # equal for either value of c
    assert left != right and prover.prove(left, right).status == "equal"
    assert (prover.figures.window_calls, prover.figures.sat_calls) == (1, 0)  # decided by the window alone
    # A window that reaches only inputs is the whole cone: its model is a real input, reported at once.
    answer = prover.prove(graph.and_(x, y), graph.or_(x, y))
    check_answer(graph, answer, graph.and_(x, y), graph.or_(x, y))
    assert (prover.figures.window_calls, prover.figures.windows_undecided, prover.figures.sat_calls) == (2, 0, 0)
    # The pair's own nodes are not cut: the cut point c itself is proved equal to another form of a AND b.
    other = graph.xor(a, graph.and_(a, b ^ 1))
    assert other != c and prover.prove(c, other).status == "equal"
    assert (prover.figures.window_calls, prover.figures.sat_calls) == (3, 0)
    prover.close()


def test_a_spent_budget_leaves_a_question_undecided_never_equal():
    graph, inputs = fresh_graph()
    left = build(graph, ("xor", ("input", 0), ("input", 1)), inputs)
    right = build(graph, rewritten(("xor", ("input", 0), ("input", 1))), inputs)
    prover = EquivalenceProver(graph, Budget(deadline=time.monotonic() - 1))
    assert prover.prove(left, right).status == "undecided" and prover.figures.undecided_calls == 1
    prover.close()


# --- the sweep ----------------------------------------------------------------------------------------------------

def _word_bits(word, width):
    return [f"{word}[{i}]" for i in range(width)]


def ripple_comparator(width, spoil=None):
    """``[x0 > x1]`` as the borrow out of ``x1 - x0`` (AND/OR/XNOR/NOT, least significant bit first); with
    ``spoil = (a, b)`` the output is also flipped on exactly the input ``x0 = a, x1 = b``."""
    a, b = _word_bits("x0", width), _word_bits("x1", width)
    gates, borrow = [], 0
    for i in range(width):
        gates += [Gate(f"nb{i}", "not", (b[i],)), Gate(f"t{i}", "and", (a[i], f"nb{i}")),
                  Gate(f"e{i}", "xnor", (a[i], b[i])), Gate(f"p{i}", "and", (f"e{i}", borrow)),
                  Gate(f"borrow{i + 1}", "or", (f"t{i}", f"p{i}"))]
        borrow = f"borrow{i + 1}"
    out = borrow
    if spoil is not None:
        literals = []
        for word, value in ((a, spoil[0]), (b, spoil[1])):
            for i, bit in enumerate(word):
                if value >> i & 1:
                    literals.append(bit)
                else:
                    gates.append(Gate(f"n_{bit}", "not", (bit,)))
                    literals.append(f"n_{bit}")
        gates += [Gate("spot", "and", tuple(literals)), Gate("spoilt", "xor", (borrow, "spot"))]
        out = "spoilt"
    return GateCircuit((Word("x0", width), Word("x1", width)), tuple(gates), (OutputWord("y", (out,)),))


def mux_comparator(width):
    """``[x0 > x1]`` by muxes, least significant bit first: at the highest bit where the words differ,
    ``x0``'s bit decides."""
    a, b = _word_bits("x0", width), _word_bits("x1", width)
    gates, greater = [], 0
    for i in range(width):
        gates += [Gate(f"d{i}", "xor", (a[i], b[i])), Gate(f"g{i}", "mux", (f"d{i}", greater, a[i]))]
        greater = f"g{i}"
    return GateCircuit((Word("x0", width), Word("x1", width)), tuple(gates), (OutputWord("y", (greater,)),))


def graphs_on(circuit, reference, assignments):
    """Both netlists as graphs on the same inputs, simulated on these input words."""
    width = circuit.width
    rows = [[words[k] >> i & 1 for k in range(len(words)) for i in range(width)] for words in assignments]
    signatures = signatures_of(rows, circuit.words * width)
    return circuit_graph(circuit, signatures, len(rows)), circuit_graph(reference, signatures, len(rows))


def every_word_input(circuit):
    return list(itertools.product(range(1 << circuit.width), repeat=circuit.words))


def assert_mapping_computes_the_circuit(circuit, graph, reference, swept):
    """The claim of a finished sweep, on every input: each circuit node's reference literal computes it."""
    width = circuit.width
    for words in every_word_input(circuit):
        bits = dict(zip(graph.inputs, [words[k] >> i & 1 for k in range(circuit.words) for i in range(width)]))
        mine, theirs = node_values(graph, bits), node_values(reference, bits)
        for node, fanin in enumerate(graph.fanins):
            if fanin is not None:
                assert mine[node] == literal_of(theirs, swept.mapping[node]), (words, node)


def outputs_verdict(circuit, reference_netlist, literals, reference_literals, swept):
    """Per output bit: the mapped literal is the reference's, or the prover's answer on the two."""
    answers = []
    for mine, theirs in zip(circuit.outputs, reference_netlist.outputs):
        for bit, wanted_bit in zip(mine.bits, theirs.bits):
            mapped, wanted = swept.literal(literals[bit]), reference_literals[wanted_bit]
            if mapped == wanted:
                answers.append(("equal", None))
            else:
                answer = swept.prover.prove(mapped, wanted)
                answers.append((answer.status, answer.pattern))
    return answers


def test_a_ripple_comparator_is_proved_equal_to_a_mux_comparator():
    width = 3
    circuit, reference = ripple_comparator(width), mux_comparator(width)
    for netlist in (circuit, reference):  # both compute [x0 > x1], by Python's > on every input
        assert all(run_gates(netlist, words) == [int(words[0] > words[1])] for words in every_word_input(netlist))
    assignments = random.Random(3).sample(every_word_input(circuit), 6)
    (graph, literals), (reference_graph, reference_literals) = graphs_on(circuit, reference, assignments)
    swept = sweep(graph, reference_graph, Budget())
    assert swept.finished and not swept.timed_out
    assert_mapping_computes_the_circuit(circuit, graph, reference_graph, swept)
    assert outputs_verdict(circuit, reference, literals, reference_literals, swept) == [("equal", None)]


@pytest.mark.parametrize("spot", [(5, 3), (0, 7), (6, 6)])
def test_a_comparator_wrong_on_one_input_is_refuted_on_that_input_even_unsimulated(spot):
    width = 3
    circuit, reference = ripple_comparator(width, spoil=spot), mux_comparator(width)
    wrong = [words for words in every_word_input(circuit) if run_gates(circuit, words) != [int(words[0] > words[1])]]
    assert wrong == [spot]
    simulated = [words for words in every_word_input(circuit) if words != spot]  # the signatures cannot tell
    (graph, literals), (reference_graph, reference_literals) = graphs_on(circuit, reference, simulated)
    swept = sweep(graph, reference_graph, Budget())
    assert swept.finished and swept.refuted >= 1  # the output's candidate was refuted, on the spot
    assert_mapping_computes_the_circuit(circuit, graph, reference_graph, swept)
    (status, pattern), = outputs_verdict(circuit, reference, literals, reference_literals, swept)
    bits = [spot[k] >> i & 1 for k in range(2) for i in range(width)]
    assert status == "different" and pattern == dict(zip(graph.inputs, bits))


@pytest.mark.parametrize("style", ["and-or", "xor"])
def test_lowered_sorters_are_proved_equal_to_the_mux_lowering(style):
    network = merge_exchange(3)
    circuit, reference = lower_network(network, 2, style=style), lower_network(network, 2, style="mux")
    assert all(run_gates(circuit, words) == sorted(words) for words in every_word_input(circuit))
    assignments = random.Random(5).sample(every_word_input(circuit), 8)
    (graph, literals), (reference_graph, reference_literals) = graphs_on(circuit, reference, assignments)
    swept = sweep(graph, reference_graph, Budget())
    assert swept.finished
    assert_mapping_computes_the_circuit(circuit, graph, reference_graph, swept)
    assert all(status == "equal" for status, _ in outputs_verdict(circuit, reference, literals, reference_literals,
                                                                   swept))


# Random circuits on two 2-bit words and a reference written independently: every gate rewritten by another
# formula (so the reference has the same functions in other shapes), maybe with one gate's op changed.

def _demorgan(out, inputs, dual, negate=True):
    """``op(inputs)`` as ``NOT dual(NOT inputs)`` (``and`` <-> ``or``); without ``negate``, ``nand`` as
    ``or(NOT inputs)`` and ``nor`` as ``and(NOT inputs)``."""
    gates = [Gate(f"{out}_n{k}", "not", (source,)) for k, source in enumerate(inputs)]
    negated = tuple(f"{out}_n{k}" for k in range(len(inputs)))
    if negate:
        return gates + [Gate(f"{out}_d", dual, negated), Gate(out, "not", (f"{out}_d",))]
    return gates + [Gate(out, dual, negated)]


def rewrite_gate(gate, prefix):
    """The gate as other gates computing the same function, every signal renamed with ``prefix``."""
    out = prefix + gate.out
    inputs = tuple(source if isinstance(source, int) or source.startswith("x") else prefix + source
                   for source in gate.inputs)
    if gate.op in ("and", "or", "nand", "nor"):
        dual = "or" if gate.op in ("and", "nand") else "and"
        return _demorgan(out, inputs, dual, negate=gate.op in ("and", "or"))
    if gate.op in ("xor", "xnor"):  # a chain of two-input XORs as OR of ANDs
        gates, acc = [], inputs[0]
        for k, source in enumerate(inputs[1:]):
            name = out if k == len(inputs) - 2 and gate.op == "xor" else f"{out}_x{k}"
            gates += [Gate(f"{out}_m{k}", "not", (source,)), Gate(f"{out}_l{k}", "and", (acc, f"{out}_m{k}")),
                      Gate(f"{out}_na{k}", "not", (acc,)), Gate(f"{out}_r{k}", "and", (f"{out}_na{k}", source)),
                      Gate(name, "or", (f"{out}_l{k}", f"{out}_r{k}"))]
            acc = name
        if gate.op == "xnor":
            gates.append(Gate(out, "not", (acc,)))
        return gates
    if gate.op == "not":
        return [Gate(f"{out}_a", "nand", (inputs[0], inputs[0])), Gate(out, "and", (f"{out}_a", 1))]
    select, when0, when1 = inputs  # mux as when0 XOR (select AND (when0 XOR when1))
    return [Gate(f"{out}_d", "xor", (when0, when1)), Gate(f"{out}_s", "and", (select, f"{out}_d")),
            Gate(out, "xor", (when0, f"{out}_s"))]


@st.composite
def circuit_pairs(draw):
    """A random circuit (every gate an output bit), maybe with one op changed, and the unchanged circuit
    rewritten gate by gate as the reference."""
    sources = ["x0[0]", "x0[1]", "x1[0]", "x1[1]", 0, 1]
    gates = []
    for k in range(draw(st.integers(1, 10))):
        op = draw(st.sampled_from(sorted(OP_ARITY)))
        fewest, most = OP_ARITY[op]
        count = draw(st.integers(fewest, min(most or 3, 3)))
        gates.append(Gate(f"g{k}", op, tuple(draw(st.lists(st.sampled_from(sources), min_size=count,
                                                                  max_size=count)))))
        sources.append(f"g{k}")
    words = (Word("x0", 2), Word("x1", 2))
    reference = GateCircuit(words, tuple(part for gate in gates for part in rewrite_gate(gate, "r_")),
                            tuple(OutputWord(f"y{k}", ("r_" + g.out,)) for k, g in enumerate(gates)))
    changeable = [k for k, gate in enumerate(gates) if gate.op not in ("not", "mux")]
    if changeable and draw(st.booleans()):
        k = draw(st.sampled_from(changeable))
        others = [op for op in ("and", "or", "xor", "nand", "nor", "xnor") if op != gates[k].op]
        gates[k] = dataclasses.replace(gates[k], op=draw(st.sampled_from(others)))
    circuit = GateCircuit(words, tuple(gates), tuple(OutputWord(f"y{k}", (g.out,)) for k, g in enumerate(gates)))
    return circuit, reference


@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(circuit_pairs(), st.lists(st.tuples(st.integers(0, 3), st.integers(0, 3)), min_size=1, max_size=4),
       st.booleans())
def test_sweeps_of_random_circuits_prove_and_refute_as_every_input_says(pair, assignments, with_cut):
    circuit, reference = pair
    (graph, literals), (reference_graph, reference_literals) = graphs_on(circuit, reference, assignments)
    # Optionally the reference's gate outputs as cut points and preferred targets (as lifting passes word bits).
    preferred = {reference_literals["r_" + gate.out] >> 1 for gate in circuit.gates} if with_cut else None
    swept = sweep(graph, reference_graph, Budget(), preferred=preferred)
    # Four inputs: every refutation adds a new input to the signatures, so the sweep settles.
    assert swept.finished and swept.rounds <= 17 and swept.undecided == 0
    assert_mapping_computes_the_circuit(circuit, graph, reference_graph, swept)
    inputs = every_word_input(circuit)
    truth = [[run_gates(circuit, words)[k] == run_gates(reference, words)[k] for words in inputs]
             for k in range(len(circuit.outputs))]
    for k, (status, pattern) in enumerate(outputs_verdict(circuit, reference, literals, reference_literals, swept)):
        assert status == ("equal" if all(truth[k]) else "different"), k
        if status == "different":
            bits = [pattern.get(node, 0) for node in graph.inputs]
            words = (bits[0] | bits[1] << 1, bits[2] | bits[3] << 1)
            assert not truth[k][inputs.index(words)]


class _StubbornProver(EquivalenceProver):
    """Leaves every other incremental call undecided, as a conflict limit would."""

    def _solve(self, assumptions):
        self.stubborn = getattr(self, "stubborn", 0) + 1
        return None if self.stubborn % 2 else super()._solve(assumptions)


def test_undecided_candidates_are_rebuilt_and_the_mapping_stays_right():
    network = merge_exchange(3)
    circuit, reference = lower_network(network, 2, style="xor"), lower_network(network, 2, style="mux")
    assignments = random.Random(11).sample(every_word_input(circuit), 8)
    (graph, _), (reference_graph, _) = graphs_on(circuit, reference, assignments)
    prover = _StubbornProver(reference_graph, Budget())
    swept = sweep(graph, reference_graph, Budget(), prover=prover)
    assert swept.finished and swept.undecided >= 1
    assert_mapping_computes_the_circuit(circuit, graph, reference_graph, swept)


def test_a_sweep_out_of_rounds_or_time_is_not_finished():
    width = 3
    circuit, reference = ripple_comparator(width, spoil=(5, 3)), mux_comparator(width)
    simulated = [words for words in every_word_input(circuit) if words != (5, 3)]
    (graph, _), (reference_graph, _) = graphs_on(circuit, reference, simulated)
    original = sweep_module.MAX_ROUNDS
    sweep_module.MAX_ROUNDS = 1
    try:
        swept = sweep(graph, reference_graph, Budget())
    finally:
        sweep_module.MAX_ROUNDS = original
    assert (swept.finished, swept.rounds, swept.refuted) == (False, 1, 1)
    (graph, _), (reference_graph, _) = graphs_on(circuit, reference, simulated)
    swept = sweep(graph, reference_graph, Budget(deadline=time.monotonic() - 1))
    assert swept.timed_out and not swept.finished


def test_the_graphs_must_share_their_inputs():
    circuit, reference = AndInverterGraph(patterns=1), AndInverterGraph(patterns=1)
    for _ in range(3):
        circuit.add_input(0)
    reference.and_(reference.add_input(0), reference.add_input(0))  # node 3 is an AND node here
    reference.add_input(0)
    with pytest.raises(ValueError):
        sweep(circuit, reference, Budget())
