"""Gate circuits built from comparator networks and the counting sorter, against Python's ``sorted``.

Circuits are run two ways: with ``GateCircuit.evaluate`` (the model's own
evaluator) and with the numpy evaluator of ``tests/gate_reference.py``, which
runs a circuit on every input of a small space at once and shares no code with
the model's (the two are compared on random circuits first).  Expected outputs
come from Python's ``sorted`` (signed: the words read as two's complement),
from ``ComparatorNetwork.apply`` for networks that do not sort, and, for the
large random samples of the counting sorter, from ``numpy.sort`` beside
``sorted`` on the first rows.
"""

from __future__ import annotations

import random
import re
from functools import lru_cache

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from gate_reference import OPS, input_rows, run_gates_numpy
from sortcheck.errors import UsageError
from sortcheck.load import dump_netlist, parse_netlist
from sortcheck.model import ComparatorNetwork, Gate, GateCircuit, Merges, OutputWord, PartialSort, Selects, Sorts, Word
from sortcheck.model.circuit_builds import build_circuit
from sortcheck.model.cost import cost_counts
from sortcheck.model.counting import counting_sorter
from sortcheck.model.families import FAMILIES, merge_exchange
from sortcheck.model.lowering import STYLES, lower_network

FAMILY_CASES = [(family, n) for family in ("merge-exchange", "bitonic", "odd-even-transposition", "insertion")
                for n in range(2, 7) if family != "bitonic" or n in (2, 4)]
EXHAUSTIVE_BITS = 16  # inputs spaces of at most 2^16 are run completely
SAMPLE = 3000


def random_inputs(words: int, width: int, rows: int, seed: int) -> np.ndarray:
    return np.random.default_rng(seed).integers(0, 1 << width, size=(rows, words), dtype=np.int64)


def as_signed(value: int, width: int) -> int:
    return value - (1 << width) if value >> (width - 1) else value


def sorted_rows(rows: list[list[int]], width: int, signed: bool) -> np.ndarray:
    """Every row through Python's ``sorted``, written back as unsigned words."""
    mask = (1 << width) - 1
    if signed:
        return np.array([[v & mask for v in sorted(as_signed(v, width) for v in row)] for row in rows])
    return np.array([sorted(row) for row in rows])


@lru_cache(maxsize=None)
def sorted_input_rows(words: int, width: int, signed: bool) -> np.ndarray:
    return sorted_rows(input_rows(words, width).tolist(), width, signed)


def inputs_and_sorted(words: int, width: int, signed: bool, seed: int) -> tuple[np.ndarray, np.ndarray]:
    """Every input when there are at most 2^16, else a random sample; with their sorted outputs."""
    if words * width <= EXHAUSTIVE_BITS:
        return input_rows(words, width), sorted_input_rows(words, width, signed)
    sample = random_inputs(words, width, SAMPLE, seed)
    return sample, sorted_rows(sample.tolist(), width, signed)


def random_circuit(rng: random.Random) -> GateCircuit:
    inputs = (Word("a", 3), Word("b", 2))
    signals = ["a[0]", "a[1]", "a[2]", "b[0]", "b[1]", 0, 1]
    gates = []
    for k in range(30):
        op = rng.choice(sorted(OPS))
        arity = 1 if op == "not" else 3 if op == "mux" else rng.randint(2, 4)
        gates.append(Gate(f"g{k}", op, tuple(rng.choice(signals) for _ in range(arity))))
        signals.append(f"g{k}")
    outputs = (OutputWord("y", tuple(rng.choice(signals) for _ in range(4))), OutputWord("z", ("g29",)))
    return GateCircuit(inputs, tuple(gates), outputs)


def test_numpy_evaluator_agrees_with_gate_circuit_evaluate():
    rng = random.Random(7)
    for _ in range(20):
        circuit = random_circuit(rng)
        rows = [[rng.randrange(8), rng.randrange(4)] for _ in range(40)]
        assert run_gates_numpy(circuit, np.array(rows)).tolist() == [circuit.evaluate(row) for row in rows]


# --- lowered sorting networks sort --------------------------------------------------------------

