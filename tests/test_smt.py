"""The smt engine against the enumerate engine, an evaluator built on Python's ``sorted`` and z3 run directly.

Counterexamples are re-run with ``tests/reference.py`` (value by value) and
judged with ``sorted``; the SMT-LIB export is solved by z3's own parser, which
shares nothing with pysmt's conversion.
"""

from __future__ import annotations

import io
import itertools
import math
from pathlib import Path

import z3
from hypothesis import HealthCheck, given, settings, strategies as st
from pysmt.environment import Environment
from pysmt.smtlib.script import smtlibscript_from_formula

from sortcheck.engines import Budget, Status, StopReason, check
from sortcheck.engines.base import Options
from sortcheck.engines.smt import MAX_CHANNELS, SmtEngine, default_width, encode, smtlib_text
from sortcheck.model import ComparatorNetwork, GateCircuit, OutputWord, PartialSort, Sorts, Word
from sortcheck.model.families import build_family
from reference import breaks, run
from strategies import nearly_sorting, properties_for
from strategies import networks as any_networks


def networks(max_channels=8, max_size=20):
    return any_networks(max_channels=max_channels, max_size=max_size)

ENCODINGS = Path(__file__).resolve().parent.parent / "encodings"
ENGINE = SmtEngine()


def assert_agrees_with_enumerate(network, prop, width=None):
    expected = check(network, prop, engine="enumerate").status
    verdict = ENGINE.check(network, prop, Budget.of(60), Options(width=width))
    assert verdict.status == expected, (network, prop, verdict.scope)
    used = width or default_width(network.channels)
    assert verdict.figures["width"] == used
    if expected == Status.REFUTED:
        example = verdict.counterexample
        assert example.domain == "words"
        low, high = (-(1 << (used - 1)), 1 << (used - 1)) if prop.signed else (0, 1 << used)
        assert all(low <= value < high for value in example.input), example
        assert list(example.output) == run(network.comparators, example.input)
        assert breaks(prop, list(example.input), list(example.output))
    return verdict


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(networks(), st.data())
def test_random_networks_agree_with_enumerate(network, data):
    assert_agrees_with_enumerate(network, data.draw(st.sampled_from(properties_for(network.channels))))


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(nearly_sorting(), st.data())
def test_mutated_sorting_networks_agree_with_enumerate(network, data):
    assert_agrees_with_enumerate(network, data.draw(st.sampled_from(properties_for(network.channels))))


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(nearly_sorting(), st.data())
def test_width_one_misses_no_failure(network, data):
    # No failure of these properties on a comparator network needs more than two distinct values
    # (0-1 principle, Knuth TAOCP vol. 3, 5.3.4), so even 1-bit words find every failure.
    assert_agrees_with_enumerate(network, data.draw(st.sampled_from(properties_for(network.channels))), width=1)


def test_default_width_is_ceil_log2_of_the_channels():
    for n in range(1, 130):
        assert default_width(n) == max(1, math.ceil(math.log2(n))), n
        assert 2 ** default_width(n) >= n and (n <= 2 or 2 ** (default_width(n) - 1) < n)
    verdict = ENGINE.check(build_family("merge-exchange", 9), Sorts(), Budget.of(60))
    assert verdict.figures["width"] == 4 and "4-bit unsigned words (w = 4)" in verdict.scope


def order_patterns(n, width):
    """The weak orders (tuples of ranks) that inputs of ``width``-bit words on n channels take."""
    patterns = set()
    for values in itertools.product(range(1 << width), repeat=n):
        distinct = sorted(set(values))
        patterns.add(tuple(distinct.index(v) for v in values))
    return patterns


def test_default_width_words_take_every_order_pattern():
    # Ordered Bell (Fubini) numbers, OEIS A000670: 1, 3, 13, 75, 541 (values from memory).
    fubini = {1: 1, 2: 3, 3: 13, 4: 75, 5: 541}
    for n, count in fubini.items():
        assert len(order_patterns(n, default_width(n))) == count, n
    assert len(order_patterns(3, 1)) < fubini[3]  # 1-bit words lack patterns with 3 distinct values


def test_a_too_small_width_says_what_it_leaves_to_the_0_1_principle():
    sorter = ComparatorNetwork(3, ((0, 1), (1, 2), (0, 1)))
    narrow = ENGINE.check(sorter, Sorts(), Budget.of(60), Options(width=1))
    assert narrow.status == Status.PROVED
    assert "only 2 distinct values" in narrow.scope and "0-1 principle" in narrow.scope
    full = ENGINE.check(sorter, Sorts(), Budget.of(60))
    assert "without the 0-1 principle" in full.scope and "any values" in full.scope
    broken = ENGINE.check(ComparatorNetwork(3, ((0, 1), (1, 2))), Sorts(), Budget.of(60), Options(width=1))
    assert broken.status == Status.REFUTED and set(broken.counterexample.input) <= {0, 1}


@settings(max_examples=15, deadline=None)
@given(networks(max_channels=6), st.integers(1, 4), st.booleans(), st.data())
def test_comparator_encoding_computes_what_the_reference_computes(network, width, signed, data):
    environment = Environment()
    manager = environment.formula_manager
    encoding = encode(network, Sorts(signed=signed), width, environment)
    low, high = (-(1 << (width - 1)), (1 << (width - 1)) - 1) if signed else (0, (1 << width) - 1)
    values = data.draw(st.lists(st.integers(low, high), min_size=network.channels, max_size=network.channels))
    substitution = {symbol: manager.BV(value % (1 << width), width) for symbol, value in zip(encoding.inputs, values)}
    got = [environment.substituter.substitute(out, substitution).simplify().constant_value()
           for out in encoding.outputs]
    expected = [value % (1 << width) for value in run(network.comparators, values)]
    assert got == expected


