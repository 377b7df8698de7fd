"""``auto`` for gate circuits: a portfolio of strategies under one budget.

Simulation of corner cases and seeded random inputs comes first (most broken
circuits are refuted in milliseconds).  Then the strategies, each sound on
its own, in this order:

``lift``
    the circuit lifted to a comparator network, by what its signals compute
    (SAT sweeping) or block by block
    (:mod:`sortcheck.engines.gates.lifting.engine`), and the network checked
    by the comparator engines (0-1 principle): a synthesized 32 x 16-bit
    sorter becomes a 32-channel network question;
``bdd``
    the threshold conditions as BDDs (:mod:`sortcheck.engines.gates.bdd`),
    for circuits of short words (at most ``bdd_width`` bits: counting
    sorters and other circuits with no comparators); left out when
    certificates are asked for, since threshold SAT then proves the same
    circuits with DRUP proofs;
``exhaustive``
    every input simulated, when the circuit has at most ``exhaustive_bits``
    input bits;
``threshold-sat``
    threshold decomposition with a SAT solver
    (:mod:`sortcheck.engines.gates.threshold.sat`), the one that always applies.

:meth:`GatePipeline.check` runs them one after another until one decides
(proved or refuted) or the budget runs out.  When the check runs with worker
processes or a cluster (:meth:`GatePipeline.staged`), ``lift`` and ``bdd`` race
on two of them (the first to decide ends the other: a circuit that does not
lift costs no more than its BDDs), and threshold SAT, if still needed, is
split into pieces of threshold ranges.

The verdict names the engine of the strategy that decided;
``figures["steps"]`` and the engine reason say what every step did.

>>> from sortcheck.engines.base import Budget
>>> from sortcheck.model import Sorts
>>> from sortcheck.model.counting import counting_sorter
>>> from sortcheck.model.families import merge_exchange
>>> from sortcheck.model.lowering import lower_network
>>> pipeline = GatePipeline()
>>> verdict = pipeline.check(lower_network(merge_exchange(6), 8, style="mux"), Sorts(), Budget())
>>> verdict.status.value, verdict.engine, verdict.figures["method"]
('proved', 'lift', 'lift')
>>> verdict = pipeline.check(counting_sorter(6, 3), Sorts(), Budget())
>>> verdict.status.value, verdict.engine, verdict.figures["method"]
('proved', 'bdd', 'bdd')
>>> verdict = GatePipeline(bdd_width=0).check(counting_sorter(6, 5), Sorts(), Budget())
>>> verdict.status.value, verdict.engine, verdict.figures["method"]
('proved', 'sat', 'threshold-sat')
"""

from __future__ import annotations

import dataclasses
import time
from typing import Any, Sequence

from sortcheck.engines.base import Budget, Options, Status, StopReason, Verdict
from sortcheck.engines.gates.bdd.engine import DEFAULT_NODE_LIMIT, BddEngine
from sortcheck.engines.gates.lifting.engine import LiftEngine, lift, lifted_verdict
from sortcheck.engines.gates.simulation import SimulateEngine, quick_refute
from sortcheck.engines.gates.threshold.sat import MIN_SPLIT_GATES, GateSatEngine
from sortcheck.engines.runners.isolation import check_in_child, may_start_children
from sortcheck.engines.runners.pieces import Race, Staged
from sortcheck.model import GateCircuit, Netlist, Property

#: Random inputs of the first step.
SAMPLES = 1 << 14

#: Circuits of words of at most this many bits are given to the BDD strategy (2^width thresholds each).
BDD_WIDTH = 6

#: The strategies that race on worker processes.
RACED = ("lift", "bdd")