@pytest.mark.parametrize("style", STYLES)
@pytest.mark.parametrize("family, n", FAMILY_CASES)
def test_lowered_families_sort_every_width_signed_and_unsigned(family, n, style):
    network = FAMILIES[family](n)
    for width in range(1, 5):
        for signed in (False, True):
            circuit = lower_network(network, width, style=style, signed=signed)
            inputs, expected = inputs_and_sorted(n, width, signed, seed=n * 10 + width)
            assert np.array_equal(run_gates_numpy(circuit, inputs), expected), (circuit.name, signed)


@pytest.mark.parametrize("style", STYLES)
@pytest.mark.parametrize("signed", (False, True))
def test_gate_circuit_evaluate_on_every_input_of_a_lowered_network(style, signed):
    width = 3
    circuit = lower_network(merge_exchange(4), width, style=style, signed=signed)
    rows = input_rows(4, width).tolist()
    expected = sorted_rows(rows, width, signed).tolist()
    assert [circuit.evaluate(row) for row in rows] == expected


@st.composite
def networks_with_reversed_comparators(draw):
    n = draw(st.integers(1, 6))
    pairs = st.tuples(st.integers(0, n - 1), st.integers(0, n - 1)).filter(lambda p: p[0] != p[1])
    return ComparatorNetwork(n, tuple(draw(st.lists(pairs, max_size=12))))


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(networks_with_reversed_comparators(), st.sampled_from(sorted(STYLES)), st.integers(1, 5), st.booleans(),
       st.data())
def test_lowered_network_computes_what_the_network_computes(network, style, width, signed, data):
    """Any network, reversed comparators included: the circuit equals ComparatorNetwork.apply on the values."""
    circuit = lower_network(network, width, style=style, signed=signed)
    word = st.integers(0, (1 << width) - 1)
    for _ in range(5):
        values = data.draw(st.lists(word, min_size=network.channels, max_size=network.channels))
        read = [as_signed(v, width) if signed else v for v in values]
        expected = [v % (1 << width) for v in network.apply(read)]
        assert circuit.evaluate(values) == expected


def test_reversed_comparators_sort_descending():
    network = ComparatorNetwork(3, ((1, 0), (2, 1), (1, 0)), claim=Sorts(order="descending"))
    for style in STYLES:
        circuit = lower_network(network, 2, style=style)
        assert circuit.claim == Sorts(order="descending")
        for row in input_rows(3, 2).tolist():
            assert circuit.evaluate(row) == sorted(row, reverse=True)


# --- key-only comparison -------------------------------------------------------------------------

def key_of(value: int, width: int, key_bits: int, signed: bool) -> int:
    return (as_signed(value, width) if signed else value) >> (width - key_bits)


def run_with_keys(network: ComparatorNetwork, row: list[int], width: int, key_bits: int, signed: bool) -> list[int]:
    """The network applied value by value, comparing keys only and moving whole words."""
    wires = list(row)
    for a, b in network.comparators:
        if key_of(wires[a], width, key_bits, signed) > key_of(wires[b], width, key_bits, signed):
            wires[a], wires[b] = wires[b], wires[a]
    return wires


@pytest.mark.parametrize("style", STYLES)
@pytest.mark.parametrize("family, n", [("merge-exchange", 5), ("bitonic", 4), ("odd-even-transposition", 4),
                                       ("insertion", 3)])
def test_key_bits_sort_by_the_top_bits_and_keep_the_words(family, n, style):
    network = FAMILIES[family](n)
    for width in range(2, 5):
        for key_bits in range(1, width):
            for signed in (False, True):
                circuit = lower_network(network, width, style=style, signed=signed, key_bits=key_bits)
                assert circuit.claim == PartialSort(key_bits=key_bits, signed=signed)
                inputs = input_rows(n, width) if n * width <= 12 else random_inputs(n, width, SAMPLE, 3)
                outputs = run_gates_numpy(circuit, inputs)
                # a permutation of the input words ...
                assert np.array_equal(np.sort(outputs, axis=1), np.sort(inputs, axis=1))
                # ... whose keys ascend (comparator networks are not stable, so nothing more is asked)
                values = np.where(outputs >> (width - 1), outputs - (1 << width), outputs) if signed else outputs
                keys = values >> (width - key_bits)
                assert (np.diff(keys, axis=1) >= 0).all(), circuit.name
                for row, out in list(zip(inputs.tolist(), outputs.tolist()))[:200]:
                    assert out == run_with_keys(network, row, width, key_bits, signed)


