"""Lifting block by proved block: compare-and-swap blocks found by signatures, each proved by SAT on its cone.

A gate circuit built from compare-and-swap blocks is, word for word, a
comparator network.  :func:`lift_circuit` finds the blocks *by what they
compute*, not by how their gates look:

1. every signal gets a signature by simulation (:func:`blocks.signal_signatures`);
2. starting from the input words, for every pair of current *channel words*
   the signatures of their minimum and maximum are computed and looked up;
   when the circuit has signals for every bit of both, that is a candidate;
3. each candidate is proved by one SAT call on its cone, cut at the two
   words (:func:`blocks.prove_block`); structurally identical blocks
   share one proof; only proved blocks are lifted, and their outputs become
   channel words in place of their inputs;
4. when every output word is a channel word, the min and max sides are
   assigned to channels so that output ``k`` is channel ``k`` (a small SAT
   problem); when no assignment does, the channels are relabelled, which is
   sound only for properties that do not depend on input positions.

It needs the blocks to stay apart in the circuit (as lowering writes them);
:mod:`~sortcheck.engines.gates.lifting.functional` lifts optimised circuits.
``encodings/structural-lifting.md`` gives the argument.

>>> from sortcheck.model.families import merge_exchange
>>> from sortcheck.model.lowering import lower_network
>>> from sortcheck.model import Sorts
>>> lifting = lift_circuit(lower_network(merge_exchange(4), 3, style="mux"), Sorts())
>>> lifting.network.comparators == merge_exchange(4).comparators, len(lifting.blocks)
(True, 5)
"""

from __future__ import annotations

import dataclasses
import time
from typing import Any

from sortcheck.engines.base import Budget
from sortcheck.engines.gates.lifting.blocks import BlockOrder, Signatures, signal_signatures
from sortcheck.engines.gates.lifting.channels import network_of
from sortcheck.engines.gates.lifting.result import Lifting, order_of
from sortcheck.engines.gates.lifting.search import BlockSearch
from sortcheck.engines.solving import Interrupted
from sortcheck.model import GateCircuit, PartialSort, Property, Sorts


def lift_circuit(circuit: GateCircuit, prop: Property | None = None, budget: Budget = Budget()) -> Lifting:
    """Find the comparator network ``circuit`` is, block by proved block (see the module docstring).

    ``prop`` (default: the circuit's claim, else ``sorts``) fixes the order
    the blocks must compare in (signed, key bits) and whether channels may be
    relabelled.  A circuit that does not lift gives a :class:`Lifting` with
    ``network`` None, the reason, and the blocks lifted before it stopped.
    """
    started = time.perf_counter()
    prop = prop or circuit.claim or Sorts()
    order = order_of(prop, circuit.width)
    signatures = signal_signatures(circuit)
    figures: dict[str, Any] = {"signature_seconds": time.perf_counter() - started, "gates": len(circuit.gates)}
    search = BlockSearch(circuit, signatures, order, budget)
    timed_out, network, channels_in, failure = False, None, None, None
    try:
        if isinstance(prop, PartialSort) and prop.stable:
            failure = "a stable partial sort depends on the tie rule and input positions; it is not lifted"
        elif len(set(circuit.widths)) > 1:
            failure = "the input words have different widths"
        else:
            search.run()
            network, channels_in, failure = network_of(search, circuit, prop, budget)
            if failure is not None:  # once more, letting block bits be computed anywhere
                distant = BlockSearch(circuit, signatures, order, budget, distant=True)
                distant.run()
                found = network_of(distant, circuit, prop, budget)
                if found[2] is None:
                    search, (network, channels_in, failure) = distant, found
            if failure is not None and not search.blocks:
                failure += _other_order_hint(circuit, signatures, order, prop, budget)
    except Interrupted:
        timed_out, failure = True, f"the time budget ran out after {len(search.blocks)} blocks"
    figures.update(seconds=time.perf_counter() - started, blocks=len(search.blocks), sat_calls=search.sat_calls,
                   shared_proofs=sum(block.how == "shared" for block in search.blocks),
                   block_gates=sum(block.gates for block in search.blocks), rejected=len(search.rejected),
                   distant=search.distant)
    return Lifting(network, order, tuple(search.blocks), failure, tuple(search.rejected), channels_in, timed_out,
                   figures)


def _other_order_hint(circuit: GateCircuit, signatures: Signatures, order: BlockOrder, prop: Property,
                      budget: Budget) -> str:
    """A note when the circuit lifts with blocks of the other signedness (which says nothing about ``prop``)."""
    other = dataclasses.replace(order, signed=not order.signed)
    search = BlockSearch(circuit, signatures, other, budget)
    search.run()
    if network_of(search, circuit, prop, budget)[2] is not None:
        return ""
    return (f"; the circuit does lift with blocks comparing {other.describe()} words, but a verdict under that "
            f"order says nothing about {prop.describe()}")