class GatePipeline:
    """The strategies of ``auto`` for gate circuits (see the module text).

    Parameters
    ----------
    exhaustive_bits : int
        Circuits with at most this many input bits are simulated on every
        input when no strategy before decides.
    samples : int
        Random inputs of the first step.
    split_gates : int
        Threshold SAT splits into pieces (:meth:`staged`) for circuits of at
        least this many gates.
    bdd_width : int
        The BDD strategy takes circuits of words of at most this many bits.
    bdd_node_limit : int
        Live BDD nodes each variable order may reach.
    """

    name = "auto"
    cooperative = True

    def __init__(self, exhaustive_bits: int = 24, samples: int = SAMPLES, split_gates: int = MIN_SPLIT_GATES,
                 bdd_width: int = BDD_WIDTH, bdd_node_limit: int = DEFAULT_NODE_LIMIT):
        self.exhaustive_bits = exhaustive_bits
        self.samples = samples
        self.bdd_width = bdd_width
        self.simulate = SimulateEngine(max_exhaustive_bits=exhaustive_bits)
        self.lift = LiftEngine()
        self.bdd = BddEngine(node_limit=bdd_node_limit, samples=0)  # the first step has simulated already
        self.sat = GateSatEngine(samples=0, min_split_gates=split_gates)

    def refusal(self, netlist: Netlist, prop: Property, options: Options = Options()
                ) -> tuple[StopReason, str] | None:
        if not isinstance(netlist, GateCircuit):
            return StopReason.UNSUPPORTED, "these steps are for gate circuits"
        return None

    def strategies(self, circuit: GateCircuit, prop: Property, options: Options = Options()) -> list[str]:
        """The strategies that apply to ``circuit`` and ``prop``, in the order they are tried."""
        names = []
        if self.lift.refusal(circuit, prop, options) is None:
            names.append("lift")
        if (circuit.width <= self.bdd_width and not options.certify  # threshold SAT certifies what BDDs would prove
                and self.bdd.refusal(circuit, prop, options) is None):
            names.append("bdd")
        if sum(circuit.widths) <= self.exhaustive_bits:
            names.append("exhaustive")
        return names + ["threshold-sat"]

    def check(self, netlist: Netlist, prop: Property, budget: Budget, options: Options = Options()) -> Verdict:
        started = time.perf_counter()
        circuit: GateCircuit = netlist  # type: ignore[assignment]
        steps: list[str] = []
        verdict = self._simulation(circuit, prop, budget, steps)
        for name in self.strategies(circuit, prop, options) if verdict is None else ():
            verdict = self.run_strategy(name, circuit, prop, budget, options)
            if self._ends(verdict, steps):
                break
        return _with_steps(verdict, steps, time.perf_counter() - started)

    def staged(self, netlist: Netlist, prop: Property, budget: Budget, options: Options = Options()
               ) -> Verdict | Staged | Race:
        """Simulation here; then ``lift`` and ``bdd`` raced on workers; then the rest, threshold SAT in pieces.

        >>> from sortcheck.model import Sorts
        >>> from sortcheck.model.counting import counting_sorter
        >>> staged = GatePipeline(exhaustive_bits=0, split_gates=0).staged(counting_sorter(4, 3), Sorts(), Budget())
        >>> [piece["name"] for piece in staged.pieces]
        ['lift', 'bdd']
        >>> verdict = staged.finish([None, GatePipeline().run_strategy("bdd", counting_sorter(4, 3), Sorts(),
        ...                                                              Budget())])
        >>> verdict.status.value, verdict.engine
        ('proved', 'bdd')
        """
        started = time.perf_counter()
        circuit: GateCircuit = netlist  # type: ignore[assignment]
        steps: list[str] = []
        verdict = self._simulation(circuit, prop, budget, steps)
        if verdict is not None:
            return _with_steps(verdict, steps, time.perf_counter() - started)
        names = self.strategies(circuit, prop, options)
        raced = [name for name in names if name in RACED]
        rest = [name for name in names if name not in raced]
        if len(raced) < 2:
            return self._sequence(circuit, prop, budget, options, names, steps, started)

        def after_race(verdicts: list[Verdict | None]) -> Verdict | Staged:
            decided = next((v for v in verdicts if v is not None and v.status is not Status.UNKNOWN), None)
            for name, one in zip(raced, verdicts):
                if one is None:
                    steps.append(f"{name} was stopped: " + ("another strategy decided first" if decided is not None
                                                            else "the time budget ran out"))
                else:
                    self._ends(one, steps)
            if decided is not None:
                return _with_steps(decided, steps, time.perf_counter() - started)
            timed_out = next((v for v in verdicts if v is not None and v.stop is StopReason.TIMEOUT), None)
            if timed_out is not None or budget.expired():
                return _with_steps(timed_out or _out_of_time(prop, "after lifting and BDDs"), steps,
                                   time.perf_counter() - started)
            return self._sequence(circuit, prop, budget, options, rest, steps, started)

        return Race(self, [{"kind": "strategy", "name": name} for name in raced], after_race)

    def check_piece(self, netlist: Netlist, prop: Property, piece: dict, budget: Budget, options: Options = Options()
                    ) -> Verdict:
        """One strategy of a race (a piece ``{"kind": "strategy", "name": ...}``), run whole."""
        return self.run_strategy(piece["name"], netlist, prop, budget, options)  # type: ignore[arg-type]

    def run_strategy(self, name: str, circuit: GateCircuit, prop: Property, budget: Budget,
                     options: Options = Options()) -> Verdict:
        """The verdict of one strategy; ``figures["step"]`` says what it did, ``unknown`` when it did not decide."""
        started = time.perf_counter()
        if budget.expired():
            verdict = _out_of_time(prop, f"before {name}")
        elif name == "lift":
            verdict = self._lifting(circuit, prop, budget)
        elif name == "bdd":
            verdict = self._bdd(circuit, prop, budget, options)
        elif name == "exhaustive":
            verdict = self.simulate.check(circuit, prop, budget, options)
            verdict = _with_step(verdict, "exhaustive simulation",
                                 f"exhaustive simulation of all 2^{sum(circuit.widths)} inputs: {verdict.status.value}")
        elif name == "threshold-sat":
            verdict = self._threshold_sat(circuit, prop, budget, options)
        else:
            raise ValueError(f"no strategy named {name!r}")
        step = f"{verdict.figures['step']} ({time.perf_counter() - started:.2f} s)"
        return dataclasses.replace(verdict, figures={**verdict.figures, "step": step})

    def _sequence(self, circuit: GateCircuit, prop: Property, budget: Budget, options: Options, names: Sequence[str],
                  steps: list[str], started: float) -> Verdict | Staged:
        """``names`` one after another in this process, threshold SAT (the last) as pieces when it splits."""
        verdict = _out_of_time(prop, "before threshold SAT")
        for name in names:
            if name == "threshold-sat" and not budget.expired():
                pieces = self.sat.pieces(circuit, prop, options)
                if pieces and len(pieces) >= 2:
                    def finish(combined: Verdict) -> Verdict:
                        whole = self.sat.whole_verdict(circuit, prop, combined, options)
                        whole = _with_step(whole, "threshold-sat", f"threshold SAT in {len(pieces)} pieces: "
                                                                   f"{whole.status.value}")
                        self._ends(whole, steps)
                        return _with_steps(whole, steps, time.perf_counter() - started)

                    return Staged(self.sat, pieces, finish)
            verdict = self.run_strategy(name, circuit, prop, budget, options)
            if self._ends(verdict, steps):
                break
        return _with_steps(verdict, steps, time.perf_counter() - started)

    @staticmethod
    def _ends(verdict: Verdict, steps: list[str]) -> bool:
        """Record what a strategy did; whether that ends the check (it decided, or the time ran out)."""
        steps.append(verdict.figures.get("step", f"{verdict.engine}: {verdict.status.value}"))
        return verdict.status is not Status.UNKNOWN or verdict.stop is StopReason.TIMEOUT

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

    def _lifting(self, circuit: GateCircuit, prop: Property, budget: Budget) -> Verdict:
        started = time.perf_counter()
        lifting = lift(circuit, prop, budget)
        if not lifting.lifted:
            step = f"lifting stopped after {len(lifting.blocks)} comparators: {lifting.failure}"
            stop = StopReason.TIMEOUT if lifting.timed_out else StopReason.UNSUPPORTED
            scope = (f"the time budget ran out while lifting ({lifting.failure}); nothing is proved"
                     if lifting.timed_out else f"the circuit did not lift to a comparator network: {lifting.failure}")
            return Verdict(Status.UNKNOWN, "lift", prop, stop, scope, time.perf_counter() - started, None,
                           {"method": "lift", "lift": lifting.figures, "step": step})
        verdict = lifted_verdict(lifting, circuit, prop, budget, started=started)
        how = ("found from what its signals compute and proved equal by SAT sweeping" if lifting.method == "sweeping"
               else f"{len(lifting.blocks)} blocks proved min/max by SAT")
        step = (f"lifted to a comparator network of {lifting.network.channels} channels and "
                f"{lifting.network.size} comparators ({how}); the network check: {verdict.status.value} by "
                f"{verdict.figures.get('network_engine')}")
        if verdict.status is Status.UNKNOWN and verdict.stop is not StopReason.TIMEOUT:
            verdict = dataclasses.replace(verdict, stop=StopReason.UNSUPPORTED)  # the gate strategies may still decide
        return _with_step(verdict, "lift", step)

    def _bdd(self, circuit: GateCircuit, prop: Property, budget: Budget, options: Options) -> Verdict:
        if budget.deadline is None or not may_start_children():  # a worker is ended by its parent instead
            verdict = self.bdd.check(circuit, prop, budget, options)
        else:
            verdict = check_in_child(self.bdd, circuit, prop, budget, options)
        if verdict.status is Status.UNKNOWN and verdict.stop is StopReason.SIZE_LIMIT:
            step = (f"BDDs of the threshold conditions outgrew the node limit of {self.bdd.node_limit:,} under every "
                    f"variable order tried")
            return _with_step(dataclasses.replace(verdict, stop=StopReason.UNSUPPORTED), "bdd", step)
        step = f"BDDs of the threshold conditions: {verdict.status.value}"
        if verdict.status is not Status.UNKNOWN:
            step += f" (variable order {verdict.figures.get('order')}, {verdict.figures.get('backend', 'BDDs')})"
        return _with_step(verdict, "bdd", step)

    def _threshold_sat(self, circuit: GateCircuit, prop: Property, budget: Budget, options: Options) -> Verdict:
        if budget.deadline is None or not may_start_children():
            verdict = self.sat.check(circuit, prop, budget, options)
        else:
            verdict = check_in_child(self.sat, circuit, prop, budget, options)
        return _with_step(verdict, "threshold-sat", f"threshold SAT: {verdict.status.value}")


def _with_step(verdict: Verdict, method: str, step: str) -> Verdict:
    """The verdict with ``figures["method"]`` (the engine's own when it names one) and ``figures["step"]``."""
    figures: dict[str, Any] = {**verdict.figures, "method": verdict.figures.get("method", method), "step": step}
    return dataclasses.replace(verdict, figures=figures)


def _out_of_time(prop: Property, where: str) -> Verdict:
    return Verdict(Status.UNKNOWN, "auto", prop, StopReason.TIMEOUT,
                   f"the time budget ran out {where}; nothing is proved", 0.0, None,
                   {"method": "none", "step": f"no time was left {where}"})


def _with_steps(verdict: Verdict, steps: list[str], seconds: float) -> Verdict:
    figures = {key: value for key, value in verdict.figures.items() if key != "step"}
    figures["steps"] = [*steps]
    reason = "auto for gate circuits: " + "; ".join(steps)
    return dataclasses.replace(verdict, figures=figures, seconds=seconds, engine_reason=reason)
