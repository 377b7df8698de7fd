"""The reduction and the fast evaluation paths of enumerate, against brute force with Python's ``sorted``.

Judged with ``tests/reference.py`` (comparators value by value, properties
with ``sorted``), which shares no code with the engine; the fast paths must
also agree with the plain numpy path over all inputs.  The compiled (numba)
path runs where numba is installed; its generated source also runs as plain
Python on many networks without numba.
"""

from __future__ import annotations

import itertools
import time

import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from sortcheck.engines.networks import compiled
from sortcheck.engines.base import Budget, Options, Status, StopReason
from sortcheck.engines.networks.enumeration import EnumerateEngine, redundant_comparators_by_enumeration, vectors_bound
from sortcheck.engines.networks.product import Layout, NumpyEvaluator, evaluate
from sortcheck.engines.networks.reduction import merge_groups, reduce_prefix, singleton_groups
from sortcheck.model import ComparatorNetwork, Median, Merges, Selects, Sorts
from sortcheck.model.families import build_family
from reference import breaks, run
from strategies import nearly_sorting, networks, properties_for

needs_numba = pytest.mark.skipif(not compiled.available(), reason="numba is not installed")


def brute_force_failures(network, prop):
    """Every failing 0-1 input, as tuples, by the reference evaluator."""
    return [v for v in itertools.product((0, 1), repeat=network.channels)
            if breaks(prop, list(v), run(network.comparators, v))]


class InterpretedEngine(EnumerateEngine):
    """The engine with the generated kernel source run as plain Python (no numba needed)."""

    def _evaluator(self, network, space, layout, prop, budget):
        suffix = [network.comparators[i] for i in space.suffix]
        return compiled.CompiledEvaluator(layout, suffix, prop, interpreted=True)


def assert_verdict_right(network, prop, verdict, failures, reduction=True):
    assert verdict.status == (Status.REFUTED if failures else Status.PROVED), (network, prop, verdict.scope)
    figures = verdict.figures
    assert figures["vectors_total"] == (2 ** network.channels if not isinstance(prop, Merges)
                                        else (prop.split + 1) * (network.channels - prop.split + 1))
    assert figures["vectors_evaluated"] <= figures.get("vectors_after_reduction", figures["vectors_total"])
    assert figures.get("vectors_after_reduction", 0) <= vectors_bound(network, prop, reduction)
    if failures:
        example = verdict.counterexample
        assert example.input in failures
        assert list(example.output) == run(network.comparators, example.input)


def engines_to_compare():
    return [EnumerateEngine(backend="plain"), EnumerateEngine(backend="numpy"),
            EnumerateEngine(backend="numpy", reduction=False)]


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.one_of(networks(max_channels=10, max_size=40), nearly_sorting()), st.data())
def test_every_path_agrees_with_brute_force(network, data):
    prop = data.draw(st.sampled_from(properties_for(network.channels)))
    failures = brute_force_failures(network, prop)
    verdicts = []
    for engine in engines_to_compare() + [InterpretedEngine(backend="numpy")]:
        verdict = engine.check(network, prop, Budget())
        assert_verdict_right(network, prop, verdict, failures, engine.reduction)
        verdicts.append(verdict)
    # The same layout gives the same counterexample, numpy or generated kernel.
    assert verdicts[1].counterexample == verdicts[3].counterexample
    # Without reduction, the first failing input in index order (channel c is bit c).
    if failures and not isinstance(prop, Merges):
        smallest = min(failures, key=lambda v: sum(bit << c for c, bit in enumerate(v)))
        assert verdicts[0].counterexample.input == verdicts[2].counterexample.input == smallest


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.one_of(networks(max_channels=9, max_size=30), nearly_sorting()), st.data())
def test_counts_are_exact(network, data):
    prop = data.draw(st.sampled_from(properties_for(network.channels)))
    expected = len(brute_force_failures(network, prop))
    for engine in engines_to_compare() + [InterpretedEngine(backend="numpy")]:
        verdict = engine.check(network, prop, Budget(), Options(count=True))
        assert verdict.figures["failing_inputs"] == expected, engine.backend
        assert verdict.status == (Status.REFUTED if expected else Status.PROVED)


