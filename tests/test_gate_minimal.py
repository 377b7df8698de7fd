"""Minimal counterexamples of gate circuits, checked by brute force by weight with an independent evaluator.

The brute force runs every input of ``w`` one bits, ``w = 0, 1, ...``,
through ``tests/gate_reference.run_gates`` (the ops' truth tables written
out there) and judges it with the property's definition written with
Python's ``sorted``; the least ``w`` with a failing input is the minimum.
"""

from __future__ import annotations

import itertools
import json

import pytest

from gate_reference import breaks_words, evaluation_order, run_gates, signed_values
from sortcheck.cli import main
from sortcheck.engines import Budget, Counterexample, check
from sortcheck.explain.gate_minimal import minimize_circuit_counterexample
from sortcheck.explain.gate_repair import change_ops
from sortcheck.explain.shrink import WORD_PASSES, shrink, word_measure
from sortcheck.load import dump_netlist
from sortcheck.model import Median, Merges, PartialSort, Selects, Sorts
from sortcheck.model.circuit_builds import build_circuit

FLIP = {"and": "or", "or": "and", "xor": "xnor", "xnor": "xor", "mux": "xor"}


def brute_force_minimum(circuit, prop):
    """The fewest one bits of a failing input (two's complement patterns for signed properties), or None."""
    words, width, order = circuit.words, circuit.width, evaluation_order(circuit)
    best = None
    for raw in itertools.product(range(1 << width), repeat=words):
        ones = sum(bin(word).count("1") for word in raw)
        if best is not None and ones >= best:
            continue
        inputs = signed_values(raw, width, prop.signed)
        outputs = signed_values(run_gates(circuit, raw, order), width, prop.signed)
        if breaks_words(prop, inputs, outputs, width):
            best = ones
    return best


