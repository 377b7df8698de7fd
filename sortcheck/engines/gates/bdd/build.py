"""The BDDs of a gate circuit's output bits, gate by gate, within a node limit and a time budget.

Gates are applied in the circuit's topological order; each signal's BDD is
dropped once the last gate that reads it has run (output bits are kept), so
the manager holds only the live part of the circuit.  Between two gates the
budget is consulted and, every few milliseconds, the live node count
(:meth:`BddManager.check_size`).

>>> from sortcheck.engines.base import Budget
>>> from sortcheck.engines.gates.bdd.manager import BddManager
>>> from sortcheck.engines.gates.bdd.orders import word_major
>>> from sortcheck.model.lowering import lower_network
>>> from sortcheck.model import ComparatorNetwork
>>> circuit = lower_network(ComparatorNetwork(2, ((0, 1),)), 1)
>>> manager = BddManager(word_major(circuit), backend="python")
>>> built = build_outputs(circuit, manager, Budget())
>>> low, high = built.outputs[0][0], built.outputs[1][0]
>>> a, b = built.inputs[0][0], built.inputs[1][0]
>>> low == manager.and_(a, b), high == manager.or_(a, b)
(True, True)
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Sequence

from sortcheck.engines.base import Budget
from sortcheck.engines.gates.bdd.manager import BddManager
from sortcheck.model import GateCircuit, bit_name

#: The ops that fold over their inputs with one binary operation, and whether the result is negated.
_FOLDS = {"and": ("and", False), "nand": ("and", True), "or": ("or", False), "nor": ("or", True),
          "xor": ("xor", False), "xnor": ("xor", True)}


class TimeUp(Exception):
    """The budget ran out (``done`` says how far the work got)."""

    def __init__(self, done: str):
        super().__init__(done)
        self.done = done


class Progress:
    """How far an attempt got: gates built out of all, and thresholds checked out of all."""

    def __init__(self) -> None:
        self.gates = self.all_gates = self.thresholds = self.all_thresholds = 0

    def share(self) -> float:
        """The share of the work done, from 0 to 2 (building counts 1, the thresholds 1)."""
        built = self.gates / self.all_gates if self.all_gates else 0.0
        checked = self.thresholds / self.all_thresholds if self.all_thresholds else 0.0
        return built + checked


@dataclass
class CircuitBdds:
    """The BDDs of a circuit's input bits and output bits, least significant bit first in each word."""

    inputs: list[list[Any]]
    outputs: list[list[Any]]
    gates: int


def gate_function(manager: BddManager, op: str, arguments: Sequence[Any]) -> Any:
    """The BDD of one gate from the BDDs of its inputs (a ``mux`` takes ``(select, when0, when1)``)."""
    if op == "not":
        return manager.not_(arguments[0])
    if op == "mux":
        select, when0, when1 = arguments
        return manager.ite(select, when1, when0)
    fold, negate = _FOLDS[op]
    apply = {"and": manager.and_, "or": manager.or_, "xor": manager.xor}[fold]
    result = arguments[0]
    for argument in arguments[1:]:
        result = apply(result, argument)
    return manager.not_(result) if negate else result


def _last_reads(circuit: GateCircuit) -> dict:
    last: dict = {}
    for position, gate in enumerate(circuit.gate_order):
        for source in gate.inputs:
            last[source] = position
    return last


def build_outputs(circuit: GateCircuit, manager: BddManager, budget: Budget, progress: Progress | None = None
                  ) -> CircuitBdds:
    """Apply every gate; the BDDs of the input and output bits.

    Raises
    ------
    NodeLimitReached
        When the live nodes pass the manager's limit.
    TimeUp
        When the budget runs out between two gates.
    """
    signals: dict = {0: manager.false, 1: manager.true}
    inputs = []
    for word in circuit.inputs:
        bits = [manager.variable(bit_name(word.name, i)) for i in range(word.width)]
        signals.update((bit_name(word.name, i), bit) for i, bit in enumerate(bits))
        inputs.append(bits)
    kept = {bit for word in circuit.outputs for bit in word.bits}
    last = _last_reads(circuit)
    order = circuit.gate_order
    progress = progress or Progress()
    progress.all_gates = len(order)
    for position, gate in enumerate(order):
        progress.gates = position
        if budget.expired():
            raise TimeUp(f"{position:,} of {len(order):,} gates were built")
        signals[gate.out] = gate_function(manager, gate.op, [signals[source] for source in gate.inputs])
        for source in set(gate.inputs):
            if last[source] == position and source not in kept and isinstance(source, str):
                del signals[source]
        if gate.out not in last and gate.out not in kept:
            del signals[gate.out]  # read by no gate and no output
        manager.check_size()
        if position % 256 == 0:
            budget.report(position, len(order), "building BDDs")
    manager.check_size(force=True)
    progress.gates = len(order)
    outputs = [[signals[bit] for bit in word.bits] for word in circuit.outputs]
    return CircuitBdds(inputs, outputs, len(order))
