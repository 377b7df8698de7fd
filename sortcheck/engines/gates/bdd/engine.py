"""The ``bdd`` engine: a gate circuit's threshold conditions as BDDs, proved tautologies or refuted with the
failing input of fewest one bits.

For every threshold ``v`` the BDD of ``[y_i >= v]`` must equal what the
property asks of the 0-1 sort of ``[x_j >= v]`` (``encodings/gate-bdd-thresholds.md``).
The circuit's output BDDs are built once per variable order and shared by all
thresholds.  Orders are tried in turn under a node limit
(:func:`~sortcheck.engines.gates.bdd.orders.first_round`, then
:func:`~sortcheck.engines.gates.bdd.orders.second_round`); the first attempt
that completes decides.  When every attempt hits the limit the verdict is an
honest ``unknown`` (:attr:`StopReason.SIZE_LIMIT`, with the nodes reached);
when the budget runs out, ``unknown`` with :attr:`StopReason.TIMEOUT`.

A refutation is the failing input with the fewest one bits over every
threshold and output position: since the BDDs cover every input, that is
proved minimal, and the counterexample says so (``minimal=True``,
``ones``).  It is recomputed with the circuit and re-checked against the
reference semantics (:func:`~sortcheck.engines.gates.simulation.counterexample_of`).

One CUDD operation cannot be interrupted, so with a deadline the check runs
in a process that can be ended (``isolate``); the node limit also caps CUDD's
memory, which stops a single operation that grows far past it.

>>> from sortcheck.model import Sorts
>>> from sortcheck.model.counting import counting_sorter
>>> verdict = prove_with_bdds(counting_sorter(8, 2), Sorts(), Budget())
>>> verdict.status.value, verdict.figures["order"], verdict.figures["thresholds_checked"]
('proved', 'word-major', 4)
"""

from __future__ import annotations

import time
from dataclasses import replace
from typing import Sequence

from sortcheck.engines.base import Budget, Options, Status, StopReason, Verdict, refused_verdict
from sortcheck.engines.gates.bdd.attempt import Outcome, run_attempt
from sortcheck.engines.gates.bdd.manager import choose_backend, dd_available
from sortcheck.engines.gates.bdd.orders import first_round, second_round
from sortcheck.engines.gates.simulation import SEED, counterexample_of, quick_refute
from sortcheck.errors import PropertyError
from sortcheck.model import GateCircuit, Merges, Netlist, PartialSort, Property, check_fits

#: Live BDD nodes an attempt may reach.  A single CUDD operation that grows past it is stopped by the memory
#: cap (manager.BYTES_PER_NODE per node).  Measured on a loaded 2-core machine on the counting sorter of
#: 64 x 2 bits, which outgrows it in both fixed orders: the slowest single operation took 2.0 s, and the
#: four attempts (two at a sixteenth of the limit) 20 s in all.
DEFAULT_NODE_LIMIT = 2_000_000

BACKEND_NAMES = {"cudd": "CUDD", "python": "dd's pure-Python BDDs"}

#: Corner-case and random inputs simulated when every attempt outgrew the node limit (a broken circuit too
#: big for BDDs is then still refuted, without the fewest-ones claim).
FALLBACK_SAMPLES = 1 << 14


def _domain(prop: Property) -> str:
    return "two's complement" if prop.signed else "unsigned"


def _inputs_text(circuit: GateCircuit, prop: Property) -> str:
    text = f"every input of {circuit.words} words of {circuit.width} bits ({_domain(prop)})"
    if isinstance(prop, Merges):
        text += (f" whose words 0..{prop.split - 1} and {prop.split}..{circuit.words - 1} each ascend "
                 f"(the others are outside the property)")
    return text


def _thresholds_text(circuit: GateCircuit, prop: Property) -> str:
    text = f"all 2^{circuit.width} = {1 << circuit.width:,} thresholds v"
    if isinstance(prop, PartialSort):
        text += f" and all 2^{prop.key_bits} = {1 << prop.key_bits:,} key values u"
    return text


def stable_refusal(prop: Property) -> str | None:
    """Why the BDD conditions cannot state ``prop`` (None when they can)."""
    if isinstance(prop, PartialSort) and prop.stable:
        return ("a stable partial sort has no threshold conditions (whether words of equal keys keep their input "
                "order is invisible at any threshold); the sat engine checks it as a miter against a stable "
                "reference sorter")
    return None


def _figures(outcomes: list[Outcome], node_limit: int, started: float) -> dict:
    last = outcomes[-1]
    return {"method": "bdd", "backend": last.backend, "order": last.attempt.order, "node_limit": node_limit,
            "attempts": [outcome.summary() for outcome in outcomes],
            "peak_nodes": last.peak_nodes, "output_nodes": last.output_nodes,
            "thresholds_checked": last.thresholds_checked, "key_values_checked": last.keys_checked,
            "conditions": last.conditions, "failing_thresholds": len(last.thresholds_failed),
            "largest_violation_nodes": last.largest_violation, "reorderings": last.reorderings,
            "seconds": time.perf_counter() - started}