def mutants(circuit, count):
    indices = [i for i, gate in enumerate(circuit.gates) if gate.op in FLIP]
    step = max(1, len(indices) // count)
    return [change_ops(circuit, {circuit.gates[i].out: FLIP[circuit.gates[i].op]}) for i in indices[::step]][:count]


def minimized(circuit, prop, **limits):
    verdict = check(circuit, prop)
    if verdict.status.value != "refuted":
        return None
    return minimize_circuit_counterexample(circuit, prop, verdict.counterexample, Budget.of(60), **limits)


def assert_minimal(circuit, prop, example):
    expected = brute_force_minimum(circuit, prop)
    if example is None:
        assert expected is None
        return
    assert example.minimal is True
    width = circuit.width
    raw = tuple(value & ((1 << width) - 1) for value in example.input)
    assert example.ones == word_measure(example.input, width) == expected
    assert signed_values(run_gates(circuit, raw), width, prop.signed) == list(example.output)
    assert breaks_words(prop, list(example.input), list(example.output), width)


CASES = [
    ("merge-exchange", 4, 2, "and-or", Sorts()), ("bitonic", 4, 2, "xor", Sorts(order="descending")),
    ("merge-exchange", 3, 3, "mux", Sorts(signed=True)), ("merge-exchange", 5, 2, "mux", Median()),
    ("merge-exchange", 4, 2, "mux", Selects(count=2)), ("insertion", 4, 2, "xor", Selects(count=2, sorted=True)),
    ("merge-exchange", 4, 2, "and-or", Merges(split=2)), ("counting", 3, 2, None, Sorts()),
]


@pytest.mark.parametrize("family, words, width, style, prop", CASES)
@pytest.mark.parametrize("engine_path", ["weights", "sat"])
def test_minimal_counterexamples_of_mutants_match_brute_force(family, words, width, style, prop, engine_path):
    circuit = build_circuit(family, words, width, style=style, signed=prop.signed)
    limits = {"max_evaluations": 0} if engine_path == "sat" else {}
    refuted = 0
    for mutant in mutants(circuit, 4):
        example = minimized(mutant, prop, **limits)
        assert_minimal(mutant, prop, example)
        refuted += example is not None
    assert refuted >= 1


def test_partial_sort_mutants_are_minimised():
    prop = PartialSort(key_bits=1, stable=True)
    circuit = build_circuit("merge-exchange", 3, 2, style="and-or", key_bits=1)
    for mutant in mutants(circuit, 3):
        for limits in ({}, {"max_evaluations": 0}):
            assert_minimal(mutant, prop, minimized(mutant, prop, **limits))


def test_a_sampled_counterexample_of_a_wide_circuit_is_shrunk_and_proved_minimal():
    # 8 words of 8 bits are beyond exhaustive simulation: the engine's counterexample comes from sampling.
    circuit = build_circuit("merge-exchange", 8, 8, style="mux")
    mutant = mutants(circuit, 5)[2]
    verdict = check(mutant, Sorts())
    assert verdict.status.value == "refuted"
    example = minimize_circuit_counterexample(mutant, Sorts(), verdict.counterexample, Budget.of(60))
    assert example.minimal and example.ones <= word_measure(verdict.counterexample.input)
    assert run_gates(mutant, example.input) != sorted(example.input)
    # Nothing with fewer one bits fails (64 input bits: every input below the minimum, by the reference).
    order = evaluation_order(mutant)
    for weight in range(example.ones):
        for positions in itertools.combinations(range(64), weight):
            raw = [0] * 8
            for p in positions:
                raw[p // 8] |= 1 << (p % 8)
            assert run_gates(mutant, raw, order) == sorted(raw)


def test_a_spent_budget_keeps_the_best_input_found_unproved():
    circuit = build_circuit("merge-exchange", 8, 8, style="mux")
    mutant = mutants(circuit, 5)[2]
    verdict = check(mutant, Sorts())
    example = minimize_circuit_counterexample(mutant, Sorts(), verdict.counterexample, Budget.of(1e-9))
    assert example.minimal is False
    assert run_gates(mutant, example.input) != sorted(example.input)
    assert example.ones == word_measure(example.input) <= word_measure(verdict.counterexample.input)


def test_word_passes_reach_a_local_minimum():
    fails = lambda words: words[0] > words[2]  # noqa: E731
    result = shrink((13, 7, 9), fails, WORD_PASSES, measure=word_measure)
    assert fails(result) and word_measure(result) == 1
    # No single pass lowers it further.
    for shrink_pass in WORD_PASSES:
        assert word_measure(shrink_pass(result, fails)) == 1


def test_check_reports_the_minimal_counterexample_and_no_minimize_skips_it(tmp_path, capsys):
    circuit = build_circuit("merge-exchange", 4, 3, style="xor")
    mutant = mutants(circuit, 3)[1]
    path = tmp_path / "mutant.json"
    path.write_text(dump_netlist(mutant), encoding="utf-8")
    capsys.readouterr()
    assert main(["check", str(path), "--format", "json"]) == 1
    example = json.loads(capsys.readouterr().out)["results"][0]["counterexample"]
    assert example["minimal"] is True and example["ones"] == brute_force_minimum(mutant, Sorts())
    assert main(["check", str(path), "--format", "json", "--no-minimize"]) == 1
    assert "minimal" not in json.loads(capsys.readouterr().out)["results"][0]["counterexample"]
    assert main(["check", str(path)]) == 1
    assert "one bits over all input words" in capsys.readouterr().out


def test_an_input_the_engine_gave_is_kept_when_it_is_already_least():
    circuit = build_circuit("merge-exchange", 2, 2, style="mux")
    mutant = mutants(circuit, 1)[0]
    first = check(mutant, Sorts()).counterexample
    example = minimize_circuit_counterexample(mutant, Sorts(), Counterexample(first.input, first.output, "words",
                                                                              first.violation), Budget())
    assert example.ones == brute_force_minimum(mutant, Sorts())
