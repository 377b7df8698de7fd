"""The bdd engine against the independent evaluator of tests/gate_reference.py (every input evaluated, every
property), on lowered networks, counting sorters and broken circuits; fewest-ones counterexamples against brute
force; both BDD backends; limits.

The reference verdicts come from evaluating every input gate by gate with the truth tables written out in
``tests/gate_reference.py`` and judging with Python's ``sorted`` (``tests/reference.py``); no code of the engine
is involved.  Batcher's merging network on 4 channels, (0,2), (1,3), (1,2), is from Knuth, TAOCP vol. 3, 5.3.4
(given from memory; the reference evaluation below confirms that it merges and does not sort).
"""

from __future__ import annotations

import dataclasses
import itertools
import random

import pytest

from gate_reference import breaks_words, run_everywhere, run_gates, signed_values
from sortcheck.engines import ENGINES, Budget, Status, StopReason, check
from sortcheck.engines.gates.bdd import BddEngine, prove_with_bdds
from sortcheck.engines.gates.bdd import manager as manager_module
from sortcheck.engines.gates.bdd.conditions import at_least_value, at_most, sorted_bits
from sortcheck.engines.gates.bdd.manager import BddManager, choose_backend, cudd_available
from sortcheck.engines.gates.bdd.orders import first_round, interleaved, second_round, word_major
from sortcheck.engines.gates.bdd.witness import fewest_ones
from sortcheck.explain.gate_minimal import minimize_circuit_counterexample
from sortcheck.model import (ComparatorNetwork, Gate, GateCircuit, Median, Merges, OutputWord, PartialSort, Selects,
                             Sorts)
from sortcheck.model.counting import counting_sorter
from sortcheck.model.families import FAMILIES, merge_exchange
from sortcheck.model.lowering import lower_network

BACKENDS = ["cudd", "python"] if cudd_available() else ["python"]
BATCHER_MERGER_4 = ComparatorNetwork(4, ((0, 2), (1, 3), (1, 2)))


def with_outputs(circuit: GateCircuit, outputs) -> GateCircuit:
    return dataclasses.replace(circuit, outputs=tuple(outputs), claim=None)


def reversed_outputs(circuit: GateCircuit) -> GateCircuit:
    return with_outputs(circuit, [OutputWord(f"y{i}", word.bits) for i, word in enumerate(circuit.outputs[::-1])])


def failing_raw_inputs(circuit: GateCircuit, prop):
    """Every raw input (unsigned bit patterns) on which the reference evaluation breaks ``prop``.

    The circuit runs on every input at once (``run_everywhere``, numpy, gate by gate); each input is then
    judged with ``breaks_words`` (Python's ``sorted``).
    """
    width = circuit.width
    inputs, outputs = run_everywhere(circuit)
    failing = []
    for raw, out in zip(inputs.tolist(), outputs.tolist()):
        if breaks_words(prop, signed_values(raw, width, prop.signed), signed_values(out, width, prop.signed), width):
            failing.append(tuple(raw))
    return failing


def ones(raw) -> int:
    return sum(bin(word).count("1") for word in raw)


def assert_agrees(circuit: GateCircuit, prop, verdict, failing=None) -> None:
    """The verdict is the reference's; a counterexample fails on the reference and has the fewest one bits."""
    failing = failing_raw_inputs(circuit, prop) if failing is None else failing
    assert verdict.status is (Status.REFUTED if failing else Status.PROVED), (prop, verdict.scope)
    if not failing:
        return
    example = verdict.counterexample
    width = circuit.width
    raw = tuple(value % (1 << width) for value in example.input)
    assert raw in failing
    assert tuple(signed_values(run_gates(circuit, raw), width, prop.signed)) == tuple(example.output)
    assert example.minimal is True and example.ones == ones(raw) == min(map(ones, failing))


# -- small circuits of every property, proved and refuted ---------------------------------------------------------

