"""Every property of a gate circuit as one CNF question, by threshold decomposition.

For a threshold ``v`` the 0-1 vector ``[x_j >= v]`` of the input words is
what the 0-1 principle speaks about: a circuit sorts exactly when, for every
threshold, ``[y_i >= v]`` is the 0-1 sort of ``[x_j >= v]``
(``encodings/gate-threshold-conditions.md`` proves this and the condition of
every other property).  :func:`threshold_question` encodes, in one
:class:`~sortcheck.engines.gates.cnf.CnfBuilder`:

* the circuit (Tseitin, structural hashing) on free input words;
* ``v`` as ``w`` free bits (the *threshold word*), and the comparisons
  ``[x_j >= v]``, ``[y_i >= v]`` with :func:`~sortcheck.engines.gates.cnf.less_than`
  (two's complement for signed properties);
* the 0-1 sort of ``[x_j >= v]`` by Batcher's merge exchange network on bits
  (six clauses per comparator, :func:`~sortcheck.engines.networks.cnf.comparator_clauses`);
* one *violation literal*: true exactly when, at this threshold, the two 0-1
  vectors the property relates differ.

Asserting the violation literal (and the property's precondition) gives a CNF
that is unsatisfiable exactly when the property holds; fixing ``v`` by
assumptions asks one threshold at a time.  Stable partial sorts have no
threshold form here: they are a miter against a stable reference sorter.

Also here: :func:`miter_cnf` (two circuits on shared inputs, "some output bit
differs"), :func:`reference_sorter` and :func:`gate_violation_cnf`, the one
CNF for export.

>>> from sortcheck.model import Sorts
>>> from sortcheck.model.lowering import lower_network
>>> from sortcheck.model.families import merge_exchange
>>> clauses, pool, comments = gate_violation_cnf(lower_network(merge_exchange(3), 2), Sorts())
>>> from pysat.solvers import Solver
>>> Solver(name="glucose4", bootstrap_with=clauses).solve()
False
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Sequence

from pysat.formula import IDPool

from sortcheck.engines.gates.cnf import CnfBuilder, Clause, constant_word, encode_circuit, input_literals, less_than
from sortcheck.engines.networks.cnf import comparator_clauses
from sortcheck.model import GateCircuit, Median, Merges, PartialSort, Property, Selects, Sorts
from sortcheck.model.families import merge_exchange
from sortcheck.model.lowering import lower_network


@dataclass
class ThresholdQuestion:
    """A property of a circuit as clauses over input words and (for threshold methods) a threshold word.

    ``violation`` is true exactly when the property fails at the input and
    the threshold of the assignment (``method == "threshold"``), or fails at
    the input (``"miter"``); ``preconditions`` are literals every input the
    property speaks about satisfies (merges: both runs ascend).
    """

    builder: CnfBuilder
    inputs: tuple[tuple[int, ...], ...]
    threshold: tuple[int, ...]
    violation: int
    method: str
    signed: bool
    width: int
    preconditions: list[int] = field(default_factory=list)
    #: Nodes of the circuit alone: (asked for, encoded); the difference was hashed or folded away.
    circuit_nodes: tuple[int, int] = (0, 0)
    outputs: tuple[tuple[int, ...], ...] = ()

    def clauses(self) -> list[Clause]:
        """Every clause: definitions, preconditions and the violation, asserted."""
        return self.builder.clauses + [[literal] for literal in self.preconditions] + [[self.violation]]

    @property
    def thresholds(self) -> int:
        """How many thresholds there are (``2**width``; 1 for a miter, which has none)."""
        return 1 << len(self.threshold)

    def threshold_range(self) -> tuple[int, int]:
        """The smallest and largest threshold, in the property's number domain."""
        if self.signed:
            return -(1 << (self.width - 1)), (1 << (self.width - 1)) - 1
        return 0, (1 << self.width) - 1

    def threshold_literals(self, value: int) -> list[int]:
        """Assumptions fixing the threshold word to ``value`` (taken modulo ``2**width``).

        >>> from sortcheck.model import Sorts
        >>> from sortcheck.model.lowering import lower_network
        >>> from sortcheck.model.families import merge_exchange
        >>> question = threshold_question(lower_network(merge_exchange(2), 2), Sorts())
        >>> [literal > 0 for literal in question.threshold_literals(2)]
        [False, True]
        """
        return [bit if (value >> i) & 1 else -bit for i, bit in enumerate(self.threshold)]

    def within(self, low: int, high: int) -> int:
        """The literal of ``low <= v <= high`` (signed when the property is); definitions join the builder."""
        builder = self.builder
        above = less_than(builder, constant_word(builder, low, self.width), self.threshold, self.signed, or_equal=True)
        below = less_than(builder, self.threshold, constant_word(builder, high, self.width), self.signed, or_equal=True)
        return builder.and_([above, below])

    def decode(self, model: Sequence[int]) -> tuple[tuple[int, ...], int | None]:
        """The raw (unsigned) input words and the threshold (in the property's domain) of a model."""
        true = {abs(literal) for literal in model if literal > 0}

        def value(literals: Sequence[int]) -> int:
            return sum(1 << i for i, literal in enumerate(literals) if (abs(literal) in true) == (literal > 0))

        words = tuple(value(word) for word in self.inputs)
        if not self.threshold:
            return words, None
        raw = value(self.threshold)
        if self.signed and raw >> (self.width - 1):
            raw -= 1 << self.width
        return words, raw