def test_key_bits_equal_to_the_width_compare_whole_words():
    circuit = lower_network(merge_exchange(3), 3, key_bits=3)
    assert circuit == lower_network(merge_exchange(3), 3)
    assert circuit.claim == Sorts()


# --- a broken network gives a wrong circuit ------------------------------------------------------

@pytest.mark.parametrize("style", STYLES)
def test_lowered_network_missing_a_comparator_fails_on_some_input(style):
    network = merge_exchange(4)  # 5 comparators, the fewest that sort 4 values (Knuth TAOCP vol. 3, 5.3.4; from memory)
    for missing in range(network.size):
        broken = ComparatorNetwork(4, network.comparators[:missing] + network.comparators[missing + 1:])
        circuit = lower_network(broken, 2, style=style)
        failing = next((row for row in input_rows(4, 2).tolist() if circuit.evaluate(row) != sorted(row)), None)
        assert failing is not None, f"comparator {missing} removed, yet every input comes out sorted"
        assert circuit.evaluate(failing) == broken.apply(failing)


# --- names, claims, descriptions -----------------------------------------------------------------

def test_names_claims_and_descriptions():
    circuit = lower_network(merge_exchange(8), 4)
    assert circuit.name == "merge-exchange-8-w4-and-or"
    assert circuit.claim == Sorts(signed=False)
    assert "merge-exchange-8" in circuit.description and "4-bit" in circuit.description
    signed = lower_network(merge_exchange(8), 4, style="mux", signed=True)
    assert signed.name == "merge-exchange-8-w4-mux-signed" and signed.claim == Sorts(signed=True)
    keyed = lower_network(merge_exchange(8), 4, style="xor", key_bits=2)
    assert keyed.name == "merge-exchange-8-w4-xor-k2" and keyed.claim == PartialSort(key_bits=2)
    merger = ComparatorNetwork(4, ((0, 2), (1, 3), (1, 2)), name="merge", claim=Merges(split=2))
    assert lower_network(merger, 2, signed=True).claim == Merges(split=2, signed=True)
    assert lower_network(merger, 2, key_bits=1).claim is None
    selector = ComparatorNetwork(3, ((0, 1), (0, 2)), claim=Selects(count=1))
    assert lower_network(selector, 2, key_bits=1).claim is None
    assert lower_network(ComparatorNetwork(2, ((0, 1),)), 2).name == "network-2-w2-and-or"
    assert lower_network(ComparatorNetwork(2, ((0, 1),)), 2).claim is None


@pytest.mark.parametrize("style", STYLES)
@pytest.mark.parametrize("width, key_bits", [(1, None), (3, None), (3, 1), (4, 2)])
def test_gate_names_are_unique_and_say_which_comparator(style, width, key_bits):
    network = merge_exchange(5)
    circuit = lower_network(network, width, style=style, key_bits=key_bits)
    names = [gate.out for gate in circuit.gates]
    assert len(names) == len(set(names))
    assert all(re.fullmatch(r"c\d+_[a-z]+\d*(_[a-z]+)?", name) for name in names), names[:10]
    for k in range(network.size):
        assert {f"c{k}_gt", f"c{k}_lo0", f"c{k}_hi{width - 1}"} <= set(names)
    assert [word.name for word in circuit.inputs] == [f"x{i}" for i in range(5)]
    assert [word.name for word in circuit.outputs] == [f"y{i}" for i in range(5)]


def test_styles_use_their_own_ops():
    network = merge_exchange(4)
    assert set(lower_network(network, 3, style="and-or").op_counts()) == {"and", "or", "not"}
    assert set(lower_network(network, 3, style="mux").op_counts()) == {"mux", "xor"}
    assert set(lower_network(network, 3, style="xor").op_counts()) == {"and", "xor"}


