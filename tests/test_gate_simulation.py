"""The simulate engine against brute force: ``GateCircuit.evaluate`` on every input, judged with ``sorted``.

The circuits are built here from compare-and-swap blocks written in and/or/not
gates; the reference (``brute_force_failures``) evaluates every input one by
one and states each property with Python's ``sorted``, sharing no code with
the engine, its vectorised checks or ``sortcheck.model.semantics``.
"""

from __future__ import annotations

import time
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from sortcheck.engines.base import Budget, Status, StopReason
from sortcheck.engines.gates.simulation import (SimulateEngine, compile_circuit, evaluate_rows, new_table,
                                               quick_refute)
from sortcheck.engines.gates.word_blocks import limbs_to_rows, rows_to_limbs
from sortcheck.engines.gates.word_corners import random_keys
from sortcheck.load import read_netlist
from sortcheck.model import (ComparatorNetwork, Gate, GateCircuit, Median, Merges, OutputWord, PartialSort, Selects,
                             Sorts, Word, bit_name)

CORPUS = Path(__file__).resolve().parent.parent / "corpus"


# --- circuits built from compare-and-swap blocks ---------------------------------------------------------------

class Builder:
    """Collects gates with fresh names."""

    def __init__(self):
        self.gates: list[Gate] = []

    def gate(self, op, *inputs):
        name = f"g{len(self.gates)}"
        self.gates.append(Gate(name, op, tuple(inputs)))
        return name

    def xor2(self, a, b):  # in and/or/not only
        return self.gate("or", self.gate("and", a, self.gate("not", b)), self.gate("and", self.gate("not", a), b))

    def less(self, a, b, skip_bit=None):
        """a < b as unsigned words (bit lists, least significant first), most significant bit first."""
        less, equal = 0, 1
        for i in reversed(range(len(a))):
            if i == skip_bit:
                continue
            here = self.gate("and", self.gate("not", a[i]), b[i])
            less = here if less == 0 else self.gate("or", less, self.gate("and", equal, here))
            differ = self.xor2(a[i], b[i])
            equal = self.gate("not", differ) if equal == 1 else self.gate("and", equal, self.gate("not", differ))
        return less

    def compare_and_swap(self, a, b, signed=False, zero_on_equal=False, skip_bit=None):
        """(min, max) of two words; ``zero_on_equal`` makes the min 0 when a == b (a bug needing duplicates)."""
        if signed:  # flip the sign bits for the comparison only
            a_cmp, b_cmp = a[:-1] + [self.gate("not", a[-1])], b[:-1] + [self.gate("not", b[-1])]
        else:
            a_cmp, b_cmp = a, b
        a_less = self.less(a_cmp, b_cmp, skip_bit)
        b_less = self.less(b_cmp, a_cmp, skip_bit)
        take_a = a_less if zero_on_equal else self.gate("not", b_less)  # the min comes from a
        take_b = b_less if zero_on_equal else self.gate("not", take_a)  # the min comes from b
        low = [self.gate("or", self.gate("and", take_a, x), self.gate("and", take_b, y)) for x, y in zip(a, b)]
        not_take_a = self.gate("not", take_a)
        high = [self.gate("or", self.gate("and", take_a, y), self.gate("and", not_take_a, x)) for x, y in zip(a, b)]
        return low, high


def sorter(words, width, pairs, signed=False, keep=None, descending=False, **faults):
    """A circuit applying compare-and-swap to word pairs in order; ``keep`` picks output words."""
    builder = Builder()
    inputs = tuple(Word(f"x{k}", width) for k in range(words))
    wires = [[bit_name(word.name, i) for i in range(width)] for word in inputs]
    for a, b in pairs:
        low, high = builder.compare_and_swap(wires[a], wires[b], signed, **faults)
        wires[a], wires[b] = (high, low) if descending else (low, high)
    keep = range(words) if keep is None else keep
    outputs = tuple(OutputWord(f"y{k}", tuple(wires[k])) for k in keep)
    return GateCircuit(inputs, tuple(builder.gates), outputs)


THREE = [(0, 1), (1, 2), (0, 1)]


def flip_gate(circuit, index):
    """The circuit with gate ``index`` changed from and to or (or back); None for a not."""
    gate = circuit.gates[index]
    if gate.op not in ("and", "or"):
        return None
    flipped = Gate(gate.out, "or" if gate.op == "and" else "and", gate.inputs)
    return GateCircuit(circuit.inputs, circuit.gates[:index] + (flipped,) + circuit.gates[index + 1:], circuit.outputs)


# --- the reference: every input, with sorted --------------------------------------------------------------------

