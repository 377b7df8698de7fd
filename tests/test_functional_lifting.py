"""Lifting by function (``lift_by_function``: a gate circuit found to be a comparator network from what its
signals compute, and proved equal to it by SAT sweeping), judged against references outside the package.

What is checked, and against what:

* lowered networks of every family, lowering style, signed, key-only, descending, and pruned to a median or a
  selection: the lifted network, run by :func:`run_lifted` (a comparator evaluator written here, numpy, the
  tie rule the ``Lifting`` documents for key-only blocks), gives the output words the circuit gives when
  evaluated by ``tests/gate_reference.py`` (the independent gate evaluator), on every input of at most 16 bits,
  else on 3,000 random, tied, two-valued and extreme inputs; the lifted
  comparators are the lowered ones, greedy layer by greedy layer (layers computed here, :func:`greedy_layers`),
  or, where routing or pruning changes the channels, the same function on every 0-1 input (see
  :func:`same_function`);
* broken circuits (a comparator left out, a mux select inverted or taken from another comparator, a minimum
  and maximum swapped in one bit or in a whole comparator): every input is evaluated (``tests/gate_reference.py``)
  and judged with ``numpy.sort`` and Python's ``sorted`` (``tests/reference.py``); a lifting must then be the
  circuit on every input, and a lifted sorting network only for a circuit that sorts every input; with
  hypothesis, lowered networks of ``tests/strategies.nearly_sorting`` lift to a network of the same function
  (every 0-1 input), which sorts only when no sampled input breaks the circuit;
* the synthesized netlists of ``corpus/rtl``: they lift or not as the Verilog sources say, the lifted network
  equals the netlist evaluated by ``tests/netlist_reference.py`` (an independent BLIF/AIGER evaluator) on
  random and corner-case inputs, the comparators are those the Verilog source lists (its text is parsed here),
  and the network has the claimed property on every 0-1 input exactly when the listed verdict is "proved";
* ``sortcheck.api.check(path, engine="lift")`` gives some of them the verdict of
  ``corpus/rtl/expected-verdicts.txt``; a counterexample breaks the claim by ``sorted`` when the netlist is
  evaluated by ``tests/netlist_reference.py``.

"""

from __future__ import annotations

import dataclasses
import functools
import re
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

import netlist_reference as independent
from gate_reference import input_rows, run_gates_numpy, signed_values
from reference import breaks
from strategies import nearly_sorting
from sortcheck.api import check, load
from sortcheck.engines.base import Status
from sortcheck.engines.gates.lifting.functional import lift_by_function
from sortcheck.model import (ComparatorNetwork, Gate, Median, Merges, PartialSort, Selects, Sorts,
                             restrict_to_outputs)
from sortcheck.model.families import build_family
from sortcheck.model.lowering import lower_network

ROOT = Path(__file__).resolve().parent.parent
RTL = ROOT / "corpus" / "rtl"
SOURCES = RTL / "src"
STYLES = ("and-or", "mux", "xor")
#: At most this many input bits: circuits are evaluated on every input.
EXHAUSTIVE_BITS = 16


# --- references written here: a comparator evaluator, greedy layers, the 0-1 function ----------------------

def order_key(values: np.ndarray, width: int, signed: bool, key_bits: int | None) -> np.ndarray:
    """What the comparators compare: the word as unsigned or two's complement, on its ``key_bits`` top bits."""
    values = np.asarray(values, dtype=np.int64)
    if signed:
        values = np.where((values >> (width - 1)) & 1 == 1, values - (1 << width), values)
    return values >> (width - (key_bits or width))  # an arithmetic shift keeps the order of signed values


def run_lifted(lifting, inputs: np.ndarray, width: int, signed: bool = False, key_bits: int | None = None
               ) -> np.ndarray:
    """Every channel's word after the lifted network, for rows of circuit input words (unsigned encodings).

    Input word ``i`` enters channel ``lifting.input_channels[i]`` (channel ``i`` when None).  A comparator
    ``(a, b)`` leaves the word with the smaller key on channel ``a``.  On equal keys (key-only blocks) the
    ``Lifting`` documents that the block's first word stays on the minimum side: ``blocks[k].words`` is
    ``(first, second, minimum, maximum)`` word numbers, followed here channel by channel.
    """
    inputs = np.asarray(inputs, dtype=np.int64)
    words = inputs.shape[1]
    wires = np.empty_like(inputs)
    word_on = [None] * words
    for i, channel in enumerate(lifting.input_channels or range(words)):
        wires[:, channel] = inputs[:, i]
        word_on[channel] = i
    assert len(lifting.blocks) == len(lifting.network.comparators)
    for (a, b), block in zip(lifting.network.comparators, lifting.blocks):
        first, second, minimum, maximum = block.words
        assert {word_on[a], word_on[b]} == {first, second}, "a block's words are not on its comparator's channels"
        key_a = order_key(wires[:, a], width, signed, key_bits)
        key_b = order_key(wires[:, b], width, signed, key_bits)
        swap = key_a > key_b if word_on[a] == first else key_a >= key_b
        low, high = np.where(swap, wires[:, b], wires[:, a]), np.where(swap, wires[:, a], wires[:, b])
        wires[:, a], wires[:, b] = low, high
        word_on[a], word_on[b] = minimum, maximum
    return wires