def _how(outcome: Outcome) -> str:
    order = outcome.attempt.order + (f", {outcome.reorderings} reorderings" if outcome.attempt.reorder else "")
    return (f"{BACKEND_NAMES[outcome.backend]}, variable order {order}, at most {outcome.peak_nodes:,} live nodes "
            f"counted, output BDDs of {outcome.output_nodes:,} nodes")


def _proved(circuit: GateCircuit, prop: Property, outcomes: list[Outcome], figures: dict) -> Verdict:
    outcome = outcomes[-1]
    key = ", and no two adjacent outputs have keys out of order at any key value" \
        if isinstance(prop, PartialSort) else ""
    scope = (f"{_inputs_text(circuit, prop)} is covered: BDDs of [y_i >= v] for {_thresholds_text(circuit, prop)} "
             f"equal what {prop.describe()} asks of the 0-1 sort of [x_j >= v]{key} ({outcome.conditions:,} "
             f"conditions, each a tautology; {_how(outcome)})")
    return Verdict(Status.PROVED, "bdd", prop, StopReason.COVERED, scope, figures["seconds"], None, figures)


def _refuted(circuit: GateCircuit, prop: Property, outcomes: list[Outcome], figures: dict) -> Verdict:
    outcome = outcomes[-1]
    failure = outcome.failure
    example = counterexample_of(circuit, prop, failure.raw)
    if outcome.complete:
        example = replace(example, minimal=True, ones=failure.ones)
        fewest = (f"; it has the fewest one bits ({failure.ones}) of all failing inputs, since the BDDs of "
                  f"{_thresholds_text(circuit, prop)} hold every failing input")
    else:
        fewest = (f"; the search for failing inputs with fewer one bits stopped ({outcome.note}), so it is not "
                  f"proved to have the fewest")
    scope = (f"this input of {circuit.words} words of {circuit.width} bits breaks the property (read off the BDD "
             f"at {failure.where}; {_how(outcome)}){fewest}")
    figures["counterexample_ones"] = failure.ones
    return Verdict(Status.REFUTED, "bdd", prop, StopReason.COUNTEREXAMPLE, scope, figures["seconds"], example,
                   figures)


def _unknown(circuit: GateCircuit, prop: Property, outcomes: list[Outcome], figures: dict) -> Verdict:
    last = outcomes[-1]
    if last.status == "timeout":
        scope = (f"the time budget ran out during the BDD check under order {last.attempt.order} "
                 f"({last.note}); nothing is proved for the circuit")
        return Verdict(Status.UNKNOWN, "bdd", prop, StopReason.TIMEOUT, scope, figures["seconds"], None, figures)
    reached = max(outcome.peak_nodes for outcome in outcomes)
    tried = ", ".join(f"{o.attempt.order} up to {o.attempt.node_limit:,}: {o.note}" for o in outcomes)
    figures["nodes_reached"] = reached
    simulated = (f"; {figures['simulated']:,} simulated inputs found no failure, which proves nothing"
                 if figures.get("simulated") else "")
    scope = (f"the BDDs outgrew the node limit under every variable order tried ({tried}){simulated}; nothing is "
             f"proved for {_inputs_text(circuit, prop)}")
    return Verdict(Status.UNKNOWN, "bdd", prop, StopReason.SIZE_LIMIT, scope, figures["seconds"], None, figures)


def _attempts(circuit: GateCircuit, prop: Property, budget: Budget, node_limit: int, backend: str,
              orders: Sequence[str] | None) -> list[Outcome]:
    """Run the attempts of both rounds until one does not stop at its node limit; every outcome, in order."""
    outcomes: list[Outcome] = []
    for attempt in first_round(node_limit, orders):
        outcomes.append(run_attempt(circuit, prop, attempt, backend, budget))
        if outcomes[-1].status != "size-limit":
            return outcomes
    progress = {outcome.attempt.order: outcome.progress.share() for outcome in outcomes}
    for attempt in second_round(node_limit, orders, progress):
        outcomes.append(run_attempt(circuit, prop, attempt, backend, budget))
        if outcomes[-1].status != "size-limit":
            return outcomes
    return outcomes