def sorted_bits(builder: CnfBuilder, bits: Sequence[int], tag: str) -> list[int]:
    """The 0-1 sort (ascending: 0s first) of ``bits``, by merge exchange comparators with full clauses."""
    wires = list(bits)
    for index, (a, b) in enumerate(merge_exchange(max(1, len(bits))).comparators):
        low, high = builder.variable(("sort", tag, index, "low")), builder.variable(("sort", tag, index, "high"))
        builder.clauses.extend(comparator_clauses(wires[a], wires[b], low, high))
        wires[a], wires[b] = low, high
    return wires


def _at_least(builder: CnfBuilder, words: Sequence[Sequence[int]], threshold: Sequence[int], signed: bool
              ) -> list[int]:
    """``[word >= v]`` for every word."""
    return [-less_than(builder, word, threshold, signed) for word in words]


def _differ(builder: CnfBuilder, left: Sequence[int], right: Sequence[int]) -> list[int]:
    return [builder.xor2(a, b) for a, b in zip(left, right)]


def _descents(builder: CnfBuilder, bits: Sequence[int]) -> list[int]:
    """For every adjacent pair, the literal "a 1 comes before a 0" (the vector is not ascending there)."""
    return [builder.and_([bits[i], -bits[i + 1]]) for i in range(len(bits) - 1)]


def _stable_reference(builder: CnfBuilder, words: Sequence[Sequence[int]], key_bits: int, signed: bool
                      ) -> list[tuple[int, ...]]:
    """Odd-even transposition on words that swaps only when the first key is strictly greater: a stable sort."""
    wires = [tuple(word) for word in words]
    n = len(wires)
    for round_ in range(n):
        for i in range(round_ % 2, n - 1, 2):
            a, b = wires[i], wires[i + 1]
            swap = less_than(builder, b[-key_bits:], a[-key_bits:], signed)
            wires[i] = tuple(builder.mux(swap, x, y) for x, y in zip(a, b))
            wires[i + 1] = tuple(builder.mux(swap, y, x) for x, y in zip(a, b))
    return wires