def output_positions(circuit, prop) -> list[int]:
    """The network channel of every output word: ``k``, or the middle channel for a lone median word."""
    if isinstance(prop, Median) and len(circuit.outputs) == 1:
        return [(circuit.words - 1) // 2]
    return list(range(len(circuit.outputs)))


def greedy_layers(comparators, channels: int) -> list[list[tuple[int, int]]]:
    """Every comparator in the earliest layer after both its channels' last ones; each layer sorted."""
    ready, layers = [0] * channels, []
    for a, b in comparators:
        level = max(ready[a], ready[b])
        ready[a] = ready[b] = level + 1
        layers += [[] for _ in range(level + 1 - len(layers))]
        layers[level].append((a, b))
    return [sorted(layer) for layer in layers]


def zero_one_rows(channels: int) -> np.ndarray:
    return (np.arange(1 << channels, dtype=np.int64)[:, None] >> np.arange(channels)) & 1


def run_zero_one(comparators, rows: np.ndarray) -> np.ndarray:
    """Comparators (the minimum to the first channel) on rows of values, with numpy."""
    wires = np.array(rows, dtype=np.int64)
    for a, b in comparators:
        low, high = np.minimum(wires[:, a], wires[:, b]), np.maximum(wires[:, a], wires[:, b])
        wires[:, a], wires[:, b] = low, high
    return wires


def same_function(first, second, channels: int, positions=None, first_inputs=None, second_inputs=None) -> bool:
    """Whether two comparator networks give the same outputs (at ``positions``) on every 0-1 input.

    Then they give the same outputs on every input: every output of a comparator network commutes with
    monotone maps, so ``[f(x) >= t] = f([x >= t])`` for every threshold ``t``.  ``*_inputs[i]`` is the
    channel input ``i`` enters (the identity when None).
    """
    rows = zero_one_rows(channels)
    positions = list(range(channels)) if positions is None else positions

    def placed(order):
        if order is None:
            return rows
        result = np.empty_like(rows)
        result[:, list(order)] = rows
        return result

    left = run_zero_one(first, placed(first_inputs))[:, positions]
    right = run_zero_one(second, placed(second_inputs))[:, positions]
    return bool((left == right).all())


def sample_inputs(words: int, width: int, rng, count: int = 1500) -> np.ndarray:
    """Uniform words, words of few distinct values (ties), two-valued words and extremes around the sign bit."""
    top, half = (1 << width) - 1, 1 << (width - 1)
    uniform = rng.integers(0, 1 << width, size=(count, words))
    few = rng.choice(rng.integers(0, 1 << width, size=3), size=(count // 2, words))
    two = rng.choice([0, top], size=(count // 4, words))
    edges = rng.choice([0, 1, half - 1, half, top - 1, top], size=(count // 4, words))
    return np.concatenate([uniform, few, two, edges]).astype(np.int64)


def inputs_for(circuit, rng) -> np.ndarray:
    """Every input of a circuit of at most :data:`EXHAUSTIVE_BITS` input bits, else sampled inputs."""
    if circuit.words * circuit.width <= EXHAUSTIVE_BITS:
        return input_rows(circuit.words, circuit.width)
    return sample_inputs(circuit.words, circuit.width, rng)


def signedness_and_keys(prop) -> tuple[bool, int | None]:
    return prop.signed, prop.key_bits if isinstance(prop, PartialSort) else None


def assert_lifting_is_the_circuit(circuit, lifting, prop, inputs):
    """The lifted network gives the circuit's output words (tests/gate_reference.py) on every row of inputs."""
    signed, key_bits = signedness_and_keys(prop)
    expected = run_gates_numpy(circuit, inputs)
    found = run_lifted(lifting, inputs, circuit.width, signed, key_bits)[:, output_positions(circuit, prop)]
    wrong = np.flatnonzero((expected != found).any(axis=1))
    assert wrong.size == 0, (inputs[wrong[0]].tolist(), expected[wrong[0]].tolist(), found[wrong[0]].tolist())


def assert_lifted_by_sweeping(lifting):
    assert lifting.lifted, lifting.failure
    assert lifting.method == "sweeping" and lifting.failure is None
    sweep = lifting.figures["sweep"]
    assert sweep["candidates_undecided"] == 0 and sweep["rounds"] >= 1
    assert sweep["cut_points"] > 0 or not lifting.network.comparators  # comparators' words proved in the circuit


def live_only(circuit, outputs):
    """The circuit with only ``outputs`` and the gates they read (a pruned design keeps no dead logic)."""
    needed = {bit for word in outputs for bit in word.bits if isinstance(bit, str)}
    kept = []
    for gate in reversed(circuit.gates):
        if gate.out in needed:
            kept.append(gate)
            needed.update(source for source in gate.inputs if isinstance(source, str))
    return dataclasses.replace(circuit, gates=tuple(reversed(kept)), outputs=tuple(outputs))


# --- 1. lowered networks lift back to their own comparators ---------------------------------------------------

FAMILIES = ("merge-exchange", "bitonic", "odd-even-transposition", "insertion", "pairwise")
#: (signed, key_bits) variants, taken in turn by style so that every family meets every variant in some style.
VARIANTS = ((False, None), (True, None), (False, 2), (True, 3))
SMALL = [(family, 8, 4, style, *VARIANTS[(f + s) % 4]) for f, family in enumerate(FAMILIES)
         for s, style in enumerate(STYLES)]
LARGER = [("merge-exchange", 16, 8, "mux", False, None), ("bitonic", 16, 4, "and-or", True, None),
          ("pairwise", 16, 8, "mux", False, 3), ("odd-even-transposition", 10, 5, "xor", False, None),
          ("insertion", 10, 4, "and-or", True, 2), ("merge-exchange", 12, 6, "mux", True, None),
          ("merge-exchange", 8, 6, "and-or", False, 2), ("bitonic", 16, 5, "xor", True, 3)]


def prop_of(signed: bool, key_bits: int | None):
    return PartialSort(signed=signed, key_bits=key_bits) if key_bits else Sorts(signed=signed)


@pytest.mark.parametrize("family,n,width,style,signed,key_bits", SMALL + LARGER)
def test_lowered_sorter_lifts_to_its_own_comparators(family, n, width, style, signed, key_bits):
    network = build_family(family, n)
    circuit = lower_network(network, width, style=style, signed=signed, key_bits=key_bits)
    prop = prop_of(signed, key_bits)
    lifting = lift_by_function(circuit, prop)
    assert_lifted_by_sweeping(lifting)
    assert lifting.input_channels is None
    assert greedy_layers(lifting.network.comparators, n) == greedy_layers(network.comparators, n)
    assert_lifting_is_the_circuit(circuit, lifting, prop, inputs_for(circuit, np.random.default_rng(n * width)))


# Once a failure: a comparator that swaps on too few simulated inputs is missed by the first search; the sweep
# refutes the candidate and learns an input, and the second search must look signatures up with that input too.
@pytest.mark.parametrize("family,n,width,style,signed,key_bits",
                         [("merge-exchange", 12, 6, "mux", True, 2), ("merge-exchange", 10, 5, "and-or", False, 2)])
def test_key_only_sorter_that_needs_a_second_round_lifts(family, n, width, style, signed, key_bits):
    network = build_family(family, n)
    circuit = lower_network(network, width, style=style, signed=signed, key_bits=key_bits)
    lifting = lift_by_function(circuit, prop_of(signed, key_bits))
    assert lifting.figures["rounds"] >= 2  # the first search missed a comparator (what makes this case)
    assert_lifted_by_sweeping(lifting)
    assert greedy_layers(lifting.network.comparators, n) == greedy_layers(network.comparators, n)


def reversed_network(network: ComparatorNetwork) -> ComparatorNetwork:
    """Every comparator reversed: the larger word to the lower channel, a descending sorter."""
    return ComparatorNetwork(network.channels, tuple((b, a) for a, b in network.comparators))


@pytest.mark.parametrize("family,n,width,style", [("merge-exchange", 9, 4, "mux"), ("bitonic", 8, 5, "xor"),
                                                  ("odd-even-transposition", 7, 4, "and-or"),
                                                  ("insertion", 6, 3, "mux"), ("pairwise", 12, 5, "and-or")])
def test_descending_sorter_lifts_to_an_equivalent_network(family, n, width, style):
    network = reversed_network(build_family(family, n))
    circuit = lower_network(network, width, style=style)
    prop = Sorts(order="descending")
    lifting = lift_by_function(circuit, prop)
    assert_lifted_by_sweeping(lifting)
    # The channels of reversed comparators are routed anew: the same comparators up to the names of the
    # channels between them, so the same count and the same function on every input.
    assert lifting.input_channels is None and lifting.network.size == network.size
    assert same_function(lifting.network.comparators, network.comparators, n)
    assert_lifting_is_the_circuit(circuit, lifting, prop, inputs_for(circuit, np.random.default_rng(n)))
    outputs = run_zero_one(lifting.network.comparators, zero_one_rows(n))
    assert (outputs == np.sort(zero_one_rows(n), axis=1)[:, ::-1]).all()  # it sorts descending (0-1 principle)


def pruned_case(family: str, n: int, width: int, style: str, kind: str):
    """A sorter pruned to its median (one output word) or to its 3 smallest outputs, lowered, dead logic removed."""
    network = build_family(family, n)
    outputs = [(n - 1) // 2] if kind == "median" else list(range(3))
    pruned = restrict_to_outputs(network, outputs)
    lowered = lower_network(pruned, width, style=style)
    circuit = live_only(lowered, [lowered.outputs[k] for k in outputs])
    prop = Median() if kind == "median" else Selects(count=3, sorted=True)
    return pruned, outputs, circuit, prop


PRUNED = [("odd-even-transposition", 7, 4, "mux", "median"), ("pairwise", 12, 4, "xor", "median"),
          ("bitonic", 16, 3, "and-or", "median"), ("insertion", 9, 5, "xor", "median"),
          ("merge-exchange", 9, 4, "mux", "selection"), ("odd-even-transposition", 8, 4, "and-or", "selection"),
          ("bitonic", 8, 4, "mux", "selection"), ("pairwise", 12, 5, "and-or", "selection")]


@pytest.mark.parametrize("family,n,width,style,kind", PRUNED)
def test_pruned_median_and_selection_lift_to_their_comparators(family, n, width, style, kind):
    pruned, outputs, circuit, prop = pruned_case(family, n, width, style, kind)
    lifting = lift_by_function(circuit, prop)
    assert_lifted_by_sweeping(lifting)
    assert_lifting_is_the_circuit(circuit, lifting, prop, inputs_for(circuit, np.random.default_rng(n)))
    channels_in = lifting.input_channels
    # Pruning keeps every comparator that can reach the kept outputs; a comparator that never changes them
    # (merge exchange 9 to its 3 smallest: (1, 8)) has no signals of its own and is not found.  So: a part of
    # the pruned comparators, the same function on the kept outputs, and layer by layer the same when complete.
    remaining = list(pruned.comparators)
    if channels_in is None:
        for comparator in lifting.network.comparators:
            assert comparator in remaining, comparator
            remaining.remove(comparator)
        if not remaining:
            assert greedy_layers(lifting.network.comparators, n) == greedy_layers(pruned.comparators, n)
    assert same_function(lifting.network.comparators, pruned.comparators, n, outputs, channels_in)
    rows = zero_one_rows(n)
    lifted = run_zero_one(lifting.network.comparators, rows[:, np.argsort(channels_in)] if channels_in else rows)
    assert (lifted[:, outputs] == np.sort(rows, axis=1)[:, outputs]).all()  # its property on every 0-1 input


# Once a failure: comparator (1, 8) swaps on 1 of the 2,048 simulated inputs at 4 bits, and with only its
# minimum kept it shows one output bit of evidence (weak evidence is now taken when no pair has strong evidence).
@pytest.mark.parametrize("style", ["mux", "and-or", "xor"])
def test_merge_exchange_median_with_one_output_word_lifts(style):
    pruned, outputs, circuit, prop = pruned_case("merge-exchange", 9, 4, style, "median")
    lifting = lift_by_function(circuit, prop)
    assert_lifted_by_sweeping(lifting)
    assert greedy_layers(lifting.network.comparators, 9) == greedy_layers(pruned.comparators, 9)


# --- 2. broken circuits: never a lifted sorter for a circuit that does not sort --------------------------------

def replaced(circuit, gates: dict):
    """The circuit with the gates named in ``gates`` replaced (same names, so the rest reads them)."""
    return dataclasses.replace(circuit, gates=tuple(gates.get(gate.out, gate) for gate in circuit.gates))


def mux_mutants(network: ComparatorNetwork, width: int):
    """``(kind, comparator, circuit, expected network or None)``: the mux-style lowering of ``network`` broken once.

    Kinds: ``unchanged`` (the control), ``left out`` (a comparator dropped, lowered again), ``select inverted``
    (one bit of the minimum takes the larger word's bit), ``select of another comparator`` (one bit of the
    minimum chosen by the previous comparator's comparison), ``min/max swapped in one bit`` and ``min/max
    swapped`` (every bit: a reversed comparator).  The expected network is given where the broken circuit is
    still a comparator network.  Gate names are the lowering's: ``c<k>_lo<i> = mux(c<k>_gt, a_i, b_i)`` and
    ``c<k>_hi<i> = mux(c<k>_gt, b_i, a_i)``.
    """
    circuit = lower_network(network, width, style="mux")
    gate = {gate.out: gate for gate in circuit.gates}
    comparators = network.comparators
    yield "unchanged", None, circuit, network
    for k, (a, b) in enumerate(comparators):
        dropped = ComparatorNetwork(network.channels, comparators[:k] + comparators[k + 1:])
        yield "left out", k, lower_network(dropped, width, style="mux"), dropped
        low, high = gate[f"c{k}_lo{k % width}"], gate[f"c{k}_hi{k % width}"]
        select, from_a, from_b = low.inputs
        yield "select inverted", k, replaced(circuit, {low.out: Gate(low.out, "mux", (select, from_b, from_a))}), None
        if k > 0:
            other = Gate(low.out, "mux", (f"c{k - 1}_gt", from_a, from_b))
            yield "select of another comparator", k, replaced(circuit, {low.out: other}), None
        swapped = {low.out: Gate(low.out, "mux", high.inputs), high.out: Gate(high.out, "mux", low.inputs)}
        yield "min/max swapped in one bit", k, replaced(circuit, swapped), None
        whole = {}
        for i in range(width):
            low, high = gate[f"c{k}_lo{i}"], gate[f"c{k}_hi{i}"]
            whole[low.out], whole[high.out] = Gate(low.out, "mux", high.inputs), Gate(high.out, "mux", low.inputs)
        reversed_k = ComparatorNetwork(network.channels, comparators[:k] + ((b, a),) + comparators[k + 1:])
        yield "min/max swapped", k, replaced(circuit, whole), reversed_k


def network_sorts(comparators, channels: int) -> bool:
    """Whether a comparator network sorts every 0-1 input (then every input: the 0-1 principle)."""
    rows = zero_one_rows(channels)
    return bool((run_zero_one(comparators, rows) == np.sort(rows, axis=1)).all())


@pytest.mark.parametrize("family", ["merge-exchange", "odd-even-transposition"])
def test_broken_circuits_lift_to_what_they_compute_or_not_at_all(family):
    network, width = build_family(family, 5), 3
    inputs = input_rows(5, width)  # every input: 15 bits
    ordered = np.sort(inputs, axis=1)
    tally = {"broken": 0, "lifted": 0, "mutants": 0}
    for kind, k, circuit, expected in mux_mutants(network, width):
        outputs = run_gates_numpy(circuit, inputs)
        failing = np.flatnonzero((outputs != ordered).any(axis=1))
        if failing.size:  # judged again with Python's sorted (tests/reference.py)
            assert breaks(Sorts(), inputs[failing[0]].tolist(), outputs[failing[0]].tolist())
        tally["broken"] += failing.size > 0
        tally["mutants"] += 1
        lifting = lift_by_function(circuit, Sorts())
        if expected is not None:  # still a comparator network: it must lift, to that network
            assert_lifted_by_sweeping(lifting)
            assert same_function(lifting.network.comparators, expected.comparators, 5,
                                 first_inputs=lifting.input_channels), (kind, k)
        if not lifting.lifted:
            assert lifting.failure and lifting.network is None, (kind, k)
            continue
        tally["lifted"] += 1
        # A lifting claims the circuit is the network on every input: checked on all 32,768.
        found = run_lifted(lifting, inputs, width)
        wrong = np.flatnonzero((found != outputs).any(axis=1))
        assert wrong.size == 0, (kind, k, inputs[wrong[0]].tolist(), outputs[wrong[0]].tolist())
        assert network_sorts(lifting.network.comparators, 5) == (failing.size == 0), (kind, k)
    assert tally["broken"] == tally["mutants"] - 1, tally  # every mutation breaks the sorter, the control does not
    assert tally["lifted"] >= 1 + 2 * network.size, tally  # the control and the mutants that are still networks


@settings(max_examples=20, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(nearly_sorting(), st.sampled_from(STYLES), st.integers(2, 3), st.booleans(), st.randoms(use_true_random=False))
def test_nearly_sorting_networks_lift_to_themselves_and_never_to_a_sorter_they_are_not(network, style, width,
                                                                                       signed, random):
    circuit = lower_network(network, width, style=style, signed=signed)
    prop = Sorts(signed=signed)
    lifting = lift_by_function(circuit, prop)
    # A lowered comparator network lifts (300 random examples of 2 to 4 bits did when this test was written).
    assert_lifted_by_sweeping(lifting)
    n = network.channels
    assert same_function(lifting.network.comparators, network.comparators, n, first_inputs=lifting.input_channels)
    inputs = inputs_for(circuit, np.random.default_rng(random.getrandbits(32)))
    assert_lifting_is_the_circuit(circuit, lifting, prop, inputs)
    values = order_key(inputs, width, signed, None)
    outputs = order_key(run_gates_numpy(circuit, inputs), width, signed, None)
    failing = np.flatnonzero((outputs != np.sort(values, axis=1)).any(axis=1))
    if failing.size:
        row = failing[0]
        assert breaks(prop, values[row].tolist(), outputs[row].tolist())  # Python's sorted agrees
        assert not network_sorts(lifting.network.comparators, n)
    elif n * width <= EXHAUSTIVE_BITS:  # every input sorted
        assert network_sorts(lifting.network.comparators, n)


# --- 3. synthesized netlists of corpus/rtl ---------------------------------------------------------------------

def transposition_rounds(n: int, skipped=(), larger_first: bool = False) -> list[tuple[int, int]]:
    """The compare-exchanges of the ``for`` loops of ``transposition_sort8x8.v`` and ``key_sort8x8_key3.v``:
    round ``r`` compares ``(i, i + 1)`` for ``i = r % 2, r % 2 + 2, ...``; ``skipped`` holds ``(round, i)``
    pairs left out, and ``larger_first`` puts the larger word on ``i`` (``rank_descending8x6.v``)."""
    return [(i + 1, i) if larger_first else (i, i + 1) for r in range(n) for i in range(r % 2, n - 1, 2)
            if (r, i) not in skipped]


def insertion_loops(n: int) -> list[tuple[int, int]]:
    """``insertion_sort8x8_signed.v``: for ``i = 1..n-1``, for ``j = i..1``, compare-exchange ``(j - 1, j)``."""
    return [(j - 1, j) for i in range(1, n) for j in range(i, 0, -1)]


def source_text(name: str) -> str:
    return (SOURCES / name).read_text(encoding="utf-8")


def listed_steps(source: str) -> list[tuple[int, int]]:
    """``{v[b], v[a]} = order2(v[a], v[b]);`` (``order2`` gives {larger, smaller}): the smaller word to ``a``."""
    return [(int(a), int(b)) for b, a, a2, b2 in re.findall(
        r"\{v\[(\d+)\], v\[(\d+)\]\} = order2\(v\[(\d+)\], v\[(\d+)\]\)", source_text(source)) if (a, b) == (a2, b2)]


def commented_comparators(source: str) -> list[tuple[int, int]]:
    """``// comparator k: channels a and b`` (``s = a > b``, the smaller word to ``a``)."""
    return [(int(a), int(b)) for a, b in re.findall(r"// comparator \d+: channels (\d+) and (\d+)",
                                                   source_text(source))]


def macro_calls(source: str) -> list[tuple[int, int]]:
    """`` `COMPARE_EXCHANGE(x, y)`` (the smaller word to ``v[x]``)."""
    return [(int(a), int(b)) for a, b in re.findall(r"`COMPARE_EXCHANGE\((\d+), (\d+)\)", source_text(source))]


def commented_layers(source: str) -> list[tuple[int, int]]:
    """``// layer k: (a,b) (c,d)`` (min/max assigns with the smaller word to ``a``)."""
    return [(int(a), int(b)) for line in re.findall(r"// layer \d+: (.*)", source_text(source))
            for a, b in re.findall(r"\((\d+),(\d+)\)", line)]


#: ``merge_runs8x8.v`` reverses run B (``s0``: words 0-3, then 7, 6, 5, 4) and runs half cleaners of distance
#: 4, 2, 1 on the positions of ``s0``; the outputs are those positions.
MERGE_RUNS_ENTRY = (0, 1, 2, 3, 7, 6, 5, 4)
MERGE_RUNS = [(i, i + 4) for i in range(4)] + [(i, i + 2) for i in (0, 1, 4, 5)] + [(i, i + 1) for i in (0, 2, 4, 6)]

#: The fast netlists (a few seconds each); the bitonic 32 x 16 ones take about 25 s each and are left out, and of
#: the lookup-table flows merge_exchange_sort16x8-lut4.blif stands for its broken variant (another 4-6 s).
#: Netlist -> (comparators the Verilog source lists, the channel each input word enters or None, whether the
#: lifted network must have the same comparators layer by layer; else the same function and the same count).
SOURCE_NETWORKS = {
    "transposition_sort8x8.blif": (transposition_rounds(8), None, True),
    "transposition_sort8x8.aig": (transposition_rounds(8), None, True),
    "transposition_sort8x8_missing.blif": (transposition_rounds(8, {(7, 3)}), None, True),
    "transposition_sort8x8_missing.aig": (transposition_rounds(8, {(7, 3)}), None, True),
    "merge_exchange_sort16x8.blif": (listed_steps("merge_exchange_sort16x8.v"), None, True),
    "merge_exchange_sort16x8-lut4.blif": (listed_steps("merge_exchange_sort16x8.v"), None, True),
    "merge_exchange_sort16x8_missing.blif": (listed_steps("merge_exchange_sort16x8_missing.v"), None, True),
    "merge_exchange_sort16x8_missing.aig": (listed_steps("merge_exchange_sort16x8_missing.v"), None, True),
    "sort5_msb_first.aag": (macro_calls("sort5_msb_first.v"), None, True),
    "insertion_sort8x8_signed.blif": (insertion_loops(8), None, True),
    "key_sort8x8_key3.blif": (transposition_rounds(8), None, True),
    "rank_descending8x6.blif": (transposition_rounds(8, larger_first=True), None, False),
    "merge_runs8x8.blif": (MERGE_RUNS, MERGE_RUNS_ENTRY, False),
    "sort4_ternary-lut4.blif": (commented_layers("sort4_ternary.v"), None, True),
    "sort6_signed.blif": (commented_layers("sort6_signed.v"), None, True),
    "median3x3_filter.blif": (commented_comparators("median3x3_filter.v"), None, True),
    "median3x3_filter_missing.blif": (commented_comparators("median3x3_filter_missing.v"), None, True),
    "median3x3_filter_missing.aig": (commented_comparators("median3x3_filter_missing.v"), None, True),
}
LISTED = {name: verdict for verdict, _, name in (line.split() for line in
          (RTL / "expected-verdicts.txt").read_text(encoding="utf-8").splitlines() if line.strip()
          and not line.startswith("#"))}


def test_the_sources_are_read_as_the_designs_say():
    # What the sources say of themselves: 63 compare-exchange steps of merge exchange 16 (corpus/rtl/README.md),
    # one left out in the broken design; 8 rounds of 4 and 3 pairs on 8 words (28, as the insertion loops give);
    # 9 macro calls; 5 and 12 min/max pairs in the layer comments; the broken median one comparator short.
    counts = {name: len(comparators) for name, (comparators, _, _) in SOURCE_NETWORKS.items()}
    assert counts["merge_exchange_sort16x8.blif"] == 63 and counts["merge_exchange_sort16x8_missing.aig"] == 62
    assert counts["transposition_sort8x8.aig"] == counts["insertion_sort8x8_signed.blif"] == 28
    assert counts["transposition_sort8x8_missing.aig"] == 27 and counts["sort5_msb_first.aag"] == 9
    assert counts["sort4_ternary-lut4.blif"] == 5 and counts["sort6_signed.blif"] == 12
    assert counts["median3x3_filter.blif"] == counts["median3x3_filter_missing.aig"] + 1
    assert set(SOURCE_NETWORKS) <= set(LISTED)


@functools.cache
def corpus_lifting(name: str):
    circuit = load(RTL / name)
    return circuit, lift_by_function(circuit, circuit.claim)


def claim_on_zero_one(lifting, prop, channels: int) -> tuple[bool, np.ndarray]:
    """Whether the lifted network has the claimed property on every 0-1 input (keys of key-only blocks are
    values), and the 0-1 inputs it gets wrong."""
    rows = zero_one_rows(channels)
    placed = rows if lifting.input_channels is None else rows[:, np.argsort(lifting.input_channels)]
    outputs = run_zero_one(lifting.network.comparators, placed)
    ordered = np.sort(rows, axis=1)
    if isinstance(prop, Sorts) and prop.order == "descending":
        wrong = (outputs != ordered[:, ::-1]).any(axis=1)
    elif isinstance(prop, (Sorts, PartialSort)):
        wrong = (outputs != ordered).any(axis=1)
    elif isinstance(prop, Median):
        middle = (channels - 1) // 2
        wrong = outputs[:, middle] != ordered[:, middle]
    else:
        assert isinstance(prop, Merges)
        split = prop.split
        runs = (np.diff(rows[:, :split], axis=1) >= 0).all(axis=1) & \
            (np.diff(rows[:, split:], axis=1) >= 0).all(axis=1)
        wrong = runs & (outputs != ordered).any(axis=1)
    return not wrong.any(), rows[wrong]


def as_words(row, width: int) -> list[int]:
    """A 0-1 input of a network as input words: 0 and the largest word, unsigned or signed."""
    return [(1 << width) - 1 if value else 0 for value in row]


@pytest.mark.parametrize("name", list(SOURCE_NETWORKS))
def test_synthesized_netlist_lifts_to_the_network_its_source_lists(name):
    circuit, lifting = corpus_lifting(name)
    prop = circuit.claim
    expected, entry, same_layers = SOURCE_NETWORKS[name]
    n, width = circuit.words, circuit.width
    assert_lifted_by_sweeping(lifting)
    # The netlist, evaluated by tests/netlist_reference.py, is the lifted network on random and corner inputs.
    netlist = independent.read_netlist(RTL / name)
    inputs = sample_inputs(n, width, np.random.default_rng(len(name)), count=2000)
    signed, key_bits = signedness_and_keys(prop)
    found = run_lifted(lifting, inputs, width, signed, key_bits)[:, output_positions(circuit, prop)]
    expected_words = independent.run_words(netlist, inputs, width)
    wrong = np.flatnonzero((found != expected_words).any(axis=1))
    assert wrong.size == 0, (inputs[wrong[0]].tolist(), expected_words[wrong[0]].tolist(), found[wrong[0]].tolist())
    # The comparators are the source's: layer by layer, or (channels routed anew) the same count and function.
    assert lifting.input_channels is None
    if same_layers:
        assert greedy_layers(lifting.network.comparators, n) == greedy_layers(expected, n)
    else:
        assert len(lifting.network.comparators) == len(expected)
    positions = output_positions(circuit, prop)
    assert same_function(lifting.network.comparators, expected, n, positions, None, entry)
    # The claim holds on every 0-1 input exactly when the listing says "proved"; the 0-1 inputs the network
    # gets wrong, as words, break the claim on the netlist too (judged with sorted, tests/reference.py).
    holds, failing = claim_on_zero_one(lifting, prop, n)
    assert holds == (LISTED[name] == "proved"), (name, LISTED[name])
    if not holds:
        rows = np.array([as_words(row, width) for row in failing[:64]])
        outputs = independent.run_words(netlist, rows, width)
        assert all(judged_broken(prop, row.tolist(), output.tolist(), width) for row, output in zip(rows, outputs))


def judged_broken(prop, inputs: list[int], outputs: list[int], width: int) -> bool:
    """Whether words break the claim, judged with Python's ``sorted`` (``tests/reference.py``)."""
    inputs, outputs = signed_values(inputs, width, prop.signed), signed_values(outputs, width, prop.signed)
    if isinstance(prop, PartialSort):
        keys = [value >> (width - prop.key_bits) for value in outputs]
        return sorted(outputs) != sorted(inputs) or keys != sorted(keys)
    if isinstance(prop, Median) and len(outputs) == 1:
        return outputs[0] != sorted(inputs)[(len(inputs) - 1) // 2]
    return breaks(prop, inputs, outputs)


# --- 4. the lift engine on synthesized netlists ----------------------------------------------------------------

ENGINE_CASES = ["transposition_sort8x8.aig", "sort6_signed.blif", "rank_descending8x6.blif", "key_sort8x8_key3.blif",
                "transposition_sort8x8_missing.blif", "median3x3_filter_missing.blif"]


@pytest.mark.parametrize("name", ENGINE_CASES)
def test_lift_engine_gives_the_listed_verdict_and_a_counterexample_the_netlist_fails(name):
    verdict = check(RTL / name, engine="lift")
    assert verdict.engine == "lift" and verdict.figures["lift"]["method"] == "sweeping", verdict.scope
    assert verdict.status.value == LISTED[name], verdict.scope
    circuit = load(RTL / name)
    words, width = circuit.words, circuit.width
    assert f"on every input of {words} words of {width} bits by SAT sweeping" in verdict.scope
    if verdict.status is Status.PROVED:
        assert verdict.counterexample is None
        return
    example = verdict.counterexample
    raw = [value % (1 << width) for value in example.input]  # signed values back to their encodings
    outputs = independent.run_words(independent.read_netlist(RTL / name), np.array([raw]), width)[0].tolist()
    assert signed_values(outputs, width, verdict.prop.signed) == list(example.output)
    assert judged_broken(verdict.prop, raw, outputs, width)


# --- the references of this file can fail ----------------------------------------------------------------------

def test_the_references_here_tell_a_wrong_lifting_apart():
    network = build_family("odd-even-transposition", 4)
    circuit = lower_network(network, 3, style="mux", key_bits=2)
    prop = PartialSort(key_bits=2)
    lifting = lift_by_function(circuit, prop)
    inputs = input_rows(4, 3)
    assert_lifting_is_the_circuit(circuit, lifting, prop, inputs)
    # A comparator too few: the evaluator and the layers see it.
    shorter = dataclasses.replace(lifting, network=ComparatorNetwork(4, lifting.network.comparators[:-1]),
                                  blocks=lifting.blocks[:-1])
    with pytest.raises(AssertionError):
        assert_lifting_is_the_circuit(circuit, shorter, prop, inputs)
    assert greedy_layers(shorter.network.comparators, 4) != greedy_layers(network.comparators, 4)
    assert not same_function(shorter.network.comparators, network.comparators, 4)
    assert not network_sorts(shorter.network.comparators, 4) and network_sorts(network.comparators, 4)
    # The tie rule matters for key-only blocks: with each block's words the other way round, equal keys move the
    # words differently, which the evaluator catches.
    turned = dataclasses.replace(lifting, blocks=tuple(dataclasses.replace(block, words=(block.words[1],
                                                                                         block.words[0],
                                                                                         *block.words[2:]))
                                                       for block in lifting.blocks))
    with pytest.raises(AssertionError):
        assert_lifting_is_the_circuit(circuit, turned, prop, inputs)
    # The judge of words: a pair out of order breaks sorts, a permutation with sorted keys is a partial sort.
    assert judged_broken(Sorts(), [1, 2], [2, 1], 3) and not judged_broken(prop, [0b101, 0b100], [0b101, 0b100], 3)