def _simulated(circuit: GateCircuit, prop: Property, outcomes: list[Outcome], figures: dict, samples: int,
               budget: Budget) -> Verdict | None:
    """The refutation by simulation after every attempt outgrew its limit; None when simulation finds nothing."""
    found = quick_refute(circuit, prop, budget, samples, SEED)
    if found is None:
        figures["simulated"] = samples
        return None
    figures.update(method="simulation", simulated=samples, seed=SEED)
    tried = ", ".join(sorted({outcome.attempt.order for outcome in outcomes}))
    scope = (f"this input of {circuit.words} words of {circuit.width} bits breaks the property (found by simulating "
             f"corner cases and random inputs with seed {SEED} after the BDDs outgrew the node limit of "
             f"{figures['node_limit']:,} under every order tried: {tried}); it is not proved to have the fewest one "
             f"bits")
    return Verdict(Status.REFUTED, "bdd", prop, StopReason.COUNTEREXAMPLE, scope, figures["seconds"], found, figures)


def prove_with_bdds(circuit: GateCircuit, prop: Property, budget: Budget = Budget(),
                    node_limit: int = DEFAULT_NODE_LIMIT, backend: str | None = None,
                    orders: Sequence[str] | None = None, samples: int = FALLBACK_SAMPLES) -> Verdict:
    """The BDD check of ``circuit`` for ``prop`` within ``budget`` and ``node_limit`` live nodes.

    ``prop`` must fit the circuit and not be a stable partial sort
    (:meth:`BddEngine.refusal`).  ``backend`` forces ``"cudd"`` or
    ``"python"`` (default: CUDD when it imports); ``orders`` names the
    variable orders to try (default:
    :data:`~sortcheck.engines.gates.bdd.orders.DEFAULT_ORDERS`; ``"dynamic"``
    only when asked for).  Runs in this process: the budget is consulted
    between BDD operations, and one operation is not interrupted (at the
    default node limit the slowest took 2.0 s on a loaded 2-core machine; with
    ``"dynamic"`` reordering inside one operation took 79 s), so a caller
    with a hard deadline runs it in a process it can end, as the engine's
    ``check`` does.  When every attempt outgrows ``node_limit``, ``samples``
    corner-case and random inputs are simulated (0: none), so that a broken
    circuit is still refuted; otherwise the verdict is ``unknown``.
    """
    started = time.perf_counter()
    backend = choose_backend(backend)
    outcomes = _attempts(circuit, prop, budget, node_limit, backend, orders)
    figures = _figures(outcomes, node_limit, started)
    status = outcomes[-1].status
    if status == "proved":
        return _proved(circuit, prop, outcomes, figures)
    if status == "refuted":
        return _refuted(circuit, prop, outcomes, figures)
    if status == "size-limit" and samples and not budget.expired():
        simulated = _simulated(circuit, prop, outcomes, figures, samples, budget)
        if simulated is not None:
            return simulated
    return _unknown(circuit, prop, outcomes, figures)


class BddEngine:
    """Threshold conditions as BDDs (CUDD through ``dd``), for gate circuits and every property but stable
    partial sorts.

    Parameters
    ----------
    node_limit : int
        Live BDD nodes an attempt may reach before it gives up.
    backend : str or None
        ``"cudd"``, ``"python"`` (dd's pure-Python BDDs) or None for CUDD when it imports.
    orders : sequence of str or None
        Variable orders to try; None for word-major and interleaved.
    samples : int
        Inputs simulated when every attempt outgrows the node limit (0: none).
    """

    name = "bdd"
    cooperative = True
    #: One CUDD operation cannot be interrupted: with a deadline the check runs in a process that can be ended.
    isolate = True

    def __init__(self, node_limit: int = DEFAULT_NODE_LIMIT, backend: str | None = None,
                 orders: Sequence[str] | None = None, samples: int = FALLBACK_SAMPLES):
        self.node_limit, self.backend, self.orders, self.samples = node_limit, backend, orders, samples

    def refusal(self, netlist: Netlist, prop: Property, options: Options = Options()
                ) -> tuple[StopReason, str] | None:
        if not isinstance(netlist, GateCircuit):
            return StopReason.UNSUPPORTED, "the bdd engine checks gate circuits (comparator networks have their own)"
        if not dd_available():
            return StopReason.UNSUPPORTED, "the bdd engine needs the dd package (pip install dd)"
        try:
            check_fits(prop, netlist, None)
        except PropertyError as error:
            return StopReason.UNSUPPORTED, error.message
        if netlist.words == 0 or netlist.width == 0:
            return StopReason.UNSUPPORTED, "the circuit has no input bits"
        refused = stable_refusal(prop)
        return None if refused is None else (StopReason.UNSUPPORTED, refused)

    def check(self, netlist: Netlist, prop: Property, budget: Budget, options: Options = Options()) -> Verdict:
        started = time.perf_counter()
        refused = refused_verdict(self, netlist, prop, options, started)
        if refused is not None:
            return refused
        verdict = prove_with_bdds(netlist, prop, budget, self.node_limit, self.backend, self.orders,  # type: ignore
                                  self.samples)
        return replace(verdict, seconds=time.perf_counter() - started)
