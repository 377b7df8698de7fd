"""Lifting by function: the comparator network a circuit computes, found by simulation and proved by SAT sweeping.

:func:`lift_by_function` is the lifting that survives synthesis:

1. :class:`~sortcheck.engines.gates.lifting.discover.NetworkDiscovery` finds,
   from the signatures of the circuit's signals, a comparator network whose
   words the circuit computes, and which of its words the outputs are;
2. the channels are assigned (:func:`~sortcheck.engines.gates.lifting.channels.network_from_blocks`);
3. :func:`~sortcheck.engines.gates.sweeping.sweep.sweep` proves the circuit
   equal to the network, lowered to an and-inverter graph on the same
   inputs, signal by signal; the output bits must end on the network's
   output words, else their equality is asked once more over their whole cones.

A refuted candidate teaches the signatures a new input; when the outputs are
not proved, the search runs again on the better signatures (a few rounds at
most).  The result is a :class:`~sortcheck.engines.gates.lifting.engine.Lifting`
whose network :func:`~sortcheck.engines.gates.lifting.engine.lifted_verdict`
checks with the comparator engines.

>>> from sortcheck.model.families import merge_exchange
>>> from sortcheck.model.lowering import lower_network
>>> from sortcheck.model import Sorts
>>> lifting = lift_by_function(lower_network(merge_exchange(5), 4, style="and-or"), Sorts())
>>> [set(layer) for layer in lifting.network.layers] == [set(layer) for layer in merge_exchange(5).layers]
True
>>> lifting.method, lifting.figures["sweep"]["rounds"]
('sweeping', 1)
"""

from __future__ import annotations

import time
from typing import Any

from sortcheck.engines.base import Budget
from sortcheck.engines.gates.lifting.blocks import BlockOrder
from sortcheck.engines.gates.lifting.channels import network_from_blocks
from sortcheck.engines.gates.lifting.discover import PATTERNS, SEED, NetworkDiscovery
from sortcheck.engines.gates.lifting.result import Lifting, order_of
from sortcheck.engines.gates.lifting.search import BlockProof
from sortcheck.engines.gates.sweeping.sweep import Sweep, learn, sweep
from sortcheck.model import GateCircuit, PartialSort, Property, Sorts

#: Searches of the network, each on signatures that learnt from the refuted candidates of the one before.
ROUNDS = 3


def lift_by_function(circuit: GateCircuit, prop: Property | None = None, budget: Budget = Budget(),
                     patterns: int = PATTERNS) -> Lifting:
    """Find the comparator network ``circuit`` computes and prove the circuit equal to it (module text).

    A circuit that does not lift gives a :class:`Lifting` with ``network``
    None and the reason in ``failure``.
    """
    started = time.perf_counter()
    prop = prop or circuit.claim or Sorts()
    order = order_of(prop, circuit.width)
    figures: dict[str, Any] = {"method": "sweeping", "gates": len(circuit.gates), "rounds": 0}
    if isinstance(prop, PartialSort) and prop.stable:
        return _failed(order, "a stable partial sort depends on the tie rule and input positions; it is not lifted",
                       figures, started)
    learnt: list[dict[int, int]] = []
    failure = "no round ran"
    for round_number in range(ROUNDS):
        figures["rounds"] = round_number + 1
        discovery = NetworkDiscovery(circuit, order, budget, patterns, SEED + round_number)
        for pattern in learnt:
            learn((discovery.graph, discovery.spec), pattern)
        found = discovery.run()
        figures["discovery_seconds"] = round(time.perf_counter() - started, 4)
        if found.failure is not None:
            return _failed(order, found.failure, figures, started, budget.expired())
        network, channels_in, failure = network_from_blocks(circuit, prop, found.blocks, found.outputs, budget)
        if network is None:
            return _failed(order, failure, figures, started)
        word_bits = {literal >> 1 for word in discovery.words for literal in word}
        targets = word_bits | {literal >> 1 for literal in discovery.selects}
        # The top bits are no cut points: optimisation computes them from the top bits of any earlier words
        # (they are AND/OR functions of the inputs' top bits), and windows pass through them cheaply.
        cut = word_bits - {word[-1] >> 1 for word in discovery.words}
        swept = sweep(discovery.graph, discovery.spec, budget, preferred=cut, targets=targets)
        figures["sweep"] = swept.figures()
        if swept.timed_out:
            return _failed(order, "the time budget ran out while sweeping", figures, started, True)
        if not swept.finished:
            return _failed(order, f"the sweep did not settle in {swept.rounds} rounds", figures, started)
        failure, pattern = _outputs_proved(discovery, swept, found.outputs)
        figures["sweep"] = swept.figures()
        if failure is None:
            blocks = _block_proofs(discovery, swept, found.blocks)
            figures["seconds"] = round(time.perf_counter() - started, 4)
            return Lifting(network, order, blocks, None, (), channels_in, False, figures, method="sweeping")
        if pattern is None or budget.expired():
            break
        learnt.append(pattern)
    return _failed(order, failure, figures, started, budget.expired())


def _failed(order: BlockOrder, failure: str, figures: dict[str, Any], started: float, timed_out: bool = False
            ) -> Lifting:
    figures["seconds"] = round(time.perf_counter() - started, 4)
    return Lifting(None, order, (), failure, (), None, timed_out, figures, method="sweeping")


def _outputs_proved(discovery: NetworkDiscovery, swept: Sweep, outputs: list[int]
                    ) -> tuple[str | None, dict[int, int] | None]:
    """None when every output bit is proved to be its network word's bit; else why not, and an input that
    tells a bit apart from it (None when the question was left undecided)."""
    for k, output in enumerate(discovery.circuit.outputs):
        for i, bit in enumerate(output.bits):
            mapped = swept.literal(discovery.literals[bit])
            wanted = discovery.words[outputs[k]][i]
            if mapped == wanted:
                continue
            answer = swept.prover.prove(mapped, wanted)
            if answer.status == "equal":
                continue
            name = f"{output.name}[{i}]"
            if answer.status == "different":
                return f"output bit {name} is not the network's output bit it resembled on simulated inputs", \
                    answer.pattern
            return f"the equality of output bit {name} with the network's was left undecided", None
    return None, None


def _block_proofs(discovery: NetworkDiscovery, swept: Sweep, blocks: list[tuple[int, int, int, int]]
                  ) -> tuple[BlockProof, ...]:
    """One record per comparator: how many bits of its two output words are proved cut points of the circuit."""
    proofs = []
    for number, words in enumerate(blocks):
        bits = [literal >> 1 for word in words[2:] for literal in discovery.words[word]]
        proved = sum(node in swept.cut_points for node in bits)
        how = "cut points" if proved == len(bits) else "merged away" if proved == 0 else \
            f"{proved} of {len(bits)} bits cut points"
        proofs.append(BlockProof(number, words, 0, how, 0.0))
    return tuple(proofs)