def breaks(prop, inputs, outputs, width):
    n = len(inputs)
    if isinstance(prop, Sorts):
        return outputs != sorted(inputs, reverse=prop.order == "descending")
    if isinstance(prop, Merges):
        m = prop.split
        if inputs[:m] != sorted(inputs[:m]) or inputs[m:] != sorted(inputs[m:]):
            return False
        return outputs != sorted(inputs)
    if isinstance(prop, Selects):
        first = outputs[:prop.count]
        return sorted(first) != sorted(inputs)[:prop.count] or (prop.sorted and first != sorted(first))
    if isinstance(prop, Median):
        return outputs[(len(outputs) - 1) // 2] != sorted(inputs)[(n - 1) // 2]
    if isinstance(prop, PartialSort):
        def key(value):
            return value >> (width - prop.key_bits)
        if sorted(outputs) != sorted(inputs) or [key(v) for v in outputs] != sorted(key(v) for v in outputs):
            return True
        return prop.stable and outputs != sorted(inputs, key=key)
    raise AssertionError(prop)


def signed_of(value, width):
    return value - (1 << width) if value >> (width - 1) else value


def brute_force_failures(circuit, prop):
    """Failing inputs in input index order (word k holds index bits k*w .. k*w+w-1)."""
    n, w = circuit.words, circuit.width
    for index in range(1 << (n * w)):
        raw = [(index >> (k * w)) & ((1 << w) - 1) for k in range(n)]
        values = [signed_of(v, w) for v in raw] if prop.signed else raw
        outputs = circuit.evaluate(values)
        if prop.signed:
            outputs = [signed_of(v, w) for v in outputs]
        if breaks(prop, values, outputs, w):
            yield tuple(values), tuple(outputs)


def assert_agrees(circuit, prop):
    verdict = SimulateEngine().check(circuit, prop, Budget())
    first = next(brute_force_failures(circuit, prop), None)
    if first is None:
        assert verdict.status is Status.PROVED, (prop, verdict.counterexample)
        assert verdict.stop is StopReason.COVERED
        assert f"{1 << (circuit.words * circuit.width):,} inputs were evaluated" in verdict.scope
    else:
        assert verdict.status is Status.REFUTED, (prop, first)
        example = verdict.counterexample
        assert (example.input, example.output) == first  # the first failure in index order
        assert example.domain == "words" and example.violation
    return verdict


def properties(words, width, outputs):
    props = [Sorts(), Sorts(order="descending"), Sorts(signed=True), Sorts(order="descending", signed=True)]
    props += [Merges(split=m) for m in range(1, words)] + [Merges(split=1, signed=True)]
    props += [Selects(count=t, sorted=s) for t in range(1, outputs + 1) for s in (False, True)]
    props += [PartialSort(key_bits=k, stable=s) for k in range(1, width + 1) for s in (False, True)]
    props += [PartialSort(key_bits=1, stable=True, signed=True)]
    if words % 2:
        props += [Median(), Median(signed=True)]
    return props


# --- verdicts against brute force ---------------------------------------------------------------------------------

@pytest.mark.parametrize("width", [1, 2, 3, 4])
def test_compare_and_swap_against_brute_force(width):
    circuit = sorter(2, width, [(0, 1)])
    assert assert_agrees(circuit, Sorts()).status is Status.PROVED
    for prop in properties(2, width, 2):
        assert_agrees(circuit, prop)


@pytest.mark.parametrize("width", [1, 2, 3])
def test_three_word_sorters_against_brute_force(width):
    for signed in (False, True):
        circuit = sorter(3, width, THREE, signed=signed)
        assert assert_agrees(circuit, Sorts(signed=signed)).status is Status.PROVED
        for prop in properties(3, width, 3):
            assert_agrees(circuit, prop)
    descending = sorter(3, width, THREE, descending=True)
    assert assert_agrees(descending, Sorts(order="descending")).status is Status.PROVED
    assert assert_agrees(descending, Sorts()).status is Status.REFUTED


def test_outputs_fewer_than_inputs():
    median = sorter(3, 2, THREE, keep=[1])
    assert assert_agrees(median, Median()).status is Status.PROVED
    assert assert_agrees(median, Median(signed=True)).status is Status.REFUTED
    assert assert_agrees(sorter(3, 2, THREE[:2], keep=[1]), Median()).status is Status.REFUTED
    smallest = sorter(3, 2, [(1, 2), (0, 1)], keep=[0])
    assert assert_agrees(smallest, Selects(count=1)).status is Status.PROVED
    assert assert_agrees(smallest, Median()).status is Status.REFUTED
    two = sorter(3, 2, [(1, 2), (0, 1)], keep=[0, 1])
    assert assert_agrees(two, Selects(count=1)).status is Status.PROVED
    assert assert_agrees(two, Selects(count=2)).status is Status.REFUTED
    selector = sorter(3, 2, [(1, 2), (0, 1), (1, 2)], keep=[0, 1])
    assert assert_agrees(selector, Selects(count=2, sorted=True)).status is Status.PROVED


def test_broken_variants_against_brute_force():
    circuit = sorter(3, 2, THREE)
    props = [Sorts(), Merges(split=1), Merges(split=2), Selects(count=1), Selects(count=2, sorted=True), Median(),
             PartialSort(key_bits=1), PartialSort(key_bits=1, stable=True)]
    refuted = 0
    for index in range(0, len(circuit.gates), 3):
        broken = flip_gate(circuit, index)
        if broken is None:
            continue
        for prop in props:
            refuted += assert_agrees(broken, prop).status is Status.REFUTED
    assert refuted > 20


def test_corpus_compare_and_swap():
    circuit = read_netlist(CORPUS / "compare-and-swap-2x2.json")
    for prop in [Sorts(), Sorts(order="descending"), Sorts(signed=True), Merges(split=1), Selects(count=1),
                 PartialSort(key_bits=1, stable=True), PartialSort(key_bits=2)]:
        assert_agrees(circuit, prop)
    assert SimulateEngine().check(circuit, Sorts(), Budget()).status is Status.PROVED


# --- the bit-parallel evaluator against GateCircuit.evaluate -------------------------------------------------------

@st.composite
def random_circuits(draw):
    words, width = draw(st.integers(1, 3)), draw(st.integers(1, 4))
    inputs = tuple(Word(f"w{k}", width) for k in range(words))
    signals = [bit_name(word.name, i) for word in inputs for i in range(width)]
    gates = []
    for index in range(draw(st.integers(0, 25))):
        op = draw(st.sampled_from(["and", "or", "nand", "nor", "xor", "xnor", "not", "mux"]))
        arity = 1 if op == "not" else 3 if op == "mux" else draw(st.integers(2, 4))
        source = st.one_of(st.sampled_from(signals), st.sampled_from([0, 1]))
        gates.append(Gate(f"t{index}", op, tuple(draw(source) for _ in range(arity))))
        signals.append(f"t{index}")
    outputs = tuple(OutputWord(f"o{k}", tuple(draw(st.one_of(st.sampled_from(signals), st.sampled_from([0, 1])))
                                              for _ in range(width))) for k in range(draw(st.integers(1, 3))))
    order = draw(st.permutations(range(len(gates))))
    return GateCircuit(inputs, tuple(gates[i] for i in order), outputs)


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(random_circuits(), st.integers(0, 2**32 - 1))
def test_bit_parallel_evaluation_matches_evaluate(circuit, seed):
    rng = np.random.default_rng(seed)
    width = circuit.width
    values = rng.integers(0, 1 << width, size=(128, circuit.words, 1)).astype(np.uint64)
    program = compile_circuit(circuit)
    rows = evaluate_rows(program, new_table(program, 2), limbs_to_rows(values, width))
    outputs = rows_to_limbs(rows, len(circuit.outputs), width)[:, :, 0]
    for lane in range(128):
        assert outputs[lane].tolist() == circuit.evaluate([int(v) for v in values[lane, :, 0]])


def test_words_wider_than_64_bits_round_trip_and_check():
    rng = np.random.default_rng(5)
    limbs = rng.integers(0, 1 << 64, size=(64, 3, 2), dtype=np.uint64)
    limbs[:, :, 1] &= np.uint64((1 << 6) - 1)
    assert (rows_to_limbs(limbs_to_rows(limbs, 70), 3, 70) == limbs).all()
    circuit = sorter(2, 70, [(0, 1)])
    assert SimulateEngine(samples=2000).check(circuit, Sorts(), Budget()).status is Status.UNKNOWN
    broken = sorter(2, 70, [(0, 1)], skip_bit=1)
    verdict = SimulateEngine(samples=2000).check(broken, Sorts(), Budget())
    assert verdict.status is Status.REFUTED
    example = verdict.counterexample
    assert breaks(Sorts(), list(example.input), list(example.output), 70)
    assert list(example.output) == broken.evaluate(list(example.input))


# --- sampling ------------------------------------------------------------------------------------------------------

def test_sampling_finds_a_bug_that_needs_equal_values():
    circuit = sorter(4, 16, [(0, 1), (2, 3), (0, 2), (1, 3), (1, 2)], zero_on_equal=True)
    verdict = SimulateEngine().check(circuit, Sorts(), Budget())
    assert verdict.status is Status.REFUTED
    example = verdict.counterexample
    assert len(set(example.input)) < len(example.input)  # the failure needs two equal words
    assert breaks(Sorts(), list(example.input), list(example.output), 16)
    assert list(example.output) == circuit.evaluate(list(example.input))


def test_random_inputs_favour_duplicates_and_sorted_runs():
    keys = random_keys(np.random.default_rng(3), 6400, 4, 32)[:, :, 0]
    duplicated = np.mean([len(set(row)) < 4 for row in keys.tolist()])
    ascending = np.mean((np.diff(keys.astype(np.int64), axis=1) >= 0).all(axis=1))
    assert duplicated > 0.3 and ascending > 0.25  # uniform 32-bit words: about 1e-9 and 1/24
    runs = random_keys(np.random.default_rng(3), 640, 5, 8, runs=(2,))[:, :, 0].astype(np.int64)
    assert (np.diff(runs[:, :2], axis=1) >= 0).all() and (np.diff(runs[:, 2:], axis=1) >= 0).all()


def test_sampling_finds_a_near_equal_bug_reproducibly():
    circuit = sorter(3, 12, THREE, skip_bit=2)  # 36 input bits: beyond the exhaustive limit
    first = SimulateEngine().check(circuit, Sorts(), Budget())
    again = SimulateEngine().check(circuit, Sorts(), Budget())
    assert first.status is Status.REFUTED and first.figures["mode"] == "sampling"
    assert first.counterexample == again.counterexample
    assert first.figures["vectors_evaluated"] == again.figures["vectors_evaluated"]
    values = sorted(first.counterexample.input)
    assert breaks(Sorts(), list(first.counterexample.input), list(first.counterexample.output), 12)
    assert any((a ^ b) >> 3 == 0 and a != b for a, b in zip(values, values[1:]))  # near-equal words
    example = quick_refute(circuit, Sorts())
    assert example is not None and example == quick_refute(circuit, Sorts())


def test_sampling_never_proves():
    circuit = sorter(3, 11, THREE)
    verdict = SimulateEngine(samples=5000).check(circuit, Sorts(), Budget())
    assert verdict.status is Status.UNKNOWN and verdict.stop is StopReason.SIZE_LIMIT
    assert "nothing is proved" in verdict.scope and verdict.counterexample is None
    assert verdict.figures["vectors_evaluated"] == 5000 + verdict.figures["corner_cases"]
    assert quick_refute(circuit, Sorts(), samples=2000) is None
    small = SimulateEngine(max_exhaustive_bits=4).check(sorter(2, 3, [(0, 1)]), Sorts(), Budget())
    assert small.status is Status.UNKNOWN and small.stop is StopReason.SIZE_LIMIT


# --- budgets, refusals ---------------------------------------------------------------------------------------------

def test_budget_honoured():
    circuit = sorter(4, 8, [(0, 1), (2, 3), (0, 2), (1, 3), (1, 2)])  # 2^32 inputs: far beyond the budget
    started = time.monotonic()
    verdict = SimulateEngine().check(circuit, Sorts(), Budget.of(0.5))
    assert time.monotonic() - started < 3
    assert verdict.status is Status.UNKNOWN and verdict.stop is StopReason.TIMEOUT
    assert "nothing is proved" in verdict.scope
    expired = SimulateEngine().check(sorter(3, 11, THREE), Sorts(), Budget(deadline=time.monotonic() - 1))
    assert expired.stop is StopReason.TIMEOUT and expired.figures["vectors_evaluated"] == 0


def test_refusals():
    engine = SimulateEngine()
    refused = engine.refusal(ComparatorNetwork(2, ((0, 1),)), Sorts(), None)
    assert refused is not None and refused[0] is StopReason.UNSUPPORTED
    assert engine.refusal(sorter(2, 2, [(0, 1)]), Sorts(), None) is None
    misfit = engine.refusal(sorter(2, 2, [(0, 1)]), Median(), None)
    assert misfit is not None and "odd" in misfit[1]
    assert engine.check(ComparatorNetwork(2, ((0, 1),)), Sorts(), Budget()).status is Status.UNKNOWN


@pytest.mark.parametrize("width", [1, 2, 5, 16, 17, 64, 70])
def test_words_become_bit_rows_and_back_as_python_integers_say(width):
    # Reference: Python's integers, bit i of word k of lane j at row k * width + i, bit j % 64 of column j // 64.
    from sortcheck.engines.gates.word_blocks import ints_to_limbs, limbs_to_rows, rows_to_limbs

    rng = np.random.default_rng(width)
    words, lanes = 3, 128
    values = [tuple(int(rng.integers(0, 2 ** 62)) * 2 ** 40 % (1 << width) | int(rng.integers(0, 2)) for _ in
                    range(words)) for _ in range(lanes)]
    rows = limbs_to_rows(ints_to_limbs(values, words, width), width)
    for k in range(words):
        for i in range(width):
            expected = sum(((values[j][k] >> i) & 1) << j for j in range(lanes))
            assert int(rows[k * width + i, 0]) | int(rows[k * width + i, 1]) << 64 == expected
    back = rows_to_limbs(rows, words, width)
    assert back.tolist() == ints_to_limbs(values, words, width).tolist()
