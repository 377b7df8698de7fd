"""An evaluator of gate circuits for tests, independent of the package's evaluators and semantics.

Every op's truth table is written out here; circuits are evaluated gate by
gate in an order found by repeated passes, one input at a time
(:func:`run_gates`) or on many inputs at once as numpy 0/1 arrays
(:func:`run_gates_numpy`, :func:`run_everywhere` for every input).  Properties are judged with Python's ``sorted``
(``tests/reference.breaks``) or ``numpy.sort``.
"""

from __future__ import annotations

import itertools

import numpy as np

from reference import breaks
from sortcheck.model import Median, PartialSort, Sorts

OPS = {"and": lambda v: int(all(v)), "or": lambda v: int(any(v)), "xor": lambda v: sum(v) % 2,
       "nand": lambda v: 1 - int(all(v)), "nor": lambda v: 1 - int(any(v)), "xnor": lambda v: 1 - sum(v) % 2,
       "not": lambda v: 1 - v[0], "mux": lambda v: v[2] if v[0] else v[1]}


def evaluation_order(circuit):
    """The gates in an order in which each gate's inputs are computed before it (repeated passes)."""
    known = {f"{word.name}[{i}]" for word in circuit.inputs for i in range(word.width)} | {0, 1}
    order, pending = [], list(circuit.gates)
    while pending:
        ready = [gate for gate in pending if all(source in known for source in gate.inputs)]
        assert ready, "a cycle"
        order += ready
        known |= {gate.out for gate in ready}
        pending = [gate for gate in pending if gate.out not in known]
    return order


def run_gates(circuit, words, order=None):
    """The output words of ``circuit`` on unsigned input words, every gate by its truth table above."""
    signals = {0: 0, 1: 1}
    for word, value in zip(circuit.inputs, words):
        for i in range(word.width):
            signals[f"{word.name}[{i}]"] = (value >> i) & 1
    for gate in order or evaluation_order(circuit):
        signals[gate.out] = OPS[gate.op]([signals[s] for s in gate.inputs])
    return [sum(signals[b] << i for i, b in enumerate(word.bits)) for word in circuit.outputs]


def _numpy_op(op, values):
    if op == "not":
        return 1 - values[0]
    if op == "mux":
        return np.where(values[0] == 1, values[2], values[1])
    stacked = np.stack(values)
    if op in ("and", "nand"):
        result = stacked.min(axis=0)
    elif op in ("or", "nor"):
        result = stacked.max(axis=0)
    else:
        result = stacked.sum(axis=0) % 2
    return (1 - result) if op in ("nand", "nor", "xnor") else result


def run_gates_numpy(circuit, inputs, order=None):
    """Output words ``(count, outputs)`` (int64) for unsigned input words ``(count, words)``, as 0/1 arrays."""
    inputs = np.asarray(inputs, dtype=np.int64)
    count = len(inputs)
    signals = {0: np.zeros(count, dtype=np.int8), 1: np.ones(count, dtype=np.int8)}
    for k, word in enumerate(circuit.inputs):
        for i in range(word.width):
            signals[f"{word.name}[{i}]"] = ((inputs[:, k] >> i) & 1).astype(np.int8)
    for gate in order or evaluation_order(circuit):
        signals[gate.out] = _numpy_op(gate.op, [signals[s] for s in gate.inputs]).astype(np.int8)
    return np.stack([sum(signals[b].astype(np.int64) << i for i, b in enumerate(word.bits))
                     for word in circuit.outputs], axis=1)


def input_rows(words, width, start=0, stop=None):
    """Inputs number ``start`` to ``stop`` (default: the last) as rows of unsigned words; word k is bits k*width.. of the number."""
    stop = 1 << (words * width) if stop is None else stop
    index = np.arange(start, stop, dtype=np.int64)
    return np.stack([(index >> (k * width)) & ((1 << width) - 1) for k in range(words)], axis=1)


def run_everywhere(circuit):
    """``(inputs, outputs)``: every input of ``circuit`` (rows of :func:`input_rows`) and its output words."""
    inputs = input_rows(circuit.words, circuit.width)
    return inputs, run_gates_numpy(circuit, inputs)


def signed_values(words, width, signed):
    return [w - (1 << width) if signed and w >> (width - 1) else w for w in words]


def breaks_words(prop, inputs, outputs, width):
    """``reference.breaks``, plus partial sorts (keys: the top bits, with Python's floor shift) and one-word medians."""
    if isinstance(prop, PartialSort):
        shift = width - prop.key_bits
        keys = [value >> shift for value in outputs]
        if sorted(outputs) != sorted(inputs) or keys != sorted(keys):
            return True
        return prop.stable and list(outputs) != sorted(inputs, key=lambda value: value >> shift)
    if isinstance(prop, Median) and len(outputs) == 1:
        return outputs[0] != sorted(inputs)[(len(inputs) - 1) // 2]
    return breaks(prop, list(inputs), list(outputs))


def holds_everywhere(circuit, prop):
    """The property on every input, one input at a time (small circuits)."""
    width, order = circuit.width, evaluation_order(circuit)
    for words in itertools.product(range(1 << width), repeat=circuit.words):
        inputs = signed_values(words, width, prop.signed)
        outputs = signed_values(run_gates(circuit, words, order), width, prop.signed)
        if breaks_words(prop, inputs, outputs, width):
            return False
    return True


def sorts_everywhere(circuit, chunk=1 << 16):
    """Unsigned ascending sort on every input, chunk by chunk with numpy (circuits of up to about 24 input bits)."""
    words, width, order = circuit.words, circuit.width, evaluation_order(circuit)
    total = 1 << (words * width)
    for start in range(0, total, chunk):
        inputs = input_rows(words, width, start, min(total, start + chunk))
        if not (run_gates_numpy(circuit, inputs, order) == np.sort(inputs, axis=1)).all():
            return False
    return True


def least_failing_weight(circuit, prop=Sorts(), up_to=None):
    """The fewest one bits (over all input words) of an input that breaks unsigned ``sorts``, by weight, or None.

    Inputs of each weight are evaluated together with numpy; stops after weight ``up_to``.
    """
    assert prop == Sorts()
    words, width = circuit.words, circuit.width
    bits, order = words * width, evaluation_order(circuit)
    for weight in range(bits + 1 if up_to is None else up_to + 1):
        combos = list(itertools.combinations(range(bits), weight))
        inputs = np.zeros((len(combos), words), dtype=np.int64)
        for row, positions in enumerate(combos):
            for p in positions:
                inputs[row, p // width] |= 1 << (p % width)
        if (run_gates_numpy(circuit, inputs, order) != np.sort(inputs, axis=1)).any():
            return weight
    return None