def refusal_of(circuit: GateCircuit, prop: Property) -> str | None:
    """Why :func:`threshold_question` cannot state ``prop`` for ``circuit`` (None when it can)."""
    if not isinstance(prop, (Sorts, Merges, Selects, Median, PartialSort)):
        return f"no CNF statement of {prop.describe()} for gate circuits"
    if circuit.words == 0 or circuit.width == 0:
        return "the circuit has no input bits"
    return None


def threshold_question(circuit: GateCircuit, prop: Property) -> ThresholdQuestion:
    """Encode ``circuit`` and the violation of ``prop`` (see the module docstring).

    The property must fit the circuit (:func:`sortcheck.model.check_fits`).

    >>> from sortcheck.model import Selects
    >>> from sortcheck.model.lowering import lower_network
    >>> from sortcheck.model.families import merge_exchange
    >>> question = threshold_question(lower_network(merge_exchange(3), 2), Selects(count=2))
    >>> question.method, len(question.threshold), question.thresholds
    ('threshold', 2, 4)
    """
    refused = refusal_of(circuit, prop)
    if refused is not None:
        raise ValueError(refused)
    builder = CnfBuilder()
    width, signed = circuit.width, prop.signed
    inputs = input_literals(builder, circuit)
    encoded = encode_circuit(builder, circuit, inputs)
    nodes = (builder.asked, builder.encoded)
    outputs = encoded.outputs
    if isinstance(prop, PartialSort) and prop.stable:
        reference = _stable_reference(builder, inputs, prop.key_bits, signed)
        wrong = [builder.xor2(a, b) for out, ref in zip(outputs, reference) for a, b in zip(out, ref)]
        return ThresholdQuestion(builder, inputs, (), builder.or_(wrong), "miter", signed, width, [], nodes, outputs)
    threshold = tuple(builder.variable(("threshold", i)) for i in range(width))
    low = sorted_bits(builder, _at_least(builder, inputs, threshold, signed), "inputs")
    above = _at_least(builder, outputs, threshold, signed)
    preconditions: list[int] = []
    if isinstance(prop, Sorts):
        target = low[::-1] if prop.order == "descending" else low
        wrong = _differ(builder, above, target)
    elif isinstance(prop, Merges):
        runs = [range(0, prop.split - 1), range(prop.split, circuit.words - 1)]
        preconditions = [less_than(builder, inputs[j], inputs[j + 1], signed, or_equal=True)
                         for run in runs for j in run]
        wrong = _differ(builder, above, low)
    elif isinstance(prop, Selects):
        first = above[:prop.count]
        if not prop.sorted:
            first = sorted_bits(builder, first, "outputs")
        wrong = _differ(builder, first, low[:prop.count])
    elif isinstance(prop, Median):
        position = (len(outputs) - 1) // 2
        wrong = _differ(builder, [above[position]], [low[(circuit.words - 1) // 2]])
    else:  # partial sort, not stable: a permutation whose keys ascend
        k = prop.key_bits
        wrong = _differ(builder, sorted_bits(builder, above, "outputs"), low)
        keys = _at_least(builder, [word[-k:] for word in outputs], threshold[-k:], signed)
        wrong += _descents(builder, keys)
    violation = builder.or_(wrong)
    return ThresholdQuestion(builder, inputs, threshold, violation, "threshold", signed, width, preconditions, nodes,
                             outputs)


def variable_comments(question: ThresholdQuestion, circuit: GateCircuit, outputs) -> list[str]:
    """Comment lines naming the input, output and threshold words' literals (least significant bit first)."""
    lines = [f"input word {word.name} = vars {' '.join(map(str, literals))} (least significant bit first)"
             for word, literals in zip(circuit.inputs, question.inputs)]
    lines += [f"output word {word.name} = literals {' '.join(map(str, literals))} (least significant bit first)"
              for word, literals in zip(circuit.outputs, outputs)]
    if question.threshold:
        lines.append(f"threshold word v = vars {' '.join(map(str, question.threshold))} (least significant bit "
                     f"first, {'two' + chr(39) + 's complement' if question.signed else 'unsigned'})")
    return lines


def gate_violation_cnf(circuit: GateCircuit, prop: Property) -> tuple[list[Clause], IDPool, list[str]]:
    """One CNF, unsatisfiable exactly when ``circuit`` has ``prop``, with comment lines naming words and bits.

    The threshold word is free (one question for every threshold at once).
    The comment lines carry no ``c`` prefix; pass them to
    :func:`sortcheck.engines.networks.cnf.dimacs`.

    >>> from sortcheck.model import Sorts
    >>> from sortcheck.model.lowering import lower_network
    >>> from sortcheck.model.families import merge_exchange
    >>> clauses, pool, comments = gate_violation_cnf(lower_network(merge_exchange(2), 2), Sorts(order="descending"))
    >>> comments[1]
    'input word x0 = vars 2 3 (least significant bit first)'
    """
    question = threshold_question(circuit, prop)
    outputs = question.outputs
    how = ("some threshold v makes the 0-1 vectors the property relates differ" if question.threshold
           else "some output bit differs from the stable reference sorter")
    comments = [f"sortcheck gate CNF: {circuit.words} words of {circuit.width} bits, {len(circuit.gates)} gates; "
                f"satisfiable exactly when some input breaks: {prop.describe()} ({how})",
                *variable_comments(question, circuit, outputs)]
    return question.clauses(), question.builder.pool, comments


def reference_sorter(words: int, width: int, signed: bool = False, style: str = "mux") -> GateCircuit:
    """Batcher's merge exchange network lowered to ``width``-bit words: a reference sorter for miters.

    >>> reference_sorter(3, 2, signed=True).evaluate([1, 3, 2])
    [2, 3, 1]
    """
    return lower_network(merge_exchange(words), width, style=style, signed=signed)


def miter_cnf(first: GateCircuit, second: GateCircuit) -> tuple[list[Clause], IDPool, tuple[tuple[int, ...], ...]]:
    """Two circuits on shared input variables, and the clause "some output bit differs".

    Unsatisfiable exactly when the circuits compute the same function.
    Returns the clauses, the pool and the input words' variables.

    >>> first, second = reference_sorter(3, 2, style="mux"), reference_sorter(3, 2, style="xor")
    >>> from pysat.solvers import Solver
    >>> Solver(name="glucose4", bootstrap_with=miter_cnf(first, second)[0]).solve()
    False
    """
    if first.widths != second.widths or [w.width for w in first.outputs] != [w.width for w in second.outputs]:
        raise ValueError("a miter needs the same input words and output widths on both sides")
    builder = CnfBuilder()
    inputs = input_literals(builder, first)
    left = encode_circuit(builder, first, inputs).outputs
    right = encode_circuit(builder, second, inputs).outputs
    differ = builder.or_(builder.xor2(a, b) for x, y in zip(left, right) for a, b in zip(x, y))
    return builder.clauses + [[differ]], builder.pool, inputs


def circuit_cnf(circuit: GateCircuit) -> tuple[list[Clause], IDPool, list[str]]:
    """The Tseitin encoding of ``circuit`` alone, with comment lines naming the input and output bits."""
    builder = CnfBuilder()
    inputs = input_literals(builder, circuit)
    outputs = encode_circuit(builder, circuit, inputs).outputs
    comments = [f"sortcheck Tseitin CNF of a gate circuit: {circuit.words} words of {circuit.width} bits, "
                f"{len(circuit.gates)} gates, {builder.asked - builder.encoded} nodes hashed or folded away"]
    comments += [f"input word {word.name} = vars {' '.join(map(str, literals))} (least significant bit first)"
                 for word, literals in zip(circuit.inputs, inputs)]
    comments += [f"output word {word.name} = literals {' '.join(map(str, literals))} (least significant bit first)"
                 for word, literals in zip(circuit.outputs, outputs)]
    return builder.clauses, builder.pool, comments
