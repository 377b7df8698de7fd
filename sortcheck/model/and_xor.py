"""Gate circuits rewritten with 2-input AND, 2-input XOR and NOT only, and what they cost in secure computation.

In secure multi-party computation (garbled circuits, secret sharing) XOR and
NOT gates are free and every AND gate costs communication; the number of
AND gates on the longest path costs rounds.  :func:`to_and_xor` rewrites a
circuit exactly, gate by gate, into that basis (it is also what the Bristol
Fashion writer writes):

==================  ===============================================================
op (n inputs)       rewritten as
==================  ===============================================================
``and``             a tree of n - 1 ANDs, the two shallowest operands first
``nand``            the same, then NOT
``or``              NOT of the AND tree of the negated inputs (De Morgan)
``nor``             the AND tree of the negated inputs
``xor``             a chain of n - 1 XORs
``xnor``            the same, then NOT
``not``             NOT
``mux(s, a, b)``    ``a XOR (s AND (a XOR b))``
==================  ===============================================================

So the AND count is ``and + or`` of :func:`sortcheck.model.cost.cost_counts`
(every n-input AND, OR, NAND, NOR counts n - 1, a mux counts 1).  The AND
depth (:func:`and_depth`) is the most AND gates on any path from an input to
an output, XOR and NOT counting nothing.  Gates are rewritten as written: a
gate with a constant input is not simplified first.  A NOT of the same signal
is made once and shared.

Examples
--------
>>> from sortcheck.model.circuit import Gate, OutputWord, Word
>>> circuit = GateCircuit((Word("a", 1), Word("b", 1), Word("c", 1)),
...                       (Gate("m", "or", ("a[0]", "b[0]", "c[0]")),), (OutputWord("y", ("m",)),))
>>> basic = to_and_xor(circuit)
>>> basic.op_counts(), and_depth(basic)
({'and': 2, 'not': 4}, 2)
>>> all(basic.evaluate([a, b, c]) == circuit.evaluate([a, b, c]) for a in (0, 1) for b in (0, 1) for c in (0, 1))
True
>>> mpc_costs(circuit)
{'and_count': 2, 'and_depth': 2}
"""

from __future__ import annotations

import heapq

from sortcheck.model.circuit import Gate, GateCircuit, Signal, bit_name

BASIC_OPS = ("and", "xor", "not")
"""The ops of a circuit :func:`to_and_xor` returns (AND and XOR with two inputs each)."""


class _Rewriter:
    """Builds the basic gates, with fresh names and the AND depth of every signal it defines."""

    def __init__(self, circuit: GateCircuit):
        self.taken = {gate.out for gate in circuit.gates}
        self.taken.update(bit_name(word.name, i) for word in circuit.inputs for i in range(word.width))
        self.gates: list[Gate] = []
        self.depth: dict[Signal, int] = {}
        self.negations: dict[Signal, str] = {}
        self.counter = 0

    def fresh(self) -> str:
        while True:
            self.counter += 1
            name = f"t{self.counter}~"
            if name not in self.taken:
                self.taken.add(name)
                return name

    def level(self, signal: Signal) -> int:
        return self.depth.get(signal, 0)  # inputs and constants: 0

    def add(self, op: str, inputs: tuple[Signal, ...], out: str | None = None) -> str:
        out = out or self.fresh()
        self.gates.append(Gate(out, op, inputs))
        depth = self.depth
        level = max(depth.get(inputs[0], 0), depth.get(inputs[-1], 0))  # one or two inputs
        depth[out] = level + 1 if op == "and" else level
        return out

    def negate(self, signal: Signal, out: str | None = None) -> str:
        if out is not None:
            return self.add("not", (signal,), out)
        if signal not in self.negations:
            self.negations[signal] = self.add("not", (signal,))
        return self.negations[signal]

    def and_tree(self, inputs: list[Signal], out: str | None) -> str:
        """ANDs of ``inputs`` combining the two shallowest first (least AND depth); the last is named ``out``."""
        queue = [(self.level(signal), index, signal) for index, signal in enumerate(inputs)]
        heapq.heapify(queue)
        order = len(inputs)
        while len(queue) > 2:
            (_, _, first), (_, _, second) = heapq.heappop(queue), heapq.heappop(queue)
            made = self.add("and", (first, second))
            heapq.heappush(queue, (self.depth[made], order, made))
            order += 1
        (_, _, first), (_, _, second) = sorted(queue, key=lambda item: item[1])  # two inputs keep their order
        return self.add("and", (first, second), out)

    def xor_chain(self, inputs: list[Signal], out: str | None) -> str:
        result = inputs[0]
        for index, signal in enumerate(inputs[1:], start=2):
            result = self.add("xor", (result, signal), out if index == len(inputs) else None)
        return result

    def rewrite(self, gate: Gate) -> None:
        op, inputs, out = gate.op, list(gate.inputs), gate.out
        if op == "and":
            self.and_tree(inputs, out)
        elif op == "nand":
            self.negate(self.and_tree(inputs, None), out)
        elif op == "or":
            self.negate(self.and_tree([self.negate(s) for s in inputs], None), out)
        elif op == "nor":
            self.and_tree([self.negate(s) for s in inputs], out)
        elif op == "xor":
            self.xor_chain(inputs, out)
        elif op == "xnor":
            self.negate(self.xor_chain(inputs, None), out)
        elif op == "not":
            self.negate(inputs[0], out)
        elif op == "mux":
            select, when0, when1 = inputs
            differ = self.add("xor", (when0, when1))
            self.add("xor", (when0, self.add("and", (select, differ))), out)
        else:
            raise ValueError(f"unknown op {op!r}")


