"""``auto`` for gate circuits: simulate first, lift what lifts, decompose what remains, within the budget.

The steps, each sound on its own, stop at the first that decides:

1. **simulation** of corner cases and seeded random inputs (bit-parallel):
   most broken circuits are refuted in milliseconds;
2. **lifting** (:mod:`sortcheck.engines.gates.lifting.engine`): when the circuit is, block
   by proved block, a comparator network, the network is checked by the
   comparator engines (0-1 principle) -- a 32 x 16-bit sorter becomes a
   32-channel network question;
3. **exhaustive simulation** when the circuit has at most
   ``exhaustive_bits`` input bits;
4. **threshold SAT** (:mod:`sortcheck.engines.gates.threshold.sat`) for the rest, in a
   process that is ended at the deadline, or, when the check is run with
   worker processes or a cluster (:meth:`GatePipeline.staged`), as pieces of
   threshold ranges on them.

The verdict names the engine of the step that decided; ``figures["steps"]``
and the engine reason say what every step before it did.

>>> from sortcheck.engines.base import Budget
>>> from sortcheck.model import Sorts
>>> from sortcheck.model.counting import counting_sorter
>>> from sortcheck.model.families import merge_exchange
>>> from sortcheck.model.lowering import lower_network
>>> pipeline = GatePipeline()
>>> verdict = pipeline.check(lower_network(merge_exchange(6), 8, style="mux"), Sorts(), Budget())
>>> verdict.status.value, verdict.engine, verdict.figures["method"]
('proved', 'lift', 'lift')
>>> verdict = pipeline.check(counting_sorter(6, 5), Sorts(), Budget())
>>> verdict.status.value, verdict.engine, verdict.figures["method"]
('proved', 'sat', 'threshold-sat')
"""

from __future__ import annotations

import dataclasses
import time
from typing import Any

from sortcheck.engines.base import Budget, Options, Status, StopReason, Verdict
from sortcheck.engines.gates.threshold.sat import MIN_SPLIT_GATES, GateSatEngine
from sortcheck.engines.gates.simulation import SimulateEngine, quick_refute
from sortcheck.engines.runners.isolation import check_in_child
from sortcheck.engines.gates.lifting.engine import LiftEngine, lift, lifted_verdict
from sortcheck.engines.runners.pieces import Staged
from sortcheck.model import GateCircuit, Netlist, Property

#: Random inputs simulated in step 1.
SAMPLES = 1 << 14


