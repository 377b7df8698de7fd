"""The gate sat engine against exhaustive evaluation, for every property, style and the counting family.

The reference is ``tests/gate_reference.py``: circuits evaluated gate by gate
with truth tables written out there (independent of the project's evaluator),
each property judged with Python's ``sorted`` (through ``tests/reference.py``
for sorts, merges, selects and medians of n outputs; partial sorts and the
median of one output word are defined there in the same way).  Words are 2
bits wide and there are at most 4 of them, so every input is evaluated.
"""

from __future__ import annotations

import time
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings, strategies as st
from pysat.solvers import Solver

from sortcheck.engines.base import Budget, Status, StopReason
from sortcheck.engines.gates.threshold.sat import GateSatEngine
from sortcheck.engines.gates.simulation import SimulateEngine
from sortcheck.engines.runners.pieces import combine
from sortcheck.engines.gates.threshold.spec import gate_violation_cnf, miter_cnf, reference_sorter
from sortcheck.load import read_netlist
from sortcheck.model import (ComparatorNetwork, Gate, GateCircuit, Median, Merges, OutputWord, PartialSort, Selects,
                             Sorts, Word)
from sortcheck.model.counting import counting_sorter
from sortcheck.model.families import merge_exchange, odd_even_transposition
from sortcheck.model.lowering import lower_network
from gate_reference import breaks_words, holds_everywhere, run_gates, signed_values

SAT_ONLY = GateSatEngine(samples=0, min_split_gates=0)  # small circuits split too, to test the pieces
STYLES = ("and-or", "mux", "xor")


# --- against the independent reference (tests/gate_reference.py) -------------------------------------------

def assert_agrees(circuit, prop, engine=SAT_ONLY):
    verdict = engine.check(circuit, prop, Budget())
    expected = not holds_everywhere(circuit, prop)
    assert verdict.status is (Status.REFUTED if expected else Status.PROVED), (prop, verdict.scope)
    if expected:
        example = verdict.counterexample
        assert example.domain == "words" and example.violation
        w = circuit.width
        raw = [v % (1 << w) for v in example.input]
        assert list(example.output) == signed_values(run_gates(circuit, raw), w, prop.signed)
        assert breaks_words(prop, list(example.input), list(example.output), w)
    else:
        assert verdict.stop is StopReason.COVERED and "thresholds" in verdict.scope or "miter" in verdict.scope
    return verdict


def properties(words, width, outputs, signed=False):
    props = [Sorts(signed=signed), Sorts(order="descending", signed=signed)]
    props += [Merges(split=m, signed=signed) for m in range(1, words)]
    props += [Selects(count=t, sorted=s, signed=signed) for t in range(1, min(words, outputs) + 1)
              for s in (False, True)]
    props += [PartialSort(key_bits=k, stable=s, signed=signed) for k in range(1, width + 1) for s in (False, True)]
    if words % 2:
        props.append(Median(signed=signed))
    return [p for p in props if not (isinstance(p, (Sorts, Merges, PartialSort)) and outputs != words)]


def keep_outputs(circuit, positions):
    return GateCircuit(circuit.inputs, circuit.gates, tuple(circuit.outputs[p] for p in positions))


# --- every property, holding and broken ---------------------------------------------------------------------

@pytest.mark.parametrize("style", STYLES)
@pytest.mark.parametrize("signed", [False, True])
def test_lowered_sorters_every_property(style, signed):
    circuit = lower_network(merge_exchange(3), 2, style=style, signed=signed)
    for prop in properties(3, 2, 3, signed) + properties(3, 2, 3, not signed):
        assert_agrees(circuit, prop)


@pytest.mark.parametrize("signed", [False, True])
def test_counting_sorter_every_property(signed):
    circuit = counting_sorter(3, 2, signed=signed)
    for prop in properties(3, 2, 3, signed):
        verdict = assert_agrees(circuit, prop)
        if not (isinstance(prop, PartialSort) and prop.stable):
            assert verdict.figures["method"] == "threshold-sat"


def test_median_and_selection_circuits_with_fewer_outputs():
    sorter = lower_network(merge_exchange(3), 2, style="mux")
    assert_agrees(keep_outputs(sorter, [1]), Median())          # the one output is the middle word
    assert_agrees(keep_outputs(sorter, [0]), Median())          # the smallest is not the median
    assert_agrees(keep_outputs(sorter, [0, 1]), Selects(count=2, sorted=True))
    assert_agrees(keep_outputs(sorter, [1, 0]), Selects(count=2))
    assert_agrees(keep_outputs(sorter, [1, 0]), Selects(count=2, sorted=True))
    assert_agrees(keep_outputs(sorter, [0, 2]), Selects(count=2))