def test_bad_arguments_are_refused():
    for kwargs, phrase in [({"width": 0}, "width"), ({"width": 2, "style": "nand"}, "unknown style"),
                           ({"width": 2, "key_bits": 3}, "key_bits"), ({"width": 2, "key_bits": 0}, "key_bits")]:
        with pytest.raises(ValueError, match=phrase):
            lower_network(merge_exchange(3), **kwargs)


# --- the counting sorter -------------------------------------------------------------------------

@pytest.mark.parametrize("signed", (False, True))
def test_counting_sorter_small_sizes_on_every_input(signed):
    for words in range(1, 9):
        for width in range(1, 5):
            if words * width > EXHAUSTIVE_BITS:
                continue
            circuit = counting_sorter(words, width, signed=signed)
            assert np.array_equal(run_gates_numpy(circuit, input_rows(words, width)),
                                  sorted_input_rows(words, width, signed)), circuit.name


def check_counting_sorter_on_a_sample(words: int, width: int, signed: bool, rows: int) -> None:
    """Random inputs and a few special ones: Python's sorted on the first 20,000, numpy's sort on all."""
    circuit = counting_sorter(words, width, signed=signed)
    values = 1 << width
    special = [[v] * words for v in range(values)]
    special += [[i % values for i in range(words)], [(-i - 1) % values for i in range(words)]]
    inputs = np.concatenate([np.array(special), random_inputs(words, width, rows, seed=words * width)])
    outputs = run_gates_numpy(circuit, inputs)
    assert np.array_equal(outputs[:20000], sorted_rows(inputs[:20000].tolist(), width, signed))
    ranks = np.where(inputs >= values // 2, inputs - values, inputs) if signed else inputs
    expected = np.take_along_axis(inputs, np.argsort(ranks, axis=1, kind="stable"), axis=1)
    assert np.array_equal(outputs, expected)


@pytest.mark.parametrize("signed", (False, True))
@pytest.mark.parametrize("words, width", [(16, 2), (8, 3)])
def test_counting_sorter_16x2_and_8x3_sampled_heavily(words, width, signed):
    """2^17 random inputs each (all 2^24 inputs of 8x3: tests/benchmarks/bench_counting_sorter.py)."""
    check_counting_sorter_on_a_sample(words, width, signed, rows=1 << 17)


@settings(max_examples=60, deadline=None)
@given(st.sampled_from([(16, 2), (8, 3), (5, 4), (32, 1)]), st.booleans(), st.data())
def test_counting_sorter_through_gate_circuit_evaluate(size, signed, data):
    words, width = size
    circuit = _counting(words, width, signed)
    values = data.draw(st.lists(st.integers(0, (1 << width) - 1), min_size=words, max_size=words))
    assert circuit.evaluate(values) == sorted_rows([values], width, signed).tolist()[0]


@lru_cache(maxsize=None)
def _counting(words: int, width: int, signed: bool) -> GateCircuit:
    return counting_sorter(words, width, signed=signed)


def test_counting_sorter_is_named_and_claims_sorts():
    circuit = counting_sorter(16, 2)
    assert circuit.name == "counting-16-w2" and circuit.claim == Sorts()
    assert counting_sorter(8, 3, signed=True).claim == Sorts(signed=True)
    assert len(circuit.gates) < len(lower_network(merge_exchange(16), 2, style="mux").gates)
    names = [gate.out for gate in circuit.gates]
    assert len(names) == len(set(names))
    with pytest.raises(ValueError, match="threshold tests"):
        counting_sorter(1 << 10, 10)
    with pytest.raises(ValueError, match="width"):
        counting_sorter(4, 0)


# --- the format round trip -----------------------------------------------------------------------

@pytest.mark.parametrize("circuit", [lower_network(merge_exchange(5), 3, style=style, signed=signed, key_bits=k)
                                     for style in STYLES for signed in (False, True) for k in (None, 2)]
                         + [counting_sorter(6, 2), counting_sorter(4, 3, signed=True)], ids=lambda c: c.name)
def test_written_and_read_back_the_circuit_is_equal(circuit):
    read = parse_netlist(dump_netlist(circuit), source="lowered.json")
    assert read == circuit and read.claim == circuit.claim
    inputs = random_inputs(circuit.words, circuit.width, 500, seed=1)
    assert np.array_equal(run_gates_numpy(read, inputs), run_gates_numpy(circuit, inputs))
    rows = inputs[:50].tolist()
    assert [read.evaluate(row) for row in rows] == [circuit.evaluate(row) for row in rows]


# --- cost in the 2-input basis -------------------------------------------------------------------

def test_cost_counts_on_a_hand_worked_circuit():
    circuit = GateCircuit(
        (Word("a", 1), Word("b", 1), Word("c", 1)),
        (Gate("t1", "and", ("a[0]", "b[0]", "c[0]")),   # 2 AND
         Gate("t2", "nor", ("a[0]", "t1")),              # 1 OR + 1 NOT
         Gate("t3", "xnor", ("t1", "t2", "c[0]")),       # 2 XOR + 1 NOT
         Gate("t4", "mux", ("t3", "a[0]", "b[0]")),      # a XOR (s AND (a XOR b)): 1 AND + 2 XOR
         Gate("t5", "not", ("t4",)),                     # 1 NOT
         Gate("t6", "nand", ("t5", "t1")),               # 1 AND + 1 NOT
         Gate("t7", "or", ("t6", "t2", "t3", "t4"))),    # 3 OR
        (OutputWord("y", ("t7",)),))
    assert cost_counts(circuit) == {"and": 4, "or": 4, "xor": 4, "not": 4}
    assert cost_counts(GateCircuit((Word("a", 1),), (), (OutputWord("y", ("a[0]",)),))) == \
        {"and": 0, "or": 0, "xor": 0, "not": 0}


@pytest.mark.parametrize("width", (1, 2, 5))
def test_cost_of_one_compare_and_swap_per_style(width):
    """Hand counts for one comparator on w-bit words, from each style's formulas."""
    pair = ComparatorNetwork(2, ((0, 1),))
    # xor: per bit one AND in the carry (the first bit: AND then XOR) and one AND in the swap mask
    assert cost_counts(lower_network(pair, width, style="xor")) == \
        {"and": 2 * width, "or": 0, "xor": (1 + 3 * (width - 1)) + 3 * width, "not": 0}
    # mux: w muxes to compare, w - 1 XORs, 2w muxes to select; a mux is 1 AND + 2 XOR
    assert cost_counts(lower_network(pair, width, style="mux")) == \
        {"and": 3 * width, "or": 0, "xor": 2 * 3 * width + width - 1, "not": 0}
    # and-or: 2 NOT, a 3-input AND term (2-input at the top bit) and, below the top bit, 2 ANDs and 1 OR
    # of equality plus 1 AND of the chain (not at the second bit from the top); an OR of w terms;
    # then 1 NOT and per bit 4 ANDs and 2 ORs to select
    chain = max(width - 2, 0)
    expected_and = (2 * width - 1) + 2 * (width - 1) + chain + 4 * width
    expected_or = (width - 1) + (width - 1) + 2 * width
    assert cost_counts(lower_network(pair, width, style="and-or")) == \
        {"and": expected_and, "or": expected_or, "xor": 0, "not": 2 * width + 1}


# --- the checked entry point ----------------------------------------------------------------------

def test_build_circuit_checks_its_arguments():
    assert build_circuit("merge-exchange", 4, 3).name == "merge-exchange-4-w3-and-or"
    assert build_circuit("counting", 4, 2).name == "counting-4-w2"
    for args, kwargs, phrase in [
        (("bogus", 4, 2), {}, "unknown circuit family"),
        (("bitonic", 6, 2), {}, "power of two"),
        (("bitonic", 4, 2), {"style": "nand"}, "unknown style"),
        (("bitonic", 4, 2), {"key_bits": 3}, "key_bits"),
        (("bitonic", 4, 0), {}, "width"),
        (("counting", 4, 2), {"key_bits": 1}, "no style or key bits"),
        (("counting", 0, 2), {}, "words"),
        (("bitonic", 4096, 64), {}, "gates"),
    ]:
        with pytest.raises(UsageError, match=phrase):
            build_circuit(*args, **kwargs)
