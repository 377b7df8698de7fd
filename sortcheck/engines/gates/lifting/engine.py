"""The ``lift`` engine: a gate circuit proved to be a comparator network, then the network checked.

A gate circuit built from compare-and-swap blocks is, word for word, a
comparator network.  :func:`lift_circuit` finds the blocks *by what they
compute*, not by how their gates look:

1. every signal gets a signature by simulation (:func:`lift_blocks.signal_signatures`);
2. starting from the input words, for every pair of current *channel words*
   the signatures of their minimum and maximum are computed and looked up;
   when the circuit has signals for every bit of both, that is a candidate;
3. each candidate is proved by one SAT call on its cone, cut at the two
   words (:func:`lift_blocks.prove_block`); structurally identical blocks
   share one proof; only proved blocks are lifted, and their outputs become
   channel words in place of their inputs;
4. when every output word is a channel word, the min and max sides are
   assigned to channels so that output ``k`` is channel ``k`` (a small SAT
   problem); when no assignment does, the channels are relabelled, which is
   sound only for properties that do not depend on input positions.

:func:`lifted_verdict` then checks the network with the comparator engines
and turns the verdict back into one about the circuit; every counterexample
is recomputed with the circuit.  ``encodings/structural-lifting.md`` gives
the argument that the network's verdict is the circuit's.

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
from dataclasses import dataclass, field
from typing import Any

from sortcheck.engines.base import Budget, Options, Status, StopReason, Verdict, refused_verdict
from sortcheck.engines.gates.simulation import counterexample_of, quick_refute
from sortcheck.engines.gates.lifting.blocks import BlockOrder, Signatures, signal_signatures
from sortcheck.engines.gates.lifting.channels import network_of
from sortcheck.engines.gates.lifting.search import BlockProof, BlockSearch
from sortcheck.engines.solving import Interrupted
from sortcheck.errors import PropertyError
from sortcheck.model import ComparatorNetwork, GateCircuit, Netlist, PartialSort, Property, Sorts, check_fits


@dataclass(frozen=True)
class Lifting:
    """What :func:`lift_circuit` found: the network (None when the circuit does not lift) and how.

    ``input_channels[i]`` is the network channel circuit input word ``i``
    enters (None: channel ``i``; a permutation only after relabelling).
    ``failure`` says where lifting stopped; ``rejected`` lists candidates whose
    proof failed, with two word values on which they are not min/max.
    """

    network: ComparatorNetwork | None
    order: BlockOrder
    blocks: tuple[BlockProof, ...]
    failure: str | None = None
    rejected: tuple[tuple[tuple[int, int], tuple[int, int] | None], ...] = ()
    input_channels: tuple[int, ...] | None = None
    timed_out: bool = False
    figures: dict[str, Any] = field(default_factory=dict)
    #: ``blocks``: every block proved min/max on its cone; ``sweeping``: the whole circuit proved equal to
    #: the network signal by signal (:mod:`sortcheck.engines.gates.lifting.functional`).
    method: str = "blocks"

    @property
    def lifted(self) -> bool:
        return self.network is not None


def order_of(prop: Property, width: int) -> BlockOrder:
    """The order the comparators of a lifted circuit must compare in, for ``prop``."""
    key_bits = prop.key_bits if isinstance(prop, PartialSort) and prop.key_bits < width else None
    return BlockOrder(signed=prop.signed, key_bits=key_bits)


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



def network_property(prop: Property) -> Property:
    """The question for the lifted network: the same property on any total order (key-only: ``sorts``)."""
    if isinstance(prop, PartialSort):
        return Sorts()
    return dataclasses.replace(prop, signed=False)


def _word_of(rank: int, width: int, order: BlockOrder) -> int:
    """The raw word with order rank ``rank`` among the smallest values (on the key bits, low bits zero)."""
    bits = order.key_bits or width
    flip = 1 << (bits - 1) if order.signed else 0
    return (rank ^ flip) << (width - bits)


def circuit_input(lifting: Lifting, values: tuple[int, ...], width: int) -> tuple[int, ...] | None:
    """The circuit's input words for a network input (values of order ranks), or None when they do not fit."""
    if max(values, default=0) >= 1 << (lifting.order.key_bits or width):
        return None
    channels = lifting.input_channels or range(len(values))
    return tuple(_word_of(values[channel], width, lifting.order) for channel in channels)