def property_cases():
    """(name, circuit, property) for every property, the circuits at most 12 input bits."""
    sorter = lower_network(merge_exchange(4), 3, style="mux")
    yield "sorts", sorter, Sorts()
    yield "sorts (not descending)", sorter, Sorts(order="descending")
    yield "sorts descending", reversed_outputs(sorter), Sorts(order="descending")
    yield "sorts signed", lower_network(merge_exchange(4), 3, style="and-or", signed=True), Sorts(signed=True)
    yield "unsigned sorter, signed property", sorter, Sorts(signed=True)
    yield "counting sorter signed", counting_sorter(4, 3, signed=True), Sorts(signed=True)
    merger = lower_network(BATCHER_MERGER_4, 3, style="and-or")
    yield "merges", merger, Merges(split=2)
    yield "merger does not sort", merger, Sorts()
    yield "merger split elsewhere", merger, Merges(split=1)
    yield "merges signed", lower_network(BATCHER_MERGER_4, 3, style="mux", signed=True), Merges(split=2, signed=True)
    smallest = with_outputs(lower_network(merge_exchange(5), 2), lower_network(merge_exchange(5), 2).outputs[:2])
    yield "selects sorted", smallest, Selects(count=2, sorted=True)
    swapped = with_outputs(smallest, smallest.outputs[::-1])
    yield "selects unsorted", swapped, Selects(count=2)
    yield "selects unsorted, asked sorted", swapped, Selects(count=2, sorted=True)
    five = lower_network(merge_exchange(5), 2, style="mux")
    yield "median of a sorter", five, Median()
    yield "median, one output word", with_outputs(five, five.outputs[2:3]), Median()
    yield "median, the wrong word", with_outputs(five, five.outputs[1:2]), Median()
    keyed = lower_network(merge_exchange(4), 3, style="and-or", key_bits=2)
    yield "partial sort by the key", keyed, PartialSort(key_bits=2)
    yield "partial sort by the key is no sort", keyed, Sorts()
    yield "partial sort, key too long", keyed, PartialSort(key_bits=3)
    yield "partial sort signed", lower_network(merge_exchange(4), 3, key_bits=1, signed=True), \
        PartialSort(key_bits=1, signed=True)


CASES = list(property_cases())


@pytest.mark.parametrize("name, circuit, prop", CASES, ids=[case[0] for case in CASES])
def test_verdicts_agree_with_every_input_evaluated(name, circuit, prop):
    verdict = BddEngine().check(circuit, prop, Budget.of(120))
    assert_agrees(circuit, prop, verdict)
    assert verdict.engine == "bdd" and verdict.figures["thresholds_checked"] == 1 << circuit.width


def test_the_cases_cover_every_property_proved_and_refuted():
    outcomes = {(type(prop).__name__, not failing_raw_inputs(circuit, prop)) for _, circuit, prop in CASES}
    assert outcomes == {(kind, holds) for kind in ("Sorts", "Merges", "Selects", "Median", "PartialSort")
                        for holds in (True, False)}


@pytest.mark.parametrize("family", sorted(FAMILIES))
def test_lowered_families_and_counting_sorters_are_proved(family):
    circuit = lower_network(FAMILIES[family](4), 3, style="xor")
    assert not failing_raw_inputs(circuit, Sorts())
    assert BddEngine().check(circuit, Sorts(), Budget.of(120)).status is Status.PROVED
    counting = counting_sorter(5, 2)
    assert not failing_raw_inputs(counting, Sorts())
    assert BddEngine().check(counting, Sorts(), Budget.of(120)).status is Status.PROVED


# -- broken circuits ------------------------------------------------------------------------------------------------

FLIPS = {"and": "or", "or": "and", "nand": "nor", "nor": "nand", "xor": "xnor", "xnor": "xor", "not": None,
         "mux": None}


def flipped(circuit: GateCircuit, index: int) -> GateCircuit:
    gate = circuit.gates[index]
    changed = Gate(gate.out, FLIPS[gate.op], gate.inputs)
    return dataclasses.replace(circuit, gates=circuit.gates[:index] + (changed,) + circuit.gates[index + 1:])


def dropped(circuit: GateCircuit, index: int) -> GateCircuit:
    """The gate removed and every reader of its output wired to its first input instead."""
    gone = circuit.gates[index]
    replacement = gone.inputs[0]

    def rewire(signal):
        return replacement if signal == gone.out else signal

    gates = tuple(Gate(g.out, g.op, tuple(map(rewire, g.inputs))) for g in circuit.gates if g is not gone)
    outputs = tuple(OutputWord(w.name, tuple(map(rewire, w.bits))) for w in circuit.outputs)
    return dataclasses.replace(circuit, gates=gates, outputs=outputs)


