"""The ``lift`` engine: a gate circuit proved to be a comparator network, then the network checked.

:func:`lift` tries both ways of lifting: first by what the circuit's signals
compute, proved by SAT sweeping (:mod:`~sortcheck.engines.gates.lifting.functional`,
which survives synthesis and optimisation), then block by proved block
(:mod:`~sortcheck.engines.gates.lifting.structural`).  :func:`lifted_verdict`
then checks the network with the comparator engines and turns the verdict back
into one about the circuit; every counterexample is recomputed with the
circuit.  ``encodings/structural-lifting.md`` and
``encodings/gate-sat-sweeping.md`` give the argument that the network's
verdict is the circuit's.

>>> from sortcheck.model.families import merge_exchange
>>> from sortcheck.model.lowering import lower_network
>>> from sortcheck.model import Sorts
>>> lifting = lift(lower_network(merge_exchange(4), 3, style="mux"), Sorts())
>>> lifting.network.layers == merge_exchange(4).layers, lifting.method
(True, 'sweeping')
"""

from __future__ import annotations

import dataclasses
import time

from sortcheck.engines.base import Budget, Options, Status, StopReason, Verdict, refused_verdict
from sortcheck.engines.gates.simulation import counterexample_of, quick_refute
from sortcheck.engines.gates.lifting.functional import lift_by_function
from sortcheck.engines.gates.lifting.result import Lifting, circuit_input, network_property
from sortcheck.engines.gates.lifting.structural import lift_circuit
from sortcheck.errors import PropertyError
from sortcheck.model import ComparatorNetwork, GateCircuit, Netlist, PartialSort, Property, Sorts, check_fits


def lift(circuit: GateCircuit, prop: Property | None = None, budget: Budget = Budget()) -> Lifting:
    """The comparator network ``circuit`` is: by function and SAT sweeping, else block by block.

    When both fail the result is the functional attempt's, with the block
    search's reason added to ``failure``; ``figures["attempts"]`` says what
    each way found.
    """
    prop = prop or circuit.claim or Sorts()
    functional = lift_by_function(circuit, prop, budget)
    if functional.lifted or functional.timed_out or budget.expired():
        return functional
    blocks = lift_circuit(circuit, prop, budget)
    attempts = {"sweeping": functional.failure, "blocks": blocks.failure}
    if blocks.lifted:
        return dataclasses.replace(blocks, figures={**blocks.figures, "attempts": attempts})
    failure = f"by function: {functional.failure}; block by block: {blocks.failure}"
    return dataclasses.replace(blocks, failure=failure, figures={**blocks.figures, "attempts": attempts})


def _describe_lifting(lifting: Lifting, circuit: GateCircuit, prop: Property) -> str:
    width, n = circuit.width, circuit.words
    if lifting.method == "sweeping":
        sweep = lifting.figures.get("sweep", {})
        calls = sweep.get("sat_calls", 0) + sweep.get("window_calls", 0)
        text = (f"lifted to a comparator network of {n} channels and {len(lifting.blocks)} comparators "
                f"({lifting.order.describe()}), found from what the circuit's signals compute and proved equal to "
                f"the circuit on every input of {n} words of {width} bits by SAT sweeping ({sweep.get('cut_points', 0)} "
                f"cut points proved, {calls} SAT calls; per comparator in figures.blocks)")
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
        lifting = lift(circuit, prop, budget)
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