def test_merging_and_selecting_networks_that_do_not_sort():
    merger = lower_network(ComparatorNetwork(4, ((0, 2), (1, 3), (1, 2))), 2, style="xor")  # merges runs of 2
    assert SAT_ONLY.check(merger, Merges(split=2), Budget()).status is Status.PROVED
    for prop in (Merges(split=2), Merges(split=1), Sorts(), Selects(count=1), Selects(count=2, sorted=True)):
        assert_agrees(merger, prop)
    minimum = lower_network(ComparatorNetwork(4, ((0, 1), (0, 2), (0, 3))), 2, style="and-or")
    assert assert_agrees(minimum, Selects(count=1)).status is Status.PROVED
    for prop in (Selects(count=2), Sorts(), PartialSort(key_bits=1)):
        assert assert_agrees(minimum, prop).status is Status.REFUTED


def test_stable_partial_sorts():
    # Adjacent compare-and-swaps that swap only on a strictly greater key keep equal keys in order.
    stable = lower_network(odd_even_transposition(4), 2, style="mux", key_bits=1)
    verdict = assert_agrees(stable, PartialSort(key_bits=1, stable=True))
    assert verdict.status is Status.PROVED and verdict.figures["method"] == "miter-sat"
    unstable = lower_network(merge_exchange(4), 2, style="and-or", key_bits=1)
    assert assert_agrees(unstable, PartialSort(key_bits=1, stable=True)).status is Status.REFUTED
    assert assert_agrees(unstable, PartialSort(key_bits=1)).status is Status.PROVED
    assert_agrees(lower_network(odd_even_transposition(3), 2, signed=True, key_bits=1),
                  PartialSort(key_bits=1, stable=True, signed=True))


# --- random mutations ---------------------------------------------------------------------------------------

FLIPS = {"and": "or", "or": "and", "nand": "nor", "nor": "nand", "xor": "xnor", "xnor": "xor"}


def mutate(circuit, kind, index, pick):
    gates = list(circuit.gates)
    gate = gates[index % len(gates)]
    if kind == "flip":
        if gate.op in FLIPS:
            gates[index % len(gates)] = Gate(gate.out, FLIPS[gate.op], gate.inputs)
        elif gate.op == "mux":
            gates[index % len(gates)] = Gate(gate.out, "mux", (gate.inputs[0], gate.inputs[2], gate.inputs[1]))
        else:
            return None
    elif kind == "rewire":
        bits = [f"{word.name}[{i}]" for word in circuit.inputs for i in range(word.width)]
        sources = list(gate.inputs)
        sources[pick % len(sources)] = bits[pick % len(bits)]
        gates[index % len(gates)] = Gate(gate.out, gate.op, tuple(sources))
    else:  # swap two output bits
        bits = [(w, i) for w, word in enumerate(circuit.outputs) for i in range(len(word.bits))]
        (w1, i1), (w2, i2) = bits[index % len(bits)], bits[pick % len(bits)]
        words = [list(word.bits) for word in circuit.outputs]
        words[w1][i1], words[w2][i2] = words[w2][i2], words[w1][i1]
        return GateCircuit(circuit.inputs, circuit.gates,
                           tuple(OutputWord(word.name, tuple(b)) for word, b in zip(circuit.outputs, words)))
    return GateCircuit(circuit.inputs, tuple(gates), circuit.outputs)


BASES = [lower_network(merge_exchange(3), 2, style=s) for s in STYLES] + [counting_sorter(3, 2)]


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.sampled_from(range(len(BASES))), st.sampled_from(["flip", "rewire", "swap"]), st.integers(0, 10 ** 6),
       st.integers(0, 10 ** 6), st.sampled_from([Sorts(), Sorts(signed=True), Selects(count=2), Median(),
                                                 Merges(split=1), PartialSort(key_bits=1)]))
def test_mutations_against_exhaustive_evaluation(base, kind, index, pick, prop):
    circuit = mutate(BASES[base], kind, index, pick)
    if circuit is None:
        return
    try:
        circuit.gate_order
    except Exception:  # a rewired gate closed a cycle
        return
    verdict = assert_agrees(circuit, prop)
    simulated = SimulateEngine().check(circuit, prop, Budget())
    assert simulated.status is verdict.status


# --- pieces, budgets, refusals ------------------------------------------------------------------------------

@pytest.mark.parametrize("circuit, prop", [(counting_sorter(3, 3, signed=True), Sorts(signed=True)),
                                           (lower_network(merge_exchange(3), 4, style="mux"), Selects(count=2))])
