"""Whether two gate circuits on the same input bits compute the same output bits, by SAT sweeping.

The second circuit is swept into the first (:func:`~sortcheck.engines.gates.sweeping.sweep.sweep`):
every node of it that simulation pairs with a node of the first is proved
equal to it (or refuted, which refines the signatures), in topological order,
each query over the cones back to the nodes already proved.  Two netlists of
one design (before and after optimisation, or two synthesis runs) share most
of their internal signals, so each query is small, where one miter of the
whole circuits is one hard SAT call.  What is left is one question per output
bit that the sweep did not merge: proved equal over the swept graph, or an
input bits pattern that tells the two apart.  ``encodings/gate-sat-sweeping.md``
gives the queries.

>>> from sortcheck.model.families import merge_exchange
>>> from sortcheck.model.lowering import lower_network
>>> mux = lower_network(merge_exchange(4), 3, style="mux")
>>> gates = lower_network(merge_exchange(4), 3, style="and-or")
>>> answer = outputs_equal(mux, gates, Budget())
>>> answer.status, answer.figures["outputs_merged"] + answer.figures["outputs_proved"]
('equal', 12)
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field
from functools import cached_property
from typing import Any

from sortcheck.engines.base import Budget
from sortcheck.engines.gates.sweeping.aig import AndInverterGraph, circuit_graph
from sortcheck.engines.gates.sweeping.signatures import PATTERNS, SEED, input_signatures, uniform_signatures
from sortcheck.engines.gates.sweeping.sweep import sweep
from sortcheck.model import GateCircuit



@dataclass(frozen=True)
class OutputsAnswer:
    """``status``: ``equal``, ``different`` (``input_bits``: one input, the circuits' input bits in order, on
    which some output bit differs) or ``undecided`` (the budget or the conflict limits)."""

    status: str
    input_bits: tuple[int, ...] | None = None
    figures: dict[str, Any] = field(default_factory=dict)


def _graph(circuit: GateCircuit, signatures: list[int]) -> tuple[AndInverterGraph, list[int]]:
    """The circuit as an and-inverter graph on inputs of these signatures, and the literal of every output bit."""
    graph, literals = circuit_graph(circuit, signatures, PATTERNS)
    return graph, [literals[bit] for word in circuit.outputs for bit in word.bits]


@dataclass
class CircuitPair:
    """Two gate circuits as and-inverter graphs on shared input signatures, ready to be swept.

    ``likeness`` is the share of the second circuit's AND nodes whose
    signature (or its complement) some node of the first has: near 1 for two
    netlists of one design, low for two designs of one function.
    """

    reference: AndInverterGraph
    wanted: list[int]
    circuit: AndInverterGraph
    outputs: list[int]

    @classmethod
    def of(cls, first: GateCircuit, second: GateCircuit) -> CircuitPair:
        if len(set(first.widths)) == 1:  # words: patterns biased to ties and near ties
            signatures = input_signatures(first.words, first.width, PATTERNS, SEED)
        else:
            signatures = uniform_signatures(sum(first.widths), PATTERNS, SEED)
        return cls(*_graph(first, signatures), *_graph(second, signatures))

    @cached_property
    def likeness(self) -> float:
        known = {self.reference.normal(2 * node)[0] for node in range(1, len(self.reference))
                 if self.reference.fanins[node] is not None}
        nodes = [node for node in range(1, len(self.circuit)) if self.circuit.fanins[node] is not None]
        shared = sum(self.circuit.normal(2 * node)[0] in known for node in nodes)
        return shared / len(nodes) if nodes else 1.0


def outputs_equal(first: GateCircuit, second: GateCircuit, budget: Budget, pair: CircuitPair | None = None
                  ) -> OutputsAnswer:
    """Whether ``first`` and ``second`` (the same input and output words) give the same output bits on every input.

    Input bits are matched in order (word by word, least significant first),
    output bits likewise.  ``pair`` is the two circuits' graphs when the
    caller has built them already.
    """
    started = time.perf_counter()
    pair = pair or CircuitPair.of(first, second)
    reference, wanted = pair.reference, pair.wanted
    swept = sweep(pair.circuit, reference, budget, grow_cut=True)
    figures: dict[str, Any] = {"nodes": [len(reference), len(pair.circuit)], "sweep": swept.figures()}
    merged = proved = 0
    status, input_bits = "undecided", None
    if swept.finished and not swept.timed_out:
        status = "equal"
        for left, right in zip(wanted, (swept.literal(literal) for literal in pair.outputs)):
            answer = swept.prover.prove(left, right) if left != right else None
            if answer is None or answer.status == "equal":
                merged, proved = merged + (answer is None), proved + (answer is not None)
                continue
            status = answer.status
            if answer.status == "different":
                input_bits = tuple((answer.pattern or {}).get(node, 0) for node in reference.inputs)
            break
    swept.prover.close()
    figures.update(outputs_merged=merged, outputs_proved=proved, sweep=swept.figures(),
                   seconds=round(time.perf_counter() - started, 4))
    return OutputsAnswer(status, input_bits, figures)
