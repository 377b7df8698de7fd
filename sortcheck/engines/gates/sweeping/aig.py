"""And-inverter graphs with structural hashing and simulation signatures, for SAT sweeping.

An :class:`AndInverterGraph` holds node 0 (the constant false), input nodes
and two-input AND nodes.  A *literal* is ``2 * node + complemented``, so
literal 0 is false, 1 is true and ``literal ^ 1`` is the negation, as in
the AIGER format.  AND nodes are hashed by their (ordered) fanins, so a
function built twice from the same literals is one node; trivial cases fold
(``x AND 0 = 0``, ``x AND x = x``, ``x AND NOT x = 0``).  OR, XOR and MUX
are built from ANDs.

Every node carries a *signature*: its values on the simulated input patterns,
one bit per pattern, as a Python integer (bit ``p`` is the value on pattern
``p``).  Inputs get their signatures when they are made; an AND node's is
computed when it is made.  :meth:`AndInverterGraph.extend` appends the
values of more patterns to every node.

>>> graph = AndInverterGraph(patterns=4)
>>> a, b = graph.add_input(0b0011), graph.add_input(0b0101)
>>> both = graph.and_(a, b)
>>> graph.and_(b, a) == both, graph.value(both), graph.value(graph.xor(a, b)), graph.value(graph.or_(a, b))
(True, 1, 6, 7)
>>> graph.and_(a, a ^ 1), graph.mux(a, b, b) == b
(0, True)
"""

from __future__ import annotations

from typing import Iterable, Sequence

from sortcheck.model import GateCircuit, bit_name
from sortcheck.model.circuit import Signal

FALSE, TRUE = 0, 1


class AndInverterGraph:
    """Nodes, structural hashing and signatures (see the module text).

    Parameters
    ----------
    patterns : int
        How many simulated input patterns the signatures hold.
    """

    def __init__(self, patterns: int):
        self.patterns = patterns
        self.mask = (1 << patterns) - 1
        #: Fanin literals of every node; ``None`` for the constant and the inputs.
        self.fanins: list[tuple[int, int] | None] = [None]
        self.signatures: list[int] = [0]
        self.inputs: list[int] = []
        self._hashed: dict[tuple[int, int], int] = {}

    def __len__(self) -> int:
        return len(self.fanins)

    # --- building -----------------------------------------------------------------------------

    def add_input(self, signature: int) -> int:
        """A new input node with the given signature; returns its (positive) literal."""
        node = len(self.fanins)
        self.fanins.append(None)
        self.signatures.append(signature & self.mask)
        self.inputs.append(node)
        return 2 * node

    def value(self, literal: int) -> int:
        """The signature of a literal (complemented literals give the complement)."""
        signature = self.signatures[literal >> 1]
        return signature ^ self.mask if literal & 1 else signature

    def and_(self, left: int, right: int) -> int:
        """The literal of ``left AND right``, folded and hashed."""
        if left > right:
            left, right = right, left
        if left == FALSE or left == right ^ 1:
            return FALSE
        if left == TRUE or left == right:
            return right
        key = (left, right)
        node = self._hashed.get(key)
        if node is None:
            node = len(self.fanins)
            self.fanins.append(key)
            self.signatures.append(self.value(left) & self.value(right))
            self._hashed[key] = node
        return 2 * node

    def and_all(self, literals: Iterable[int]) -> int:
        """The AND of any number of literals (true for none), as a balanced tree."""
        level = list(literals)
        if not level:
            return TRUE
        while len(level) > 1:
            level = [self.and_(level[i], level[i + 1]) if i + 1 < len(level) else level[i]
                     for i in range(0, len(level), 2)]
        return level[0]

    def or_(self, left: int, right: int) -> int:
        return self.and_(left ^ 1, right ^ 1) ^ 1

    def or_all(self, literals: Iterable[int]) -> int:
        return self.and_all(literal ^ 1 for literal in literals) ^ 1

    def xor(self, left: int, right: int) -> int:
        """``left XOR right`` as three ANDs; negations are pulled out, so ``x XOR NOT y`` shares ``x XOR y``."""
        flip = (left ^ right) & 1
        left, right = left & ~1, right & ~1
        if left == right:
            return flip
        if left == FALSE:
            return right ^ flip
        both = self.and_(left, right)
        neither = self.and_(left ^ 1, right ^ 1)
        return self.and_(both ^ 1, neither ^ 1) ^ flip

    def xor_all(self, literals: Iterable[int]) -> int:
        result = FALSE
        for literal in literals:
            result = self.xor(result, literal)
        return result

    def mux(self, select: int, when0: int, when1: int) -> int:
        """``when1 if select else when0``."""
        if when0 == when1:
            return when0
        if when0 == when1 ^ 1:
            return self.xor(select, when0)
        return self.or_(self.and_(select, when1), self.and_(select ^ 1, when0))

    def op(self, name: str, literals: Sequence[int]) -> int:
        """One op of the netlist format (and, or, nand, nor, xor, xnor, not, mux) on literals."""
        if name == "not":
            return literals[0] ^ 1
        if name == "mux":
            return self.mux(*literals)
        if name in ("and", "nand"):
            result = self.and_all(literals)
        elif name in ("or", "nor"):
            result = self.or_all(literals)
        elif name in ("xor", "xnor"):
            result = self.xor_all(literals)
        else:
            raise ValueError(f"unknown op {name!r}")
        return result ^ 1 if name in ("nand", "nor", "xnor") else result

    # --- signatures ---------------------------------------------------------------------------

    def extend(self, input_values: Sequence[int], count: int) -> None:
        """Append ``count`` more patterns: ``input_values[k]`` holds input ``k``'s values on them.

        Signatures keep their old patterns in the low bits; the new ones go above.

        >>> graph = AndInverterGraph(patterns=1)
        >>> a, b = graph.add_input(1), graph.add_input(1)
        >>> both = graph.and_(a, b)
        >>> graph.extend([0b10, 0b11], 2)
        >>> graph.patterns, bin(graph.value(both))
        (3, '0b101')
        """
        shift = self.patterns
        fresh = [0] * len(self.fanins)
        for node, values in zip(self.inputs, input_values):
            fresh[node] = values & ((1 << count) - 1)
        all_ones = (1 << count) - 1
        for node, fanin in enumerate(self.fanins):
            if fanin is None:
                continue
            left, right = fanin
            a = fresh[left >> 1] ^ (all_ones if left & 1 else 0)
            b = fresh[right >> 1] ^ (all_ones if right & 1 else 0)
            fresh[node] = a & b
        self.patterns += count
        self.mask = (1 << self.patterns) - 1
        self.signatures = [old | (new << shift) for old, new in zip(self.signatures, fresh)]

    def evaluate(self, literals: Sequence[int], input_bits: dict[int, int]) -> list[int]:
        """The 0/1 values of ``literals`` for one input assignment (input node -> bit; missing inputs are 0)."""
        memo: dict[int, int] = {0: 0}
        for node, bit in input_bits.items():
            memo[node] = bit
        results = []
        for literal in literals:
            stack = [literal >> 1]
            while stack:
                node = stack[-1]
                if node in memo:
                    stack.pop()
                    continue
                fanin = self.fanins[node]
                if fanin is None:
                    memo[node] = 0
                    stack.pop()
                    continue
                missing = [f >> 1 for f in fanin if (f >> 1) not in memo]
                if missing:
                    stack.extend(missing)
                    continue
                memo[node] = (memo[fanin[0] >> 1] ^ (fanin[0] & 1)) & (memo[fanin[1] >> 1] ^ (fanin[1] & 1))
                stack.pop()
            results.append(memo[literal >> 1] ^ (literal & 1))
        return results

    def normal(self, literal: int) -> tuple[int, int]:
        """The signature with pattern 0 made false, and the phase that does it: ``value(literal ^ phase)``.

        Two literals are candidates for equivalence (or for being each other's
        negation) exactly when their normal signatures are equal.
        """
        value = self.value(literal)
        return (value ^ self.mask, 1) if value & 1 else (value, 0)