def _describe_lifting(lifting: Lifting, circuit: GateCircuit, prop: Property) -> str:
    width, n = circuit.width, circuit.words
    if lifting.method == "sweeping":
        sweep = lifting.figures.get("sweep", {})
        calls = sweep.get("window_calls", 0) + sweep.get("whole_calls", 0)
        text = (f"lifted to a comparator network of {n} channels and {len(lifting.blocks)} comparators "
                f"({lifting.order.describe()}), found from what the circuit's signals compute and proved equal to "
                f"the circuit on every input of {n} words of {width} bits by SAT sweeping ({sweep.get('cut_points', 0)} "
                f"cut points proved, {calls} SAT calls)")
    else:
        text = (f"lifted to a comparator network of {n} channels: {len(lifting.blocks)} blocks of 2 x {width} bits "
                f"proved to be min/max ({lifting.order.describe()}) by SAT")
    if lifting.input_channels is not None:
        text += (f" (the circuit is the network after a fixed permutation of its input words, which "
                 f"{prop.describe()} does not depend on)")
    return text


def lifted_verdict(lifting: Lifting, circuit: GateCircuit, prop: Property, budget: Budget = Budget(),
                   engine: str = "auto", started: float | None = None) -> Verdict:
    """Check the lifted network with the comparator engines and give the verdict for ``circuit``.

    A refutation is mapped back to input words (the network's input of
    distinct values when it has one and it fits, else its 0-1 input), then
    recomputed with the circuit and re-checked by the reference semantics.
    """
    from sortcheck.engines import (
        check as check_netlist,  # the registry imports this module
    )

    started = time.perf_counter() if started is None else started
    assert lifting.network is not None, "the circuit did not lift"
    found = check_netlist(lifting.network, network_property(prop), engine=engine, timeout=budget.remaining())
    lifted = _describe_lifting(lifting, circuit, prop)
    figures = {"lift": lifting.figures, "blocks": [block.to_json() for block in lifting.blocks],
               "network_engine": found.engine, "network": found.figures,
               "comparators": [list(pair) for pair in lifting.network.comparators]}
    cover = f"covers every input of {circuit.words} words of {circuit.width} bits"
    seconds = time.perf_counter() - started
    if found.status is Status.PROVED:
        scope = f"{lifted}; the network proved by {found.engine} ({found.scope}); {cover}"
        return Verdict(Status.PROVED, "lift", prop, StopReason.COVERED, scope, seconds, None, figures)
    if found.status is Status.UNKNOWN:
        scope = f"{lifted}; the network check by {found.engine} did not finish ({found.scope}); nothing is proved"
        return Verdict(Status.UNKNOWN, "lift", prop, found.stop, scope, seconds, None, figures)
    example = found.counterexample
    for values in (example.permutation, example.input):
        raw = None if values is None else circuit_input(lifting, tuple(values), circuit.width)
        if raw is None:
            continue
        try:
            mapped = counterexample_of(circuit, prop, raw)
        except AssertionError:
            continue
        scope = (f"{lifted}; the network refuted by {found.engine}; this input of {circuit.words} words of "
                 f"{circuit.width} bits, recomputed with the circuit, breaks the property")
        return Verdict(Status.REFUTED, "lift", prop, StopReason.COUNTEREXAMPLE, scope, seconds, mapped, figures)
    scope = (f"{lifted}; the network was refuted but its counterexample {example.input} does not break the "
             "circuit (an internal inconsistency); nothing is proved or refuted")
    return Verdict(Status.UNKNOWN, "lift", prop, StopReason.UNSUPPORTED, scope, seconds, None, figures)