def test_pieces_cover_the_check(circuit, prop):
    pieces = SAT_ONLY.pieces(circuit, prop)
    values = [v for piece in pieces for v in range(piece["low"], piece["high"] + 1)]
    low = -(1 << (circuit.width - 1)) if prop.signed else 0
    assert values == list(range(low, low + (1 << circuit.width)))
    verdicts = [SAT_ONLY.check_piece(circuit, prop, piece, Budget()) for piece in pieces]
    assert all(v.status is Status.PROVED and "only thresholds" in v.scope for v in verdicts)
    assert sum(v.figures["thresholds_proved"] for v in verdicts) == 1 << circuit.width
    whole = SAT_ONLY.whole_verdict(circuit, prop, combine("sat", prop, verdicts, "this process", 1.0))
    assert whole.status is Status.PROVED and f"for all 2^{circuit.width} = " in whole.scope
    assert whole.figures["thresholds"] == 1 << circuit.width
    assert whole.figures["thresholds_proved"] == 1 << circuit.width


def test_a_refuted_piece_carries_a_checked_counterexample():
    broken = mutate(lower_network(merge_exchange(3), 3, style="and-or"), "swap", 0, 4)
    verdicts = [SAT_ONLY.check_piece(broken, Sorts(), piece, Budget()) for piece in SAT_ONLY.pieces(broken, Sorts())]
    refuted = [v for v in verdicts if v.status is Status.REFUTED]
    assert refuted and all(breaks_words(Sorts(), list(v.counterexample.input), list(v.counterexample.output), 3)
                           for v in refuted)
    assert SAT_ONLY.pieces(broken, PartialSort(key_bits=1, stable=True)) is None


def test_simulation_decides_first_and_budgets_hold():
    broken = mutate(lower_network(merge_exchange(8), 8, style="mux"), "swap", 3, 40)
    verdict = GateSatEngine().check(broken, Sorts(), Budget())
    assert verdict.status is Status.REFUTED and verdict.figures["method"] == "simulation"
    hard = lower_network(merge_exchange(16), 8, style="and-or")
    late = SAT_ONLY.check(hard, Sorts(), Budget.of(0.5))
    assert late.status is Status.UNKNOWN and late.stop is StopReason.TIMEOUT and "nothing is proved" in late.scope
    assert late.seconds < 10
    began = time.monotonic()
    cancelled = SAT_ONLY.check_piece(hard, Sorts(), SAT_ONLY.pieces(hard, Sorts())[1],
                                     Budget.of(None, stopped=lambda: time.monotonic() > began + 1.0))
    assert cancelled.status is Status.UNKNOWN and cancelled.stop is StopReason.TIMEOUT
    assert time.monotonic() - began < 10


def test_refusals():
    assert SAT_ONLY.refusal(merge_exchange(4), Sorts())[0] is StopReason.UNSUPPORTED
    mixed = GateCircuit((Word("a", 1), Word("b", 2)), (), (OutputWord("y0", ("a[0]",)), OutputWord("y1", ("b[0]",))))
    assert SAT_ONLY.check(mixed, Sorts(), Budget()).status is Status.UNKNOWN


# --- the CNFs for export and the miter baseline, with another solver ------------------------------------------

def satisfiable(clauses):
    with Solver(name="cadical195", bootstrap_with=clauses) as solver:
        return solver.solve()


def test_violation_cnf_is_unsatisfiable_exactly_when_the_property_holds():
    sorter = lower_network(merge_exchange(3), 2, style="xor", signed=True)
    broken = mutate(sorter, "flip", 5, 0)
    for circuit in (sorter, broken):
        for prop in properties(3, 2, 3, signed=True):
            clauses, pool, comments = gate_violation_cnf(circuit, prop)
            assert satisfiable(clauses) == (not holds_everywhere(circuit, prop)), prop
            assert any("input word x0" in line for line in comments)


def test_miter_against_the_reference_sorter():
    reference_circuit = reference_sorter(4, 2)
    assert not satisfiable(miter_cnf(counting_sorter(4, 2), reference_circuit)[0])
    assert not satisfiable(miter_cnf(lower_network(odd_even_transposition(4), 2, style="and-or"),
                                     reference_circuit)[0])
    assert satisfiable(miter_cnf(mutate(counting_sorter(4, 2), "swap", 0, 1), reference_circuit)[0])
    with pytest.raises(ValueError):
        miter_cnf(counting_sorter(4, 2), reference_sorter(3, 2))


# --- the corpus ---------------------------------------------------------------------------------------------

CORPUS = Path(__file__).resolve().parent.parent / "corpus"
GATE_FILES = [line.split() for line in (CORPUS / "expected-verdicts.txt").read_text(encoding="utf-8").splitlines()
              if line.strip() and not line.startswith("#")]


@pytest.mark.parametrize("expected, relative", [(v, p) for v, p in GATE_FILES
                                                if p.startswith(("gates/", "broken/compare", "compare"))])
def test_corpus_gate_circuits_get_their_listed_verdicts_by_sat_alone(expected, relative):
    circuit = read_netlist(str(CORPUS / relative))
    if not isinstance(circuit, GateCircuit):
        pytest.skip("a comparator network")
    verdict = SAT_ONLY.check(circuit, circuit.claim or Sorts(), Budget.of(60))
    assert verdict.status.value == expected