def mutants(seed: int, count: int):
    rng = random.Random(seed)
    bases = [(lower_network(merge_exchange(4), 3, style="and-or"), Sorts()),
             (counting_sorter(4, 3), Sorts()),
             (lower_network(merge_exchange(4), 3, style="mux", signed=True), Sorts(signed=True)),
             (lower_network(BATCHER_MERGER_4, 3, style="xor"), Merges(split=2)),
             (lower_network(merge_exchange(5), 2, style="and-or", key_bits=1), PartialSort(key_bits=1))]
    for number in range(count):
        circuit, prop = bases[number % len(bases)]
        flippable = [i for i, gate in enumerate(circuit.gates) if FLIPS[gate.op]]
        if number % 2:
            yield f"flip-{number}", flipped(circuit, rng.choice(flippable)), prop
        else:
            yield f"drop-{number}", dropped(circuit, rng.randrange(len(circuit.gates))), prop


MUTANTS = list(mutants(seed=20250101, count=20))


@pytest.mark.parametrize("name, circuit, prop", MUTANTS, ids=[case[0] for case in MUTANTS])
def test_broken_circuits_get_the_reference_verdict_and_the_fewest_ones_counterexample(name, circuit, prop):
    failing = failing_raw_inputs(circuit, prop)
    verdict = BddEngine().check(circuit, prop, Budget.of(120))
    assert_agrees(circuit, prop, verdict, failing)


def test_most_mutants_are_broken():
    assert sum(bool(failing_raw_inputs(circuit, prop)) for _, circuit, prop in MUTANTS) >= 12


def test_the_report_keeps_a_proved_minimal_counterexample():
    circuit = flipped(counting_sorter(4, 2), 30)
    verdict = BddEngine().check(circuit, Sorts(), Budget())
    example = verdict.counterexample
    assert example.minimal and example.ones == ones(example.input) == min(map(ones, failing_raw_inputs(circuit, Sorts())))
    assert minimize_circuit_counterexample(circuit, Sorts(), example, Budget()) == example


# -- backends, orders, limits ---------------------------------------------------------------------------------------

@pytest.mark.skipif(not cudd_available(), reason="dd.cudd does not import here")
@pytest.mark.parametrize("name, circuit, prop", CASES[::3] + MUTANTS[::4],
                         ids=[case[0] for case in CASES[::3] + MUTANTS[::4]])
def test_the_pure_python_backend_gives_the_same_verdicts_and_counterexamples(name, circuit, prop):
    verdicts = [prove_with_bdds(circuit, prop, Budget(), backend=backend, orders=["word-major"])
                for backend in ("cudd", "python")]
    assert verdicts[1].figures["backend"] == "python"
    assert verdicts[0].status is verdicts[1].status
    assert verdicts[0].counterexample == verdicts[1].counterexample
    assert verdicts[0].figures["output_nodes"] > 0


def test_without_cudd_the_pure_python_backend_is_chosen(monkeypatch):
    monkeypatch.setattr(manager_module, "cudd_available", lambda: False)
    assert choose_backend() == "python"
    verdict = prove_with_bdds(counting_sorter(3, 2), Sorts(), Budget())
    assert verdict.status is Status.PROVED and verdict.figures["backend"] == "python"
    assert "dd's pure-Python BDDs" in verdict.scope


@pytest.mark.parametrize("backend", BACKENDS)
@pytest.mark.parametrize("order", ["word-major", "interleaved", "dynamic"])
def test_every_order_gives_the_same_verdict(backend, order):
    circuit = flipped(lower_network(merge_exchange(4), 3, style="mux"), 12)
    failing = failing_raw_inputs(circuit, Sorts())
    verdict = prove_with_bdds(circuit, Sorts(), Budget(), backend=backend, orders=[order])
    assert verdict.figures["order"] == order
    assert_agrees(circuit, Sorts(), verdict, failing)


def test_orders_and_rounds():
    circuit = counting_sorter(2, 2)
    assert word_major(circuit) == ("x0[1]", "x0[0]", "x1[1]", "x1[0]")
    assert interleaved(circuit) == ("x0[1]", "x1[1]", "x0[0]", "x1[0]")
    assert [(a.order, a.node_limit) for a in first_round(1600)] == [("word-major", 100), ("interleaved", 100)]
    assert [a.order for a in second_round(1600, progress={"interleaved": 1.5})] == ["interleaved", "word-major"]
    assert [a.order for a in second_round(1600, ["dynamic", "word-major"])] == ["word-major", "dynamic"]
    with pytest.raises(ValueError, match="unknown variable order"):
        first_round(10, ["sideways"])