def _written_order(circuit: GateCircuit) -> tuple[Gate, ...]:
    """The gates as written when every gate comes after the gates it reads, else in a topological order."""
    known = {bit_name(word.name, i) for word in circuit.inputs for i in range(word.width)}
    for gate in circuit.gates:
        if not all(isinstance(signal, int) or signal in known for signal in gate.inputs):
            return circuit.gate_order
        known.add(gate.out)
    return circuit.gates


def _rewritten(circuit: GateCircuit) -> _Rewriter:
    rewriter = _Rewriter(circuit)
    for gate in _written_order(circuit):
        rewriter.rewrite(gate)
    return rewriter


def to_and_xor(circuit: GateCircuit) -> GateCircuit:
    """The same circuit with 2-input AND, 2-input XOR and NOT gates only (see the module documentation).

    Gates keep the order they are written in when it evaluates, else take a topological order.
    Every gate of ``circuit`` keeps its output name (the last of the gates
    it becomes defines it); the new intermediate signals are named ``t<k>~``.
    Inputs, outputs, name, description and claim are kept.
    """
    rewriter = _rewritten(circuit)
    return GateCircuit(circuit.inputs, tuple(rewriter.gates), circuit.outputs, name=circuit.name,
                       description=circuit.description, claim=circuit.claim)


def and_depth(circuit: GateCircuit) -> int:
    """The most AND gates on any input-to-output path of a circuit of :data:`BASIC_OPS` (XOR, NOT free).

    >>> from sortcheck.model.circuit import OutputWord, Word
    >>> circuit = GateCircuit((Word("a", 2),), (Gate("p", "and", ("a[0]", "a[1]")), Gate("q", "xor", ("p", "a[0]")),
    ...                       Gate("r", "and", ("q", "a[1]"))), (OutputWord("y", ("r", "p")),))
    >>> and_depth(circuit)
    2
    """
    depth: dict[Signal, int] = {}
    for gate in circuit.gate_order:
        if gate.op not in BASIC_OPS:
            raise ValueError(f"and_depth needs AND, XOR and NOT gates only, got {gate.op!r}")
        depth[gate.out] = max(depth.get(signal, 0) for signal in gate.inputs) + (gate.op == "and")
    return max((depth.get(bit, 0) for word in circuit.outputs for bit in word.bits), default=0)


def mpc_costs(circuit: GateCircuit) -> dict[str, int]:
    """``{"and_count": ..., "and_depth": ...}`` of the circuit rewritten by :func:`to_and_xor`."""
    rewriter = _rewritten(circuit)
    depth = max((rewriter.level(bit) for word in circuit.outputs for bit in word.bits), default=0)
    return {"and_count": sum(gate.op == "and" for gate in rewriter.gates), "and_depth": depth}