@pytest.mark.parametrize("n", [1, 2, 3, 7, 13, 20])
def test_unsorted_count_of_the_empty_network_is_two_to_the_n_minus_n_minus_one(n):
    # A sorted 0-1 vector is 0^a 1^(n-a), so n + 1 of the 2^n vectors are sorted.
    for backend in ("plain", "numpy"):
        verdict = EnumerateEngine(backend=backend).check(ComparatorNetwork(n, ()), Sorts(), Budget(),
                                                         Options(count=True))
        assert verdict.figures["failing_inputs"] == 2 ** n - n - 1


def test_count_of_a_deeply_broken_24_channel_sorter_matches_the_plain_path():
    network = build_family("merge-exchange", 24)
    broken = ComparatorNetwork(24, network.comparators[:40] + network.comparators[41:])
    counts = {backend: EnumerateEngine(backend=backend).check(broken, Sorts(), Budget(), Options(count=True))
              for backend in ("plain", "numpy")}
    assert counts["plain"].figures["failing_inputs"] == counts["numpy"].figures["failing_inputs"] > 0


@settings(max_examples=60, deadline=None)
@given(networks(max_channels=11, max_size=30), st.booleans())
def test_reduction_keeps_every_vector_its_count_and_a_real_origin(network, merge):
    n = network.channels
    if merge and n >= 2:
        split = n // 2
        groups, inputs = merge_groups(n, split), [v for v in itertools.product((0, 1), repeat=n)
                                                  if list(v[:split]) == sorted(v[:split])
                                                  and list(v[split:]) == sorted(v[split:])]
    else:
        groups, inputs = singleton_groups(n), list(itertools.product((0, 1), repeat=n))
    space = reduce_prefix(n, network.comparators, groups, largest_merge=64)
    prefix = [network.comparators[i] for i in range(network.size) if i not in space.suffix]
    assert sorted(space.suffix + tuple(space.prefix_swaps)) == list(range(network.size))
    # Every suffix comparator touches a channel an earlier suffix comparator touched, or was too big to take.
    as_int = lambda v: sum(bit << c for c, bit in enumerate(v))
    reached: dict[int, list[int]] = {}
    for v in inputs:
        reached.setdefault(as_int(run(prefix, v)), []).append(as_int(v))
    layout = Layout(space)
    assert layout.vectors == space.size == len(reached)
    vectors, origins, counts = [], [], []
    for tile in layout.tiles:
        for start in range(layout.combinations):
            values, combo_origins, combo_counts = layout.combination_values(start, start + 1)
            for lane in range(tile.vectors):
                vector = sum(((int(tile.rows[c, lane // 64]) >> (lane % 64)) & 1) << c for c in range(n))
                vectors.append(vector | int(values[0]))
                origins.append(int(tile.origins[lane]) | int(combo_origins[0]))
                counts.append(int(tile.counts[lane]) * int(combo_counts[0]))
    assert sorted(vectors) == sorted(reached)
    for vector, origin, count in zip(vectors, origins, counts):
        assert origin == min(reached[vector]) and count == len(reached[vector])
    assert sum(counts) == len(inputs)
    assert space.size <= vectors_bound(network, Sorts()) or merge


def test_merge_exchange_40_is_proved_by_the_reduction_with_its_figures():
    started = time.perf_counter()
    verdict = EnumerateEngine(backend="numpy").check(build_family("merge-exchange", 40), Sorts(), Budget())
    assert verdict.status == Status.PROVED and time.perf_counter() - started < 10
    figures = verdict.figures
    assert figures["vectors_total"] == 2 ** 40
    assert figures["vectors_evaluated"] == figures["vectors_after_reduction"] < 10 ** 6
    assert figures["prefix_comparators"] + figures["suffix_comparators"] == 283
    assert "2^40" not in verdict.scope and f"{2 ** 40:,}" in verdict.scope


def test_a_deep_fault_on_36_channels_is_found_and_rechecked():
    network = build_family("merge-exchange", 36)
    broken = ComparatorNetwork(36, network.comparators[:200] + network.comparators[201:])
    verdict = EnumerateEngine(backend="numpy").check(broken, Sorts(), Budget())
    assert verdict.status == Status.REFUTED
    example = verdict.counterexample
    assert run(broken.comparators, example.input) == list(example.output) != sorted(example.input)


def test_a_timeout_during_the_reduction_or_evaluation_comes_back_quickly():
    for engine, n in ((EnumerateEngine(), 40), (EnumerateEngine(reduction=False), 32)):
        started = time.perf_counter()
        verdict = engine.check(build_family("odd-even-transposition", n), Sorts(), Budget.of(0.01))
        assert time.perf_counter() - started < 1.0
        assert verdict.status == Status.UNKNOWN and verdict.stop == StopReason.TIMEOUT
        assert "nothing is proved" in verdict.scope


def brute_force_redundant(network):
    swapped = set()
    for v in itertools.product((0, 1), repeat=network.channels):
        wires = list(v)
        for index, (a, b) in enumerate(network.comparators):
            if wires[a] > wires[b]:
                swapped.add(index)
                wires[a], wires[b] = wires[b], wires[a]
    return [i for i in range(network.size) if i not in swapped]


@settings(max_examples=60, deadline=None)
@given(st.one_of(networks(max_channels=10, max_size=30), nearly_sorting()))
def test_redundant_comparators_match_brute_force(network):
    expected = brute_force_redundant(network)
    assert redundant_comparators_by_enumeration(network, backend="numpy") == expected
    space = reduce_prefix(network.channels, network.comparators, singleton_groups(network.channels))
    layout = Layout(space)
    suffix = [network.comparators[i] for i in space.suffix]
    outcome = evaluate(layout, compiled.CompiledEvaluator(layout, suffix, None, interpreted=True), "swaps", Budget())
    reference = evaluate(layout, NumpyEvaluator(layout, suffix, None), "swaps", Budget())
    assert outcome.swapped.tolist() == reference.swapped.tolist()


def test_redundancy_of_a_sorter_with_a_repeated_comparator():
    network = build_family("merge-exchange", 16)
    doubled = ComparatorNetwork(16, network.comparators + network.comparators[-3:])
    assert redundant_comparators_by_enumeration(network) == []
    assert redundant_comparators_by_enumeration(doubled) == [network.size, network.size + 1, network.size + 2]
    assert redundant_comparators_by_enumeration(doubled, Budget.of(0)) is None


FIXED = [build_family("merge-exchange", 13),
         ComparatorNetwork(9, ((8, 0), (1, 7), (2, 6), (3, 5), (0, 4), (4, 8), (1, 2), (6, 7), (0, 1), (3, 4)))]


@needs_numba
@pytest.mark.parametrize("network", FIXED, ids=lambda net: f"{net.channels}-{net.size}")
def test_compiled_kernels_agree_with_brute_force(network):
    # Each case compiles a kernel (about a second), so few cases; the generated source itself is
    # tested on many networks above, run as plain Python.
    for prop, reduction in ((Sorts(), False), (Median(), True), (Selects(count=3, sorted=True), True)):
        failures = brute_force_failures(network, prop)
        verdict = EnumerateEngine(backend="numba", reduction=reduction).check(network, prop, Budget())
        assert verdict.figures["kernel"] == "numba"
        assert_verdict_right(network, prop, verdict, failures, reduction)
        numpy_verdict = EnumerateEngine(backend="numpy", reduction=reduction).check(network, prop, Budget())
        assert verdict.counterexample == numpy_verdict.counterexample
    counted = EnumerateEngine(backend="numba", reduction=False).check(network, Sorts(), Budget(), Options(count=True))
    assert counted.figures["failing_inputs"] == len(brute_force_failures(network, Sorts()))
    assert redundant_comparators_by_enumeration(network, backend="numba") == brute_force_redundant(network)


@needs_numba
def test_compiled_kernel_on_a_large_broken_network():
    network = build_family("merge-exchange", 22)
    broken = ComparatorNetwork(22, network.comparators[:80] + network.comparators[81:])
    verdicts = [EnumerateEngine(backend=b, reduction=False).check(broken, Sorts(), Budget(), Options(count=True))
                for b in ("numba", "numpy")]
    assert verdicts[0].figures["kernel"] == "numba"
    assert verdicts[0].figures["failing_inputs"] == verdicts[1].figures["failing_inputs"] > 0
    assert verdicts[0].counterexample == verdicts[1].counterexample


def test_without_numba_the_numpy_path_runs(monkeypatch):
    monkeypatch.setattr(compiled, "numba_module", lambda: None)
    assert not compiled.available()
    network = ComparatorNetwork(5, build_family("merge-exchange", 5).comparators[:-1])
    verdict = EnumerateEngine(backend="numba").check(network, Sorts(), Budget())
    assert verdict.figures["kernel"] == "numpy" and verdict.status == Status.REFUTED
    assert redundant_comparators_by_enumeration(network, backend="numba") == brute_force_redundant(network)
