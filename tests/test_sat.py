"""The sat engine, its CNF and redundant_comparators against independent references.

References: ``tests/reference.py`` (comparators applied value by value, each
property's definition written with Python's ``sorted``), brute force over all
0-1 inputs, the enumerate engine, and a second SAT solver (cadical195) on the
plain CNF.
"""

from __future__ import annotations

import itertools
import time
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings, strategies as st
from pysat.solvers import Solver

from sortcheck.engines import check
from sortcheck.engines.base import Budget, Status, StopReason
from sortcheck.engines.networks.cnf import annotated_dimacs, plain_cnf
from sortcheck.engines.networks.redundancy import redundant_comparators
from sortcheck.engines.networks.sat import SatEngine
from sortcheck.load import parse_netlist
from sortcheck.model import ComparatorNetwork, PartialSort, Sorts
from sortcheck.model.families import bitonic, merge_exchange
from conftest import circuit_doc, text_of
from reference import breaks, run
from strategies import nearly_sorting, properties_for, reference_holds
from strategies import networks as any_networks


def networks(max_channels=8, max_size=30):
    return any_networks(max_channels=max_channels, max_size=max_size, min_channels=2)

ENCODINGS = Path(__file__).resolve().parent.parent / "encodings"

#: The default engine, one that sends every part to the solver, and one SAT call on the whole network.
ENGINES = {"default": SatEngine(), "sat-parts": SatEngine(enumeration_limit=0, simulation_rounds=0),
           "whole": SatEngine(split=False, simulation_rounds=0)}


def assert_agrees(network, prop, engine):
    verdict = engine.check(network, prop, Budget())
    expected = reference_holds(network, prop)
    assert verdict.status == (Status.PROVED if expected else Status.REFUTED), (network, prop, verdict.figures)
    assert verdict.status == check(network, prop, engine="enumerate").status
    if expected:
        assert "0-1 principle" in verdict.scope
    else:
        example = verdict.counterexample
        assert set(example.input) <= {0, 1}
        assert list(example.output) == run(network.comparators, example.input)
        assert breaks(prop, list(example.input), list(example.output))


@settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(networks(), st.data(), st.sampled_from(sorted(ENGINES)))
def test_random_networks_agree_with_sorted(network, data, engine):
    prop = data.draw(st.sampled_from(properties_for(network.channels)))
    assert_agrees(network, prop, ENGINES[engine])


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(nearly_sorting(), st.data(), st.sampled_from(sorted(ENGINES)))
def test_mutated_sorting_networks_agree_with_sorted(network, data, engine):
    prop = data.draw(st.sampled_from(properties_for(network.channels)))
    assert_agrees(network, prop, ENGINES[engine])


@settings(max_examples=60, deadline=None)
@given(nearly_sorting(), st.data())
def test_plain_cnf_is_satisfiable_exactly_when_the_property_fails(network, data):
    prop = data.draw(st.sampled_from(properties_for(network.channels)))
    encoding = plain_cnf(network, prop)
    with Solver(name="cadical195", bootstrap_with=encoding.clauses) as solver:
        satisfiable = solver.solve()
        if satisfiable:
            true = set(literal for literal in solver.get_model() if literal > 0)
            example = [int(v in true) for v in encoding.inputs]
            assert breaks(prop, example, run(network.comparators, example))
    assert satisfiable == (not reference_holds(network, prop))


@pytest.mark.parametrize("family", [merge_exchange, bitonic])
def test_large_sorting_networks_are_proved(family):
    verdict = SatEngine().check(family(256), Sorts(), Budget.of(60))
    assert verdict.status == Status.PROVED, verdict.scope
    assert verdict.figures["parts_proved"] == 254  # every join below the root sorts its channels


def broken(network, index, reverse):
    a, b = network.comparators[index]
    return ComparatorNetwork(network.channels, network.comparators[:index] + (((b, a),) if reverse else ())
                             + network.comparators[index + 1:])


@pytest.mark.parametrize("family", [merge_exchange, bitonic])
@pytest.mark.parametrize("where", [0.5, 0.97])
@pytest.mark.parametrize("reverse", [False, True])
def test_large_broken_networks_are_refuted_without_simulation(family, where, reverse):
    network = family(256)
    bad = broken(network, int(where * network.size), reverse)
    verdict = SatEngine(simulation_rounds=0).check(bad, Sorts(), Budget.of(60))
    assert verdict.status == Status.REFUTED
    example = verdict.counterexample
    assert list(example.output) == run(bad.comparators, example.input)
    assert breaks(Sorts(), list(example.input), list(example.output))