@pytest.mark.parametrize("backend", BACKENDS)
def test_node_limit_reached_is_an_honest_unknown(backend):
    circuit = lower_network(merge_exchange(6), 4)
    verdict = prove_with_bdds(circuit, Sorts(), Budget(), node_limit=300, backend=backend)
    assert verdict.status is Status.UNKNOWN and verdict.stop is StopReason.SIZE_LIMIT
    assert verdict.figures["nodes_reached"] > 300
    assert "nothing is proved" in verdict.scope and "node limit" in verdict.scope
    assert "simulated inputs found no failure, which proves nothing" in verdict.scope
    assert [a["outcome"] for a in verdict.figures["attempts"]] == ["size-limit"] * 4


def test_past_the_node_limit_a_broken_circuit_is_still_refuted_by_simulation():
    circuit = flipped(lower_network(merge_exchange(6), 4), 40)
    verdict = prove_with_bdds(circuit, Sorts(), Budget(), node_limit=300)
    assert verdict.status is Status.REFUTED and verdict.figures["method"] == "simulation"
    example = verdict.counterexample
    assert list(example.output) == run_gates(circuit, example.input)  # the independent evaluator
    assert breaks_words(Sorts(), list(example.input), list(example.output), 4) and example.minimal is None
    assert "not proved to have the fewest" in verdict.scope
    quiet = prove_with_bdds(circuit, Sorts(), Budget(), node_limit=300, samples=0)
    assert quiet.status is Status.UNKNOWN and quiet.stop is StopReason.SIZE_LIMIT


def test_the_first_order_that_completes_decides():
    circuit = lower_network(merge_exchange(4), 6, style="mux")  # comparisons of wide words: interleaved suits them
    verdict = prove_with_bdds(circuit, Sorts(), Budget(), node_limit=16 * 1000)
    assert verdict.status is Status.PROVED
    assert [a["outcome"] for a in verdict.figures["attempts"]][-1] == "proved"
    assert verdict.figures["order"] == verdict.figures["attempts"][-1]["order"]
    assert verdict.figures["order"] in verdict.scope


def test_an_expired_budget_is_a_timeout():
    verdict = prove_with_bdds(counting_sorter(4, 2), Sorts(), Budget(deadline=0.0))
    assert verdict.status is Status.UNKNOWN and verdict.stop is StopReason.TIMEOUT
    assert "nothing is proved" in verdict.scope


def test_a_deadline_holds_through_the_engine_check():
    verdict = check(lower_network(merge_exchange(8), 8), Sorts(), engine="bdd", timeout=1.0)
    assert verdict.status is Status.UNKNOWN and verdict.stop is StopReason.TIMEOUT
    assert verdict.seconds < 10  # the check stops at the deadline (isolated), not when the work ends


def test_refusals():
    engine = ENGINES["bdd"]
    assert engine.refusal(ComparatorNetwork(2, ((0, 1),)), Sorts())[0] is StopReason.UNSUPPORTED
    stable = engine.refusal(lower_network(merge_exchange(3), 2, key_bits=1), PartialSort(key_bits=1, stable=True))
    assert stable[0] is StopReason.UNSUPPORTED and "stable" in stable[1]
    verdict = engine.check(lower_network(merge_exchange(3), 2, key_bits=1), PartialSort(key_bits=1, stable=True),
                           Budget())
    assert verdict.status is Status.UNKNOWN and verdict.stop is StopReason.UNSUPPORTED


# -- the pieces against brute force ------------------------------------------------------------------------------------

