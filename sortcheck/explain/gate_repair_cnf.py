"""CNF for repairing gate circuits: copies of a circuit on concrete inputs, with replaceable gates.

Every candidate gate ``g`` gets a selector ``s_g`` ("gate g is replaced")
and a truth table: one free variable ``t_g[p]`` per pattern ``p`` of its
inputs (input ``i`` is bit ``i`` of ``p``), shared by all copies, so a
replaced gate computes one Boolean function of its own inputs everywhere.
In copy ``c`` the gate's output is ``mux(s_g, op_g(inputs), t_g[inputs])``.
Op-choice variables ``o_g,op`` tie the table to another op of the netlist
format with the same inputs (``o_g,op -> t_g = table(op)``); assuming the
literal :attr:`RepairCnf.ops_only` asks that every replaced gate take one of
them.

Each copy is one input, concrete, so the circuit folds to constants up to
the first selector.  The hard condition of a copy is that the outputs meet
the property on that input: for ``sorts``, ``merges``, ``median``,
``selects`` in order and stable ``partial-sort`` the expected output words
are concrete (computed with Python's ``sorted``) and each output bit is a
unit clause; ``selects`` (any order) asks the first ``t`` outputs to be the
multiset of the ``t`` smallest values, and ``partial-sort`` the outputs to be
a permutation of the inputs whose keys ascend (cardinality constraints over
word equalities and key comparisons).
"""

from __future__ import annotations

from collections import Counter
from typing import Sequence

from pysat.card import CardEnc, EncType

from sortcheck.engines.gates.cnf import CnfBuilder, constant_word, equal_words, less_than
from sortcheck.model import GateCircuit, Gate, Median, Merges, PartialSort, Property, Selects, Sorts, bit_name
from sortcheck.model.circuit import evaluate_op
from sortcheck.model.semantics import applies
from sortcheck.explain.gate_inputs import to_raw, to_values

#: Ops a replaced gate of two or more inputs may take; a mux may also become one of them with three inputs.
MULTI_INPUT_OPS = ("and", "or", "nand", "nor", "xor", "xnor")

#: Gates with more inputs than this keep their function (their truth table would be too large).
MAX_TABLE_INPUTS = 4


def op_table(op: str, arity: int) -> tuple[int, ...]:
    """The truth table of ``op`` on ``arity`` inputs, pattern ``p`` giving input ``i`` the bit ``i`` of ``p``.

    >>> op_table("and", 2), op_table("mux", 3)
    ((0, 0, 0, 1), (0, 0, 1, 0, 0, 1, 1, 1))
    """
    return tuple(evaluate_op(op, [(pattern >> i) & 1 for i in range(arity)]) for pattern in range(1 << arity))


def alternative_ops(gate: Gate) -> tuple[str, ...]:
    """The ops the gate could take instead, with the same inputs and a different function.

    >>> alternative_ops(Gate("y", "and", ("a", "b")))
    ('or', 'nand', 'nor', 'xor', 'xnor')
    >>> alternative_ops(Gate("y", "not", ("a",)))
    ()
    """
    arity = len(gate.inputs)
    if arity < 2:
        return ()
    ops = MULTI_INPUT_OPS + (("mux",) if arity == 3 else ())
    own = op_table(gate.op, arity)
    return tuple(op for op in ops if op != gate.op and op_table(op, arity) != own)


def lookup(builder: CnfBuilder, table: Sequence[int], inputs: Sequence[int]) -> int:
    """The literal of ``table[pattern of inputs]`` as a tree of muxes (constant inputs fold to one entry)."""
    if not inputs:
        return table[0]
    half = len(table) // 2
    last = inputs[-1]
    return builder.mux(last, lookup(builder, table[:half], inputs[:-1]), lookup(builder, table[half:], inputs[:-1]))