def test_broken_networks_of_many_sizes_are_refuted():
    deep = broken(merge_exchange(28), 150, True)  # 28 channels: the enumerate engine is the oracle
    verdict = SatEngine(simulation_rounds=0).check(deep, Sorts(), Budget.of(60))
    assert verdict.status == check(deep, Sorts(), engine="enumerate").status
    for n in (28, 100, 512, 2048):
        network = merge_exchange(n)
        # A last-layer comparator of a sorting network swaps on some input, so without it some output is unsorted.
        bad = broken(network, network.size - 1 - n % 7, False)
        verdict = SatEngine().check(bad, Sorts(), Budget.of(60))
        assert verdict.status == Status.REFUTED, n
        assert breaks(Sorts(), list(verdict.counterexample.input), run(bad.comparators, verdict.counterexample.input))


def test_sat_solver_path_on_a_large_merge_gives_counterexamples():
    network = merge_exchange(64)
    bad = broken(network, network.size - 3, False)
    verdict = ENGINES["sat-parts"].check(bad, Sorts(), Budget.of(60))
    assert verdict.status == Status.REFUTED
    assert verdict.figures["sat_calls"] >= 1
    assert breaks(Sorts(), list(verdict.counterexample.input), run(bad.comparators, verdict.counterexample.input))


def test_timeout_gives_unknown_promptly():
    engine = SatEngine(split=False, simulation_rounds=0)
    assert engine.cooperative
    started = time.monotonic()
    verdict = engine.check(bitonic(256), Sorts(), Budget.of(0.5))
    assert verdict.status == Status.UNKNOWN and verdict.stop == StopReason.TIMEOUT
    assert time.monotonic() - started < 5
    assert "nothing is proved" in verdict.scope


def test_refusals():
    engine = SatEngine()
    net = ComparatorNetwork(2, ((0, 1),))
    assert engine.refusal(net, Sorts()) is None
    assert engine.refusal(net, PartialSort(key_bits=1))[0] == StopReason.UNSUPPORTED
    circuit = parse_netlist(text_of(circuit_doc()), source="circuit.json")
    assert engine.refusal(circuit, Sorts())[0] == StopReason.UNSUPPORTED
    assert engine.check(circuit, Sorts(), Budget()).status == Status.UNKNOWN


# -- redundant comparators -------------------------------------------------------------------------------------

def brute_force_redundant(network):
    """A comparator is redundant iff no 0-1 input makes it swap (1 on its min side, 0 on its max side)."""
    redundant = []
    for index, (a, b) in enumerate(network.comparators):
        swaps = False
        for vector in itertools.product((0, 1), repeat=network.channels):
            wires = run(network.comparators[:index], vector)
            if wires[a] > wires[b]:
                swaps = True
                break
        if not swaps:
            redundant.append(index)
    return redundant


@settings(max_examples=80, deadline=None)
@given(st.one_of(networks(max_channels=7, max_size=20), nearly_sorting()))
def test_redundant_comparators_agree_with_brute_force(network):
    assert redundant_comparators(network, Budget()) == brute_force_redundant(network)


def test_known_redundant_comparators():
    assert redundant_comparators(ComparatorNetwork(3, ((0, 2), (0, 2))), Budget()) == [1]
    for family in (merge_exchange, bitonic):
        network = family(16)
        assert redundant_comparators(network, Budget()) == []
        extra = tuple((a, b) for a in range(16) for b in range(a + 1, 16))[::17]
        padded = ComparatorNetwork(16, network.comparators + extra)
        assert redundant_comparators(padded, Budget()) == list(range(network.size, padded.size))


def test_redundant_comparators_runs_out_of_budget():
    assert redundant_comparators(merge_exchange(64), Budget(deadline=time.monotonic() - 1)) in (None, [])


# -- the golden CNF --------------------------------------------------------------------------------------------

def test_golden_cnf_is_regenerated_exactly_and_is_unsatisfiable():
    text = (ENCODINGS / "comparator-network-cnf.golden.cnf").read_text()
    assert annotated_dimacs(merge_exchange(4)) == text
    header = next(line for line in text.splitlines() if line.startswith("p cnf"))
    clauses = [[int(x) for x in line.split()[:-1]] for line in text.splitlines()
               if line and not line.startswith(("c", "p"))]
    assert header == f"p cnf 17 {len(clauses)}"
    with Solver(name="minisat22", bootstrap_with=clauses) as solver:
        assert solver.solve() is False  # merge exchange on 4 channels sorts (Knuth, TAOCP vol. 3, 5.3.4)
    broken_text = annotated_dimacs(ComparatorNetwork(4, merge_exchange(4).comparators[:-1]))
    broken_clauses = [[int(x) for x in line.split()[:-1]] for line in broken_text.splitlines()
                      if line and not line.startswith(("c", "p"))]
    with Solver(name="minisat22", bootstrap_with=broken_clauses) as solver:
        assert solver.solve() is True
        true = {literal for literal in solver.get_model() if literal > 0}
        example = [int(v in true) for v in (1, 2, 3, 4)]
        assert breaks(Sorts(), example, run(merge_exchange(4).comparators[:-1], example))