def cone(graph: AndInverterGraph, roots: Iterable[int], stop: set[int] | frozenset[int] = frozenset()
         ) -> tuple[list[int], list[int]]:
    """The AND nodes between ``stop`` (and the inputs) and the ``roots`` literals, in topological order,
    and the leaves: nodes in ``stop`` or inputs that the cone reads.  (Node numbers are a topological
    order: every node is made after its fanins.)

    >>> graph = AndInverterGraph(patterns=1)
    >>> a, b, c = (graph.add_input(0) for _ in range(3))
    >>> top = graph.and_(graph.and_(a, b), c)
    >>> cone(graph, [top]), cone(graph, [top], {graph.and_(a, b) >> 1})
    (([4, 5], [1, 2, 3]), ([5], [3, 4]))
    """
    fanins = graph.fanins
    seen: set[int] = {0}
    inner: list[int] = []
    leaves: list[int] = []
    stack = [root >> 1 for root in roots]
    while stack:
        node = stack.pop()
        if node in seen:
            continue
        seen.add(node)
        fanin = fanins[node]
        if fanin is None or node in stop:
            leaves.append(node)
            continue
        inner.append(node)
        stack.append(fanin[0] >> 1)
        stack.append(fanin[1] >> 1)
    inner.sort()
    leaves.sort()
    return inner, leaves


def circuit_graph(circuit: GateCircuit, signatures: list[int], patterns: int
                  ) -> tuple[AndInverterGraph, dict[Signal, int]]:
    """``circuit`` as an and-inverter graph on inputs with these signatures (on ``patterns`` patterns), and
    every signal's literal."""
    graph = AndInverterGraph(patterns=patterns)
    literals: dict[Signal, int] = {0: 0, 1: 1}
    names = [bit_name(word.name, i) for word in circuit.inputs for i in range(word.width)]
    for name, signature in zip(names, signatures):
        literals[name] = graph.add_input(signature)
    for gate in circuit.gate_order:
        literals[gate.out] = graph.op(gate.op, [literals[source] for source in gate.inputs])
    return graph, literals