@settings(max_examples=30, deadline=None)
@given(networks(), st.booleans())
def test_lemmas_hold_for_every_input_by_z3(network, signed):
    environment = Environment()
    manager = environment.formula_manager
    encoding = encode(network, Sorts(signed=signed), default_width(network.channels), environment)
    stream = io.StringIO()
    smtlibscript_from_formula(manager.Not(manager.And(encoding.lemmas))).serialize(stream, daggify=True)
    assert z3_answer(stream.getvalue()) == z3.unsat


def test_signed_sorting():
    # On 1-bit two's complement words the values are -1 < 0; the unsigned order is the other way round.
    network = ComparatorNetwork(2, ((0, 1),))
    assert ENGINE.check(network, Sorts(signed=True), Budget.of(60), Options(width=1)).status == Status.PROVED
    empty = ComparatorNetwork(3, ())
    verdict = assert_agrees_with_enumerate(empty, Sorts(signed=True), width=3)
    assert "two's complement" in verdict.scope
    reversed_net = ComparatorNetwork(3, ((1, 0), (2, 1), (1, 0)))
    verdict = assert_agrees_with_enumerate(reversed_net, Sorts(signed=True, order="descending"), width=4)
    assert verdict.status == Status.PROVED


def test_merge_exchange_16_is_proved_and_a_broken_one_refuted():
    network = build_family("merge-exchange", 16)
    verdict = ENGINE.check(network, Sorts(), Budget.of(120))  # measured: about 12 s (bench_smt.py)
    assert verdict.status == Status.PROVED, verdict.scope
    assert verdict.figures["comparators_encoded"] == 63 and verdict.figures["width"] == 4
    broken = ComparatorNetwork(16, network.comparators[:30] + network.comparators[31:])
    assert_agrees_with_enumerate(broken, Sorts())


def test_timeout_gives_unknown():
    verdict = ENGINE.check(build_family("merge-exchange", 24), Sorts(), Budget.of(0.3))
    assert verdict.status == Status.UNKNOWN and verdict.stop == StopReason.TIMEOUT
    assert "nothing is proved" in verdict.scope


def test_refusals():
    mixed = GateCircuit((Word("a", 2), Word("b", 3)), (), (OutputWord("y0", ("a[0]", "a[1]")),
                                                          OutputWord("y1", ("b[0]", "b[1]", "b[2]"))))
    stop, reason = ENGINE.refusal(mixed, Sorts(), Options())  # gate circuits: tests/test_smt_gates.py
    assert stop == StopReason.UNSUPPORTED and "widths 2, 3" in reason
    network = ComparatorNetwork(4, ((0, 1),))
    assert ENGINE.refusal(network, PartialSort(), Options())[0] == StopReason.UNSUPPORTED
    assert ENGINE.refusal(network, Sorts(), Options(width=0))[0] == StopReason.UNSUPPORTED
    stop, reason = ENGINE.refusal(network, Sorts(), Options(width=65))
    assert stop == StopReason.SIZE_LIMIT and "64 bits" in reason
    stop, reason = ENGINE.refusal(ComparatorNetwork(MAX_CHANNELS + 1, ()), Sorts(), Options())
    assert stop == StopReason.SIZE_LIMIT and str(MAX_CHANNELS) in reason
    assert ENGINE.check(network, PartialSort(), Budget(), Options()).status == Status.UNKNOWN


def test_solver_errors_become_unknown(monkeypatch):
    import sortcheck.engines.smt as smt

    def failing(*args, **kwargs):
        raise z3.Z3Exception("out of resources")

    monkeypatch.setattr(smt, "encode", failing)
    verdict = ENGINE.check(ComparatorNetwork(2, ((0, 1),)), Sorts(), Budget.of(10))
    assert verdict.status == Status.UNKNOWN and "out of resources" in verdict.scope


GOLDEN_NETWORK = ComparatorNetwork(4, ((0, 1), (2, 3), (0, 2), (1, 3), (1, 2)))


def z3_answer(text):
    solver = z3.Solver()
    solver.add(z3.parse_smt2_string(text))
    return solver.check()


def test_golden_smtlib_file_is_regenerated_exactly_and_z3_proves_it():
    text = smtlib_text(GOLDEN_NETWORK, Sorts())
    assert (ENCODINGS / "comparator-network-smt.golden.smt2").read_text() == text
    inputs = itertools.product(range(4), repeat=4)
    assert all(run(GOLDEN_NETWORK.comparators, v) == sorted(v) for v in inputs)  # it sorts, by sorted
    assert z3_answer(text) == z3.unsat
    broken = ComparatorNetwork(4, GOLDEN_NETWORK.comparators[:-1])
    assert z3_answer(smtlib_text(broken, Sorts())) == z3.sat


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(networks(max_channels=6, max_size=12), st.data())
def test_smtlib_export_solved_by_z3_agrees_with_enumerate(network, data):
    prop = data.draw(st.sampled_from(properties_for(network.channels)))
    holds = check(network, prop, engine="enumerate").status == Status.PROVED
    assert z3_answer(smtlib_text(network, prop)) == (z3.unsat if holds else z3.sat), (network, prop)