@pytest.mark.parametrize("backend", BACKENDS)
def test_fewest_ones_is_the_least_weight_and_then_the_least_assignment(backend):
    rng = random.Random(7)
    names = [f"v{i}" for i in range(6)]
    for _ in range(40):
        manager = BddManager(names, backend=backend)
        variables = [manager.variable(name) for name in names]
        table = [rng.random() < 0.15 for _ in range(64)]
        function = manager.false
        for row, value in enumerate(table):  # the function with this truth table, minterm by minterm
            if value:
                term = manager.true
                for i, variable in enumerate(variables):
                    term = manager.and_(term, variable if (row >> (5 - i)) & 1 else manager.not_(variable))
                function = manager.or_(function, term)
        rows = [row for row, value in enumerate(table) if value]
        found = fewest_ones(manager, function)
        if not rows:
            assert found is None
            continue
        best = min(rows, key=lambda row: (bin(row).count("1"), row))  # fewest ones, then least with v0 on top
        assert found[0] == bin(best).count("1")
        assert found[1] == {names[i]: True for i in range(6) if (best >> (5 - i)) & 1}


@pytest.mark.parametrize("backend", BACKENDS)
@pytest.mark.parametrize("signed", [False, True])
def test_word_comparisons_and_the_zero_one_sort_against_python(backend, signed):
    width = 3
    names = [f"{w}[{i}]" for w in "ab" for i in range(width)]
    manager = BddManager(names, backend=backend)
    a = [manager.variable(f"a[{i}]") for i in range(width)]
    b = [manager.variable(f"b[{i}]") for i in range(width)]
    values = range(-4, 4) if signed else range(8)
    at_least = {v: at_least_value(manager, a, v, signed) for v in values}
    below = at_most(manager, a, b, signed)
    ordered = sorted_bits(manager, [a[0], a[1], b[2]])
    for raw_a, raw_b in itertools.product(range(8), repeat=2):
        point = {f"a[{i}]": bool(raw_a >> i & 1) for i in range(width)}
        point.update({f"b[{i}]": bool(raw_b >> i & 1) for i in range(width)})
        x, y = signed_values([raw_a, raw_b], width, signed)
        for v in values:
            assert (manager.bdd.let(point, at_least[v]) == manager.true) == (x >= v)
        assert (manager.bdd.let(point, below) == manager.true) == (x <= y)
        bits = [raw_a & 1, raw_a >> 1 & 1, raw_b >> 2 & 1]
        assert [manager.bdd.let(point, f) == manager.true for f in ordered] == [bool(z) for z in sorted(bits)]


def test_the_cli_runs_the_engine(tmp_path):
    from cli_runner import run
    from sortcheck.load.write import write_netlist
    path = tmp_path / "counting.json"
    write_netlist(counting_sorter(6, 2), path)
    code, out, _ = run("check", path, "--engine", "bdd")
    assert code == 0 and "bdd" in out and "BDDs of [y_i >= v]" in out


@pytest.mark.skipif(not cudd_available(), reason="dd.cudd does not import here")
def test_an_operation_that_outgrows_the_memory_cap_ends_at_the_node_limit(monkeypatch):
    monkeypatch.setattr(manager_module, "BASE_BYTES", 0)  # the cap is then 200 bytes per node of the limit
    names = [f"v{i}" for i in range(40)]
    manager = BddManager(names, backend="cudd", node_limit=10)
    variables = [manager.variable(name) for name in names]
    function = manager.false
    with pytest.raises(manager_module.NodeLimitReached):  # pairs v_i, v_(39-i) far apart: exponential size
        for i in range(20):
            function = manager.or_(function, manager.and_(variables[i], variables[39 - i]))


def test_a_failure_found_before_the_limit_is_reported_without_the_minimality_claim(monkeypatch):
    from sortcheck.engines.gates.bdd import attempt as attempt_module

    def stop(*arguments):
        raise manager_module.NodeLimitReached(12345, 100)

    monkeypatch.setattr(attempt_module, "key_violation", stop)  # the thresholds are done, the key values stop
    keyed = lower_network(merge_exchange(4), 3, key_bits=2)
    first = keyed.outputs[0]
    circuit = with_outputs(keyed, [first, OutputWord("y1", first.bits), *keyed.outputs[2:]])  # no permutation
    prop = PartialSort(key_bits=2)
    failing = failing_raw_inputs(circuit, prop)
    verdict = prove_with_bdds(circuit, prop, Budget(), orders=["word-major"])
    assert verdict.status is Status.REFUTED and verdict.counterexample.minimal is None
    assert tuple(v % 8 for v in verdict.counterexample.input) in failing
    assert "not proved to have the fewest" in verdict.scope