class GatePipeline:
    """The steps of ``auto`` for gate circuits (see the module text).

    Parameters
    ----------
    exhaustive_bits : int
        Circuits with at most this many input bits are simulated on every
        input when they do not lift.
    samples : int
        Random inputs of step 1.
    split_gates : int
        Step 4 splits into pieces (:meth:`staged`) for circuits of at least
        this many gates.
    """

    name = "auto"
    cooperative = True

    def __init__(self, exhaustive_bits: int = 24, samples: int = SAMPLES, split_gates: int = MIN_SPLIT_GATES):
        self.exhaustive_bits = exhaustive_bits
        self.samples = samples
        self.simulate = SimulateEngine(max_exhaustive_bits=exhaustive_bits)
        self.lift = LiftEngine()
        self.sat = GateSatEngine(samples=0, min_split_gates=split_gates)  # step 1 has simulated already

    def refusal(self, netlist: Netlist, prop: Property, options: Options = Options()
                ) -> tuple[StopReason, str] | None:
        if not isinstance(netlist, GateCircuit):
            return StopReason.UNSUPPORTED, "these steps are for gate circuits"
        return None

    def check(self, netlist: Netlist, prop: Property, budget: Budget, options: Options = Options()) -> Verdict:
        started = time.perf_counter()
        circuit: GateCircuit = netlist  # type: ignore[assignment]
        steps: list[str] = []
        verdict = self._before_sat(circuit, prop, budget, options, steps)
        if verdict is None:
            verdict = self._threshold_sat(circuit, prop, budget, options, steps)
        return _with_steps(verdict, steps, time.perf_counter() - started)

    def staged(self, netlist: Netlist, prop: Property, budget: Budget, options: Options = Options()
               ) -> Verdict | Staged:
        """Steps 1-3 here; then step 4 as pieces of threshold ranges when it splits, else the whole check.

        A :class:`~sortcheck.engines.runners.pieces.Staged` holds the threshold SAT
        engine's pieces and turns their combined verdict into this check's
        (with the steps before it).

        >>> from sortcheck.model import Sorts
        >>> from sortcheck.model.counting import counting_sorter
        >>> staged = GatePipeline(exhaustive_bits=0, split_gates=0).staged(counting_sorter(4, 3), Sorts(), Budget())
        >>> staged.engine.name, staged.pieces[0]
        ('sat', {'kind': 'thresholds', 'low': 0, 'high': 1})
        """
        started = time.perf_counter()
        circuit: GateCircuit = netlist  # type: ignore[assignment]
        steps: list[str] = []
        verdict = self._before_sat(circuit, prop, budget, options, steps)
        pieces = None if verdict is not None or budget.expired() else self.sat.pieces(circuit, prop, options)
        if verdict is None and (not pieces or len(pieces) < 2):
            verdict = self._threshold_sat(circuit, prop, budget, options, steps)
        if verdict is not None:
            return _with_steps(verdict, steps, time.perf_counter() - started)

        def finish(combined: Verdict) -> Verdict:
            whole = self._decided(self.sat.whole_verdict(circuit, prop, combined, options), "threshold-sat")
            return _with_steps(whole, steps, time.perf_counter() - started)

        return Staged(self.sat, pieces, finish)

    def _before_sat(self, circuit: GateCircuit, prop: Property, budget: Budget, options: Options,
                    steps: list[str]) -> Verdict | None:
        """Steps 1-3: the verdict of the first that decides, else None."""
        verdict = self._simulation(circuit, prop, budget, steps)
        if verdict is None and self.lift.refusal(circuit, prop, options) is None:
            verdict = self._lifting(circuit, prop, budget, steps)
        if verdict is None and sum(circuit.widths) <= self.exhaustive_bits and not budget.expired():
            verdict = self._decided(self.simulate.check(circuit, prop, budget, options), "exhaustive simulation")
        return verdict

    def _simulation(self, circuit: GateCircuit, prop: Property, budget: Budget, steps: list[str]) -> Verdict | None:
        started = time.perf_counter()
        example = quick_refute(circuit, prop, budget, samples=self.samples)
        seconds = time.perf_counter() - started
        if example is None:
            steps.append(f"simulation of corner cases and {self.samples:,} random inputs found no failure "
                         f"({seconds:.2f} s)")
            return None
        steps.append(f"simulation found a failing input ({seconds:.2f} s)")
        scope = ("this input breaks the property: found by simulating corner cases and random inputs, recomputed "
                 "with the circuit and re-checked")
        return Verdict(Status.REFUTED, "simulate", prop, StopReason.COUNTEREXAMPLE, scope, seconds, example,
                       {"method": "simulation", "samples": self.samples})

    def _lifting(self, circuit: GateCircuit, prop: Property, budget: Budget, steps: list[str]) -> Verdict | None:
        started = time.perf_counter()
        lifting = lift(circuit, prop, budget)
        if not lifting.lifted:
            steps.append(f"lifting stopped after {len(lifting.blocks)} proved min/max blocks: {lifting.failure} "
                         f"({time.perf_counter() - started:.2f} s)")
            if lifting.timed_out:
                scope = f"the time budget ran out while lifting ({lifting.failure}); nothing is proved"
                return Verdict(Status.UNKNOWN, "lift", prop, StopReason.TIMEOUT, scope,
                               time.perf_counter() - started, None, {"method": "lift", "lift": lifting.figures})
            return None
        verdict = lifted_verdict(lifting, circuit, prop, budget, started=started)
        steps.append(f"lifted to a comparator network of {lifting.network.channels} channels and "
                     f"{lifting.network.size} comparators ({len(lifting.blocks)} blocks proved min/max by SAT); "
                     f"the network check: {verdict.status.value} by {verdict.figures.get('network_engine')}")
        if verdict.status is Status.UNKNOWN and verdict.stop is not StopReason.TIMEOUT:
            return None  # the network engines gave up on it: try the gate engines
        return self._decided(verdict, "lift")

    def _threshold_sat(self, circuit: GateCircuit, prop: Property, budget: Budget, options: Options,
                       steps: list[str]) -> Verdict:
        if budget.expired():
            steps.append("no time was left for threshold SAT")
            return Verdict(Status.UNKNOWN, "auto", prop, StopReason.TIMEOUT,
                           "the time budget ran out before threshold SAT; nothing is proved", 0.0, None,
                           {"method": "none"})
        if budget.deadline is None:
            verdict = self.sat.check(circuit, prop, budget, options)
        else:
            verdict = check_in_child(self.sat, circuit, prop, budget, options)
        return self._decided(verdict, verdict.figures.get("method", "threshold-sat"))

    @staticmethod
    def _decided(verdict: Verdict, method: str) -> Verdict:
        figures: dict[str, Any] = {**verdict.figures, "method": verdict.figures.get("method", method)}
        return dataclasses.replace(verdict, figures=figures)


def _with_steps(verdict: Verdict, steps: list[str], seconds: float) -> Verdict:
    figures = {**verdict.figures, "steps": [*steps]}
    if verdict.figures.get("method") not in ("simulation", "lift"):
        figures["steps"].append(f"{verdict.engine} decided: {verdict.status.value}")
    reason = "auto for gate circuits: " + "; ".join(figures["steps"])
    return dataclasses.replace(verdict, figures=figures, seconds=seconds, engine_reason=reason)
