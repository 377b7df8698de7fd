"""Evidence against single gates: wrong output bits, and failing inputs fixed by flipping one gate.

A few copies of a circuit are evaluated together with Python integers as
bit sets, bit ``c`` of a signal's integer being its value on input ``c``;
flipping a gate re-evaluates the gates after it in topological order.
"""

from __future__ import annotations

from functools import reduce
from typing import Sequence

from sortcheck.explain.gate_inputs import to_raw, to_values
from sortcheck.model import GateCircuit, Median, Merges, PartialSort, Property, Selects, Sorts, bit_name
from sortcheck.model.semantics import applies, violation


def expected_raw(prop: Property, raw: Sequence[int], width: int, outputs: int | None = None
                 ) -> dict[int, int] | None:
    """The raw words the property fixes for one input, by output position; None when it fixes no words.

    Functional properties fix words (``sorts``, ``merges`` on inputs in
    scope, ``selects`` in order, ``median``, stable ``partial-sort``); the
    others only constrain them.  ``outputs`` is the number of output words
    (a median circuit may have one; default: as many as inputs).

    >>> expected_raw(Sorts(), (3, 1, 2), 2), expected_raw(Median(), (3, 1, 2), 2)
    ({0: 1, 1: 2, 2: 3}, {1: 2})
    >>> expected_raw(Median(), (3, 1, 2), 2, outputs=1)
    {0: 2}
    >>> expected_raw(Selects(count=1), (3, 1, 2), 2) is None
    True
    """
    values = to_values(raw, width, prop.signed)
    ordered = sorted(values)
    if isinstance(prop, Sorts):
        expected = ordered[::-1] if prop.order == "descending" else ordered
    elif isinstance(prop, Merges):
        if not applies(prop, values):
            return None
        expected = ordered
    elif isinstance(prop, Selects) and prop.sorted:
        expected = ordered[:prop.count]
    elif isinstance(prop, Median):
        position = ((len(values) if outputs is None else outputs) - 1) // 2
        return {position: to_raw([ordered[(len(values) - 1) // 2]], width)[0]}
    elif isinstance(prop, PartialSort) and prop.stable:
        shift = width - prop.key_bits
        expected = sorted(values, key=lambda value: value >> shift)
    else:
        return None
    return dict(enumerate(to_raw(expected, width)))


def _constrained_outputs(circuit: GateCircuit, prop: Property) -> range:
    if isinstance(prop, Selects):
        return range(prop.count)
    if isinstance(prop, Median):
        middle = (len(circuit.outputs) - 1) // 2
        return range(middle, middle + 1)
    return range(len(circuit.outputs))


def wrong_bits(circuit: GateCircuit, prop: Property, failing: Sequence[Sequence[int]]) -> set[str]:
    """The output bit signals wrong on some failing raw input (every constrained bit when no words are fixed).

    >>> from sortcheck.model import Gate, OutputWord, Word
    >>> swapped = GateCircuit((Word("a", 1), Word("b", 1)),
    ...     (Gate("lo", "or", ("a[0]", "b[0]")), Gate("hi", "and", ("a[0]", "b[0]"))),
    ...     (OutputWord("y0", ("lo",)), OutputWord("y1", ("hi",))))
    >>> sorted(wrong_bits(swapped, Sorts(), [(1, 0)]))
    ['hi', 'lo']
    """
    width, found = circuit.width, set()
    for raw in failing:
        expected = expected_raw(prop, raw, width, len(circuit.outputs))
        if expected is None:
            for position in _constrained_outputs(circuit, prop):
                found.update(bit for bit in circuit.outputs[position].bits if isinstance(bit, str))
            continue
        actual = circuit.evaluate(list(raw))
        for position, value in expected.items():
            for i, bit in enumerate(circuit.outputs[position].bits):
                if isinstance(bit, str) and ((actual[position] ^ value) >> i) & 1:
                    found.add(bit)
    return found


def _evaluate(op: str, values: list[int], full: int) -> int:
    if op == "not":
        return full ^ values[0]
    if op == "mux":
        select, when0, when1 = values
        return (select & when1) | ((full ^ select) & when0)
    if op in ("and", "nand"):
        result = reduce(int.__and__, values)
    elif op in ("or", "nor"):
        result = reduce(int.__or__, values)
    else:
        result = reduce(int.__xor__, values)
    return full ^ result if op in ("nand", "nor", "xnor") else result


class _Lanes:
    """The circuit on a few raw inputs at once, one bit of a Python integer per input."""

    def __init__(self, circuit: GateCircuit, raws: Sequence[Sequence[int]]):
        self.circuit, self.raws, self.full = circuit, list(raws), (1 << len(raws)) - 1
        self.order = circuit.gate_order
        signals: dict = {0: 0, 1: self.full}
        for k, word in enumerate(circuit.inputs):
            for i in range(word.width):
                signals[bit_name(word.name, i)] = sum(((raw[k] >> i) & 1) << c for c, raw in enumerate(raws))
        self.base = self.run(signals, 0, None)

    def run(self, signals: dict, start: int, flipped: str | None) -> dict:
        for gate in self.order[start:]:
            value = _evaluate(gate.op, [signals[source] for source in gate.inputs], self.full)
            signals[gate.out] = value ^ self.full if gate.out == flipped else value
        return signals

    def words(self, signals: dict, lane: int) -> list[int]:
        return [sum(((signals[bit] >> lane) & 1) << i for i, bit in enumerate(word.bits))
                for word in self.circuit.outputs]


def flip_counts(circuit: GateCircuit, prop: Property, failing: Sequence[Sequence[int]], names: Sequence[str],
                max_evaluations: int) -> dict[str, int]:
    """For each named gate, how many of the failing raw inputs come out right when only its value is flipped.

    Empty when that would take more than ``max_evaluations`` gate evaluations.

    >>> from sortcheck.model import Gate, OutputWord, Word
    >>> swapped = GateCircuit((Word("a", 1), Word("b", 1)),
    ...     (Gate("lo", "or", ("a[0]", "b[0]")), Gate("hi", "and", ("a[0]", "b[0]"))),
    ...     (OutputWord("y0", ("lo",)), OutputWord("y1", ("hi",))))
    >>> flip_counts(swapped, Sorts(), [(1, 0), (0, 1)], ["lo", "hi"], 1000)
    {'lo': 0, 'hi': 0}
    """
    if not failing or len(names) * len(circuit.gates) > max_evaluations:
        return {}
    lanes = _Lanes(circuit, failing)
    position = {gate.out: number for number, gate in enumerate(lanes.order)}
    width = circuit.width
    expected = [expected_raw(prop, raw, width, len(circuit.outputs)) for raw in failing]
    counts = {}
    for name in names:
        signals = lanes.run(dict(lanes.base), position[name], name)
        fixed = 0
        for lane, raw in enumerate(failing):
            actual = lanes.words(signals, lane)
            if expected[lane] is not None:
                fixed += all(actual[k] == value for k, value in expected[lane].items())
            else:
                values = to_values(raw, width, prop.signed)
                fixed += violation(prop, values, to_values(actual, width, prop.signed), key_bits_width=width) is None
        counts[name] = fixed
    return counts
