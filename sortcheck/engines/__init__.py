"""Engines: one interface, chosen by name or by ``auto``.

>>> from sortcheck.model import ComparatorNetwork, Sorts
>>> verdict = check(ComparatorNetwork(2, ((0, 1),)), Sorts())
>>> verdict.status.value, verdict.engine
('proved', 'enumerate')
"""

from __future__ import annotations

import time

from sortcheck.engines.base import Budget, Counterexample, Engine, Options, Progress, Status, StopReason, Verdict
from sortcheck.engines.networks.enumeration import EnumerateEngine, redundant_comparators_by_enumeration
from sortcheck.engines.gates.portfolio import GatePipeline
from sortcheck.engines.gates.bdd import BddEngine
from sortcheck.engines.gates.threshold.sat import GateSatEngine
from sortcheck.engines.gates.simulation import SimulateEngine
from sortcheck.engines.gates.lifting.engine import LiftEngine
from sortcheck.engines.smt import SmtEngine
from sortcheck.engines.runners.isolation import check_in_child, needs_child
from sortcheck.engines.networks.redundancy import redundant_comparators as redundant_comparators_by_sat
from sortcheck.engines.networks.sat import SatEngine
from sortcheck.engines.sat_routing import RoutedSatEngine
from sortcheck.errors import UsageError
from sortcheck.model import DEFAULT_PROPERTY, ComparatorNetwork, GateCircuit, Netlist, Property, check_fits

#: Gate circuits with at most this many input bits are simulated on every input (2^24 inputs take
#: seconds; the simulate engine itself accepts up to 62 bits when asked for).
EXHAUSTIVE_GATE_BITS = 24

ENGINES: dict[str, Engine] = {
    "enumerate": EnumerateEngine(),
    "sat": RoutedSatEngine(SatEngine(), GateSatEngine()),
    "lift": LiftEngine(),
    "simulate": SimulateEngine(max_exhaustive_bits=EXHAUSTIVE_GATE_BITS),
    "smt": SmtEngine(),
    "bdd": BddEngine(),
}

#: ``auto`` simulates gate circuits on every input only up to this many input bits when they do not lift:
#: 2^24 inputs took 21 s where threshold SAT took 2.5 s (counting sorter of 8 x 3 bits, 2 loaded cores).
PIPELINE_EXHAUSTIVE_BITS = 20

#: What ``auto`` runs for gate circuits: simulation, lifting, BDDs, exhaustive simulation or threshold SAT.
GATE_PIPELINE = GatePipeline(exhaustive_bits=PIPELINE_EXHAUSTIVE_BITS)

#: Why ``auto`` takes each engine, in words for the report.
CHOICE_REASONS = {
    "enumerate": "it evaluates every 0-1 input the property speaks about, which covers all inputs (0-1 principle)",
    "sat": ("the network is beyond enumeration; the SAT engine splits it along its structure and proves each part "
            "(exhaustively when small, merges of two sorted runs on monotone profiles, else with a SAT solver), "
            "which covers all inputs (0-1 principle)"),
    "lift": ("the gate circuit is proved equal to a comparator network (by SAT sweeping, or block by block), which "
             "the comparator engines then check"),
    "auto": ("auto for gate circuits: simulation first, then lifting to a comparator network, BDDs of the threshold "
             "conditions for short words, exhaustive simulation of small inputs, threshold SAT"),
    "simulate": (f"it simulates the gate circuit on every input when there are at most 2^{EXHAUSTIVE_GATE_BITS}, "
                 "and on corner-case and random inputs otherwise (which can only refute)"),
    "smt": ("it proves the property with z3 on words: comparator networks at the chosen width, without the 0-1 "
            "principle; gate circuits at their own width, every gate encoded bit by bit (up to 2,000 gates)"),
}

#: Names accepted by ``--engine``.
ENGINE_NAMES = ("auto", *ENGINES)


def get_engine(name: str) -> Engine:
    """The engine registered under ``name``; the error lists what is available."""
    try:
        return ENGINES[name]
    except KeyError:
        raise UsageError(f"unknown engine {name!r} (available: {', '.join(ENGINE_NAMES)})", "--engine") from None


def choose_engine(netlist: Netlist, prop: Property, options: Options = Options()
                  ) -> tuple[Engine | None, StopReason | None, str]:
    """Pick an engine for ``auto`` and say why.

    Returns the engine (None when none can take the check), the stop reason
    of the refusal (None when an engine was chosen) and the reason in words.
    """
    if isinstance(netlist, GateCircuit):
        return GATE_PIPELINE, None, CHOICE_REASONS["auto"]
    refusals = []
    for engine in ENGINES.values():
        refused = engine.refusal(netlist, prop, options)
        if refused is None:
            return engine, None, f"auto chose {engine.name}: {CHOICE_REASONS.get(engine.name, 'it takes this check')}"
        refusals.append(refused)
    stop = StopReason.SIZE_LIMIT if any(r[0] == StopReason.SIZE_LIMIT for r in refusals) else StopReason.UNSUPPORTED
    return None, stop, "; ".join(reason for _, reason in refusals)


def check(netlist: Netlist, prop: Property | None = None, engine: str = "auto",
          timeout: float | None = None, source: str | None = None, options: Options = Options(),
          progress: Progress | None = None) -> Verdict:
    """Check ``netlist`` for ``prop`` (default: what the netlist claims, else ``sorts``).

    Parameters
    ----------
    netlist : ComparatorNetwork or GateCircuit
    prop : Property or None
    engine : str
        ``"auto"`` or a name in :data:`ENGINES`.
    timeout : float or None
        Seconds; the verdict is ``unknown`` when they run out, within about
        a second whatever the engine.
    source : str or None
        File name for error messages.
    options : Options
        Engine options (word width, counting).
    progress : callable or None
        Progress callback, see :class:`Budget`.

    Raises
    ------
    PropertyError
        When the property does not fit the netlist; every other outcome,
        including running out of time, is a :class:`Verdict`.
    """
    started = time.perf_counter()
    prop = prop or netlist.claim or DEFAULT_PROPERTY
    check_fits(prop, netlist, source)
    budget = Budget.of(timeout, progress)
    if engine == "auto":
        chosen, stop, reason = choose_engine(netlist, prop, options)
        if chosen is None:
            return Verdict(Status.UNKNOWN, "auto", prop, stop, f"nothing was checked: {reason}",
                           time.perf_counter() - started, engine_reason=reason)
    else:
        chosen, reason = get_engine(engine), f"requested with --engine {engine}"
    if needs_child(chosen, budget):
        verdict = check_in_child(chosen, netlist, prop, budget, options)
    else:
        verdict = chosen.check(netlist, prop, budget, options)
    return verdict.with_choice(verdict.engine_reason or reason, time.perf_counter() - started)


def redundant_comparators(network: ComparatorNetwork, budget: Budget) -> list[int] | None:
    """Indices of the comparators of ``network`` that never swap on any input, proved; None if undecided.

    >>> redundant_comparators(ComparatorNetwork(3, ((0, 1), (0, 1), (1, 2), (0, 2))), Budget())
    [1, 3]
    """
    if network.channels <= 40:
        return redundant_comparators_by_enumeration(network, budget)
    return redundant_comparators_by_sat(network, budget)


__all__ = [
    "Budget", "Counterexample", "Engine", "Options", "Progress", "Status", "StopReason", "Verdict", "ENGINES",
    "ENGINE_NAMES", "check", "choose_engine", "get_engine", "redundant_comparators",
]