class RepairCnf:
    """Copies of ``circuit`` on concrete inputs with replaceable gates, built into one :class:`CnfBuilder`.

    Parameters
    ----------
    circuit : GateCircuit
    prop : Property
    candidates : sequence of str
        Output names of the gates that may be replaced (gates with more than
        :data:`MAX_TABLE_INPUTS` inputs are left out).

    Examples
    --------
    >>> from pysat.solvers import Solver
    >>> from sortcheck.model import OutputWord, Word
    >>> swapped = GateCircuit((Word("a", 1), Word("b", 1)),
    ...     (Gate("lo", "or", ("a[0]", "b[0]")), Gate("hi", "and", ("a[0]", "b[0]"))),
    ...     (OutputWord("y0", ("lo",)), OutputWord("y1", ("hi",))))
    >>> cnf = RepairCnf(swapped, Sorts(), ["lo", "hi"])
    >>> cnf.add_copy((1, 0)); cnf.add_copy((0, 1))
    >>> with Solver(bootstrap_with=cnf.builder.clauses) as solver:
    ...     solver.solve(assumptions=[cnf.ops_only, -cnf.selectors["lo"]]), solver.solve(assumptions=[cnf.ops_only])
    ...     cnf.chosen_ops(solver.get_model())
    (False, True)
    {'lo': 'and', 'hi': 'or'}
    """

    def __init__(self, circuit: GateCircuit, prop: Property, candidates: Sequence[str]):
        self.circuit, self.prop, self.width = circuit, prop, circuit.width
        self.builder = CnfBuilder()
        pool = self.builder.pool
        by_out = {gate.out: gate for gate in circuit.gates}
        self.gates = {name: by_out[name] for name in candidates if len(by_out[name].inputs) <= MAX_TABLE_INPUTS}
        self.selectors = {name: pool.id(("replaced", name)) for name in self.gates}
        self.tables = {name: tuple(pool.id(("table", name, p)) for p in range(1 << len(gate.inputs)))
                       for name, gate in self.gates.items()}
        self.choices: dict[str, dict[str, int]] = {}
        self.ops_only = pool.id(("ops only",))
        for name, gate in self.gates.items():
            self.choices[name] = {op: pool.id(("op", name, op)) for op in alternative_ops(gate)}
            for op, choice in self.choices[name].items():
                for entry, bit in zip(self.tables[name], op_table(op, len(gate.inputs))):
                    self.builder.clauses.append([-choice, entry if bit else -entry])
            self.builder.clauses.append([-self.ops_only, -self.selectors[name], *self.choices[name].values()])
        self.copies: list[tuple[int, ...]] = []

    def add_copy(self, raw: Sequence[int]) -> None:
        """Add one copy of the circuit on the raw input words ``raw`` that must meet the property."""
        builder = self.builder
        signals: dict = {0: builder.false, 1: builder.true}
        for word, value in zip(self.circuit.inputs, raw):
            for i in range(word.width):
                signals[bit_name(word.name, i)] = builder.constant((value >> i) & 1)
        for gate in self.circuit.gate_order:
            literals = [signals[source] for source in gate.inputs]
            output = builder.op(gate.op, literals)
            if gate.out in self.selectors:
                output = builder.mux(self.selectors[gate.out], output, lookup(builder, self.tables[gate.out], literals))
            signals[gate.out] = output
        outputs = [tuple(signals[bit] for bit in word.bits) for word in self.circuit.outputs]
        builder.clauses.extend(meets_clauses(builder, self.prop, tuple(raw), outputs, self.width))
        self.copies.append(tuple(raw))

    def decode(self, model: Sequence[int]) -> dict[str, tuple[int, ...]]:
        """The replaced gates of a model and the truth table each takes."""
        true = {literal for literal in model if literal > 0}
        return {name: tuple(int(entry in true) for entry in self.tables[name])
                for name, selector in self.selectors.items() if selector in true}

    def chosen_ops(self, model: Sequence[int]) -> dict[str, str | None]:
        """The replaced gates of a model and the op each takes (None when its table is no op of the format)."""
        true = {literal for literal in model if literal > 0}
        return {name: next((op for op, choice in self.choices[name].items() if choice in true), None)
                for name, selector in self.selectors.items() if selector in true}


def _fix(literals: Sequence[int], raw_value: int) -> list[list[int]]:
    """Unit clauses making a word of literals equal a constant."""
    return [[literal if (raw_value >> i) & 1 else -literal] for i, literal in enumerate(literals)]


def _multiset(builder: CnfBuilder, words: Sequence[Sequence[int]], values: Sequence[int], width: int
              ) -> list[list[int]]:
    """Clauses: the words hold exactly the multiset ``values`` (raw patterns), in any order."""
    clauses = []
    counts = Counter(values)
    equal = {value: [equal_words(builder, word, constant_word(builder, value, width)) for word in words]
             for value in counts}
    for position in range(len(words)):
        clauses.append([equal[value][position] for value in counts])
    for value, count in counts.items():
        clauses.extend(CardEnc.atleast(equal[value], bound=count, vpool=builder.pool,
                                       encoding=EncType.seqcounter).clauses)
    return clauses


def meets_clauses(builder: CnfBuilder, prop: Property, raw: tuple[int, ...], outputs: Sequence[Sequence[int]],
                  width: int) -> list[list[int]]:
    """Clauses saying the output words (literals, least significant first) meet ``prop`` on the raw input.

    >>> builder = CnfBuilder()
    >>> bits = [builder.variable(("y", word, i)) for word in (0, 1) for i in (0, 1)]
    >>> meets_clauses(builder, Sorts(), (2, 1), [bits[:2], bits[2:]], 2)   # outputs must be 1 then 2
    [[2], [-3], [-4], [5]]
    """
    values = to_values(raw, width, prop.signed)
    if not applies(prop, values):
        return []
    ordered = sorted(values)
    if isinstance(prop, (Sorts, Merges)):
        expected = ordered[::-1] if isinstance(prop, Sorts) and prop.order == "descending" else ordered
        return [clause for word, value in zip(outputs, to_raw(expected, width)) for clause in _fix(word, value)]
    if isinstance(prop, Selects):
        smallest = to_raw(ordered[:prop.count], width)
        if prop.sorted:
            return [clause for word, value in zip(outputs, smallest) for clause in _fix(word, value)]
        return _multiset(builder, outputs[:prop.count], smallest, width)
    if isinstance(prop, Median):
        median = to_raw([ordered[(len(values) - 1) // 2]], width)[0]
        return _fix(outputs[(len(outputs) - 1) // 2], median)
    if isinstance(prop, PartialSort):
        shift = width - prop.key_bits
        if prop.stable:
            expected = to_raw(sorted(values, key=lambda value: value >> shift), width)
            return [clause for word, value in zip(outputs, expected) for clause in _fix(word, value)]
        clauses = _multiset(builder, outputs, to_raw(values, width), width)
        for left, right in zip(outputs, outputs[1:]):
            clauses.append([-less_than(builder, right[shift:], left[shift:], signed=prop.signed)])
        return clauses
    raise TypeError(f"unknown property {prop!r}")