class LiftEngine:
    """Gate circuits lifted to comparator networks block by proved block, then checked as networks.

    A circuit that does not lift is tried on corner-case and random inputs
    (:func:`sortcheck.engines.gates.simulation.quick_refute`), which can only
    refute; otherwise the verdict is ``unknown`` and says why it did not lift.

    Parameters
    ----------
    network_engine : str
        The engine for the lifted network (``auto``: enumerate, else sat).
    min_input_bits : int
        Circuits with fewer input bits (words times width) are refused: an
        engine that simulates every input is the better choice there.
    samples : int
        Random inputs tried on a circuit that does not lift.

    Examples
    --------
    >>> from sortcheck.model.families import odd_even_transposition
    >>> from sortcheck.model.lowering import lower_network
    >>> verdict = LiftEngine().check(lower_network(odd_even_transposition(5), 4, style="xor"), Sorts(), Budget())
    >>> verdict.status.value, verdict.figures["network_engine"]
    ('proved', 'enumerate')
    """

    name = "lift"
    cooperative = True

    def __init__(self, network_engine: str = "auto", min_input_bits: int = 0, samples: int = 1 << 14):
        self.network_engine, self.min_input_bits, self.samples = network_engine, min_input_bits, samples

    def refusal(self, netlist: Netlist, prop: Property, options: Options = Options()
                ) -> tuple[StopReason, str] | None:
        if isinstance(netlist, ComparatorNetwork):
            return StopReason.UNSUPPORTED, "lift turns gate circuits into comparator networks; this is one already"
        try:
            check_fits(prop, netlist, None)
        except PropertyError as error:
            return StopReason.UNSUPPORTED, error.message
        if isinstance(prop, PartialSort) and prop.stable:
            return StopReason.UNSUPPORTED, "lift does not take stable partial sorts (they depend on the tie rule)"
        bits = netlist.words * netlist.width
        if bits < self.min_input_bits:
            return StopReason.UNSUPPORTED, (f"the circuit has {bits} input bits, few enough to simulate every input; "
                                            f"lift takes circuits of {self.min_input_bits} input bits or more")
        return None

    def check(self, netlist: Netlist, prop: Property, budget: Budget, options: Options = Options()) -> Verdict:
        started = time.perf_counter()
        refused = refused_verdict(self, netlist, prop, options, started)
        if refused is not None:
            return refused
        circuit: GateCircuit = netlist  # type: ignore[assignment]
        lifting = lift_circuit(circuit, prop, budget)
        if lifting.lifted:
            return lifted_verdict(lifting, circuit, prop, budget, self.network_engine, started)
        figures = {"lift": lifting.figures, "blocks": [block.to_json() for block in lifting.blocks],
                   "rejected": [list(pair) for pair, _ in lifting.rejected]}
        not_lifted = (f"the circuit does not lift to a comparator network with blocks comparing "
                      f"{lifting.order.describe()} words: {lifting.failure}")
        found = None if lifting.timed_out else quick_refute(circuit, prop, budget, self.samples)
        seconds = time.perf_counter() - started
        if found is not None:
            scope = (f"{not_lifted}; this input of {circuit.words} words of {circuit.width} bits, found among "
                     f"corner-case and random inputs and recomputed with the circuit, breaks the property")
            return Verdict(Status.REFUTED, self.name, prop, StopReason.COUNTEREXAMPLE, scope, seconds, found, figures)
        stop = StopReason.TIMEOUT if lifting.timed_out or budget.expired() else StopReason.UNSUPPORTED
        tried = "" if lifting.timed_out else f"; {self.samples:,} random and corner-case inputs passed"
        return Verdict(Status.UNKNOWN, self.name, prop, stop, f"nothing was proved: {not_lifted}{tried}", seconds,
                       None, figures)
