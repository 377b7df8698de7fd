"""The ``sat`` engine for gate circuits: simulation first, then threshold decomposition and SAT.

A check runs in two steps, each sound on its own:

1. **Simulation** (:func:`~sortcheck.engines.gates.simulation.quick_refute`):
   corner cases and seeded random inputs, bit-parallel; most broken circuits
   are refuted here in milliseconds.
2. **Threshold SAT** (:mod:`sortcheck.engines.gates.threshold.spec`): the circuit is
   encoded once, with a threshold word ``v`` and the violation "at threshold
   ``v`` the 0-1 vectors the property relates differ".  Narrow words
   (at most :data:`PER_THRESHOLD_WIDTH` bits) are asked one threshold at a
   time, by assumptions on ``v``'s bits in one incremental solver that keeps
   its learnt clauses; wider words in one call with ``v`` free.  Stable
   partial sorts are one miter call against a stable reference sorter.

The solver is glucose 4 (python-sat can interrupt it, so the deadline holds
inside a call).  Building the CNF of a large circuit cannot be interrupted,
so with a deadline the check runs in a process that can be ended
(``isolate``).  Every refutation is decoded to input words, recomputed with
the circuit and re-checked against :func:`sortcheck.model.semantics.violation`.

The check splits into *pieces*, ranges of thresholds in increasing order
(:meth:`GateSatEngine.pieces`), that :meth:`GateSatEngine.check_piece` checks
one at a time; together they cover what :meth:`GateSatEngine.check` covers.

With ``Options(certify=True)`` every question is solved as a self-contained
CNF of its own (the threshold fixed by unit clauses, not assumptions) with
DRUP proof logging, and the proved verdict carries the CNFs, the proofs and
their claims (:mod:`sortcheck.engines.gates.threshold.certificates`); such a check does
not split.  Without it nothing changes: one incremental solver, assumptions.

>>> from sortcheck.model import Sorts
>>> from sortcheck.model.counting import counting_sorter
>>> verdict = GateSatEngine().check(counting_sorter(4, 2), Sorts(), Budget())
>>> verdict.status.value, verdict.figures["method"], verdict.figures["thresholds_asked"]
('proved', 'threshold-sat', 4)
"""

from __future__ import annotations

import threading
import time
from dataclasses import dataclass, field, replace

from pysat.solvers import Solver

from sortcheck.engines.base import (Budget, CertificateMaterial, Options, Status, StopReason, UnsatCall, Verdict,
                                    refused_verdict)
from sortcheck.engines.gates.threshold.certificates import claim_clauses, claim_comments, claim_text, question_claim
from sortcheck.engines.gates.simulation import SEED, counterexample_of, quick_refute
from sortcheck.engines.gates.threshold.spec import ThresholdQuestion, refusal_of, threshold_question, variable_comments
from sortcheck.engines.networks.cnf import dimacs
from sortcheck.engines.runners.pieces import combine
from sortcheck.engines.networks.sat import PROOF_SOLVER, PROOF_SOLVERS
from sortcheck.engines.solving import INTERRUPTIBLE_SOLVER, solve_interruptibly
from sortcheck.errors import PropertyError
from sortcheck.model import GateCircuit, Merges, Netlist, PartialSort, Property, check_fits

#: Words of at most this many bits are asked one threshold at a time; wider ones with the threshold free.
#: Measured on a loaded 2-core machine (per threshold / threshold free): counting sorter 16 x 2 bits 4.0 s /
#: 9.8 s, 8 x 3 bits 0.34 s / 0.60 s; lowered merge exchange (and-or) 8 x 4 bits 4.7 s / 3.2 s, 8 x 6 bits
#: 50 s / 30 s.
PER_THRESHOLD_WIDTH = 3

#: Pieces a check splits into (about twice the cores of a small machine), at most one per threshold.
PIECES = 4

#: Circuits with fewer gates are checked whole: their threshold SAT takes well under a second (counting
#: sorter 8 x 3, 423 gates: 0.3 s), less than starting worker processes and encoding once per piece.
MIN_SPLIT_GATES = 500

#: Figures every piece of one check has alike.
SHARED_FIGURES = ("thresholds", "clauses", "variables", "circuit_nodes", "nodes_hashed_away", "all_nodes_hashed_away")

#: Seconds between looks at the budget while the solver runs.
POLL = 0.05

#: Random inputs simulated before any SAT call.
SIMULATION_SAMPLES = 1 << 14


@dataclass
class _Tally:
    """Figures gathered over one check."""

    sat_calls: int = 0
    thresholds_asked: int = 0
    thresholds_proved: int = 0
    solver_seconds: float = 0.0
    simulated: bool = False
    #: Certificate material, gathered only with ``Options(certify=True)``: one record per proved question.
    certify: bool = False
    calls: list = field(default_factory=list)

    def asked(self, question: ThresholdQuestion, values: tuple[int, int], seconds: float) -> None:
        """Count one SAT call on the thresholds ``values[0] .. values[1]`` that took ``seconds``."""
        self.solver_seconds += seconds
        self.sat_calls += 1
        self.thresholds_asked += values[1] - values[0] + 1 if question.method == "threshold" else 0


def _solve(solver: Solver, assumptions: list[int], budget: Budget) -> bool | None:
    """The solver's answer under ``assumptions``; None when the budget ran out (deadline or stop condition) first."""
    if budget.expired():
        return None
    if budget.deadline is None and budget.stopped is None:  # only an interruption of the run can stop it
        return solve_interruptibly(solver, assumptions, None)
    finished = threading.Event()

    def watch() -> None:  # interrupt at the deadline or when the stop condition turns true
        while not finished.wait(POLL):
            if budget.expired():
                solver.interrupt()
                return

    watcher = threading.Thread(target=watch, daemon=True)
    watcher.start()
    try:
        answer = solver.solve_limited(assumptions=assumptions, expect_interrupt=True)
    finally:
        finished.set()
        watcher.join()
    solver.clear_interrupt()
    return answer


def _domain(prop: Property) -> str:
    return "two's complement" if prop.signed else "unsigned"


class GateSatEngine:
    """Simulation, then threshold SAT (glucose 4), for gate circuits and every property.

    Parameters
    ----------
    solver : str
        python-sat solver name; only interruptible ones (glucose, minisat)
        keep deadlines inside a call.
    per_threshold_width : int
        Words of at most this many bits are asked one threshold at a time.
    samples : int
        Random inputs simulated first (0: no simulation).
    """

    name = "sat"
    cooperative = True
    #: Building the CNF of a large circuit cannot be interrupted: with a deadline, run in a killable process.
    isolate = True

    def __init__(self, solver: str = INTERRUPTIBLE_SOLVER, per_threshold_width: int = PER_THRESHOLD_WIDTH,
                 samples: int = SIMULATION_SAMPLES, seed: int = SEED, min_split_gates: int = MIN_SPLIT_GATES):
        self.solver, self.per_threshold_width, self.samples, self.seed = solver, per_threshold_width, samples, seed
        self.min_split_gates = min_split_gates

    def refusal(self, netlist: Netlist, prop: Property, options: Options = Options()
                ) -> tuple[StopReason, str] | None:
        if not isinstance(netlist, GateCircuit):
            return StopReason.UNSUPPORTED, "this sat engine checks gate circuits (comparator networks have their own)"
        try:
            check_fits(prop, netlist, None)
        except PropertyError as error:
            return StopReason.UNSUPPORTED, error.message
        refused = refusal_of(netlist, prop)
        return None if refused is None else (StopReason.UNSUPPORTED, refused)

    # -- whole checks -----------------------------------------------------------------------------------------

    def check(self, netlist: Netlist, prop: Property, budget: Budget, options: Options = Options()) -> Verdict:
        started = time.perf_counter()
        refused = refused_verdict(self, netlist, prop, options, started)
        if refused is not None:
            return refused
        circuit: GateCircuit = netlist  # type: ignore[assignment]
        tally = _Tally(simulated=self.samples > 0, certify=options.certify)
        if self.samples:
            found = quick_refute(circuit, prop, budget, self.samples, self.seed)
            if found is not None:
                figures = {"method": "simulation", "simulated": self.samples, "seed": self.seed,
                           "seconds": time.perf_counter() - started}
                scope = (f"this input of {circuit.words} words of {circuit.width} bits breaks the property (found by "
                         f"simulating corner cases and random inputs with seed {self.seed})")
                return Verdict(Status.REFUTED, self.name, prop, StopReason.COUNTEREXAMPLE, scope,
                               figures["seconds"], found, figures)
        if budget.expired():
            return self._unknown(circuit, prop, None, [], 0, tally, started)
        pieces = self.pieces(circuit, prop, options)
        if pieces:
            return self._in_pieces(circuit, prop, pieces, budget, options, started)
        question = threshold_question(circuit, prop)
        return self._run(circuit, prop, question, None, budget, tally, started)

    def _in_pieces(self, circuit: GateCircuit, prop: Property, pieces: list[dict], budget: Budget, options: Options,
                   started: float) -> Verdict:
        """The pieces one after another in this process, each in a solver of its own, and their combined verdict.

        A check that splits always runs as its pieces, so a run on one
        process reports the counterexample a run on workers reports (the one
        of the first refuted piece, found by the same solver on the same CNF).
        """
        verdicts: list[Verdict | None] = []
        for piece in pieces:
            if budget.expired():
                break
            verdicts.append(self.check_piece(circuit, prop, piece, budget, options))
            if verdicts[-1].status is not Status.PROVED:
                break
        verdicts += [None] * (len(pieces) - len(verdicts))
        combined = combine(self.name, prop, verdicts, "this process", time.perf_counter() - started)
        combined.figures["simulated"] = self.samples
        return self.whole_verdict(circuit, prop, combined, options)

    # -- pieces -----------------------------------------------------------------------------------------------

    def pieces(self, netlist: Netlist, prop: Property, options: Options = Options()) -> list[dict] | None:
        """Threshold ranges in increasing order, ``{"kind": "thresholds", "low": a, "high": b}`` (inclusive).

        None when the check does not split (a refused check, a stable
        partial sort, which is one miter, a check that gathers certificate
        material, whose questions are recorded by one engine run, or a
        circuit of fewer than :data:`MIN_SPLIT_GATES` gates, whose check takes
        less than starting worker processes).

        >>> from sortcheck.model import Sorts
        >>> from sortcheck.model.counting import counting_sorter
        >>> circuit = counting_sorter(3, 3, signed=True)
        >>> GateSatEngine().pieces(circuit, Sorts(signed=True)) is None  # too small to be worth it
        True
        >>> GateSatEngine(min_split_gates=0).pieces(circuit, Sorts(signed=True))[:2]
        [{'kind': 'thresholds', 'low': -4, 'high': -3}, {'kind': 'thresholds', 'low': -2, 'high': -1}]
        """
        if (self.refusal(netlist, prop, options) is not None or (isinstance(prop, PartialSort) and prop.stable)
                or options.certify or len(netlist.gates) < self.min_split_gates):  # type: ignore[union-attr]
            return None
        width = netlist.width  # type: ignore[union-attr]
        low = -(1 << (width - 1)) if prop.signed else 0
        total = 1 << width
        count = min(PIECES, total)
        bounds = [low + total * i // count for i in range(count + 1)]
        return [{"kind": "thresholds", "low": bounds[i], "high": bounds[i + 1] - 1} for i in range(count)]

    def check_piece(self, netlist: Netlist, prop: Property, piece: dict, budget: Budget,
                    options: Options = Options()) -> Verdict:
        """Threshold SAT on the thresholds ``piece["low"] .. piece["high"]`` only (no simulation)."""
        started = time.perf_counter()
        refused = refused_verdict(self, netlist, prop, options, started)
        if refused is not None:
            return refused
        circuit: GateCircuit = netlist  # type: ignore[assignment]
        if piece.get("kind") != "thresholds":
            raise ValueError(f"not a piece of this engine: {piece!r}")
        question = threshold_question(circuit, prop)
        if question.method != "threshold":
            raise ValueError("a stable partial sort does not split into pieces")
        lowest, highest = question.threshold_range()
        low, high = int(piece["low"]), int(piece["high"])
        if not lowest <= low <= high <= highest:
            raise ValueError(f"threshold range {low}..{high} is not inside {lowest}..{highest}")
        verdict = self._run(circuit, prop, question, (low, high), budget, _Tally(certify=options.certify), started)
        verdict.figures["shared"] = list(SHARED_FIGURES)  # the same in every piece: not summed when combined
        return verdict

    def whole_verdict(self, netlist: Netlist, prop: Property, verdict: Verdict, options: Options = Options()
                      ) -> Verdict:
        """A combined verdict of every piece in the words of one check (proved ones; others are kept)."""
        if verdict.status is not Status.PROVED or not isinstance(netlist, GateCircuit):
            return verdict
        figures = verdict.figures
        scope = (f"{self._inputs_text(netlist, prop)} is covered: threshold SAT proved {prop.describe()} for all "
                 f"2^{netlist.width} = {1 << netlist.width:,} thresholds, split into {figures.get('pieces')} pieces "
                 f"of threshold ranges on {figures.get('ran_on')} ({figures.get('sat_calls')} SAT calls, "
                 f"{self.solver})")
        return Verdict(verdict.status, verdict.engine, prop, verdict.stop, scope, verdict.seconds, None, figures,
                       verdict.engine_reason)

    # -- solving ----------------------------------------------------------------------------------------------

    def _questions(self, question: ThresholdQuestion, span: tuple[int, int] | None
                   ) -> tuple[list[tuple[tuple[int, int], list[int]]], str]:
        """The SAT calls to make: (threshold range, assumptions) each, and the mode's name."""
        if question.method == "miter":
            return [((0, 0), [])], "miter"
        whole = question.threshold_range()
        low, high = whole if span is None else span
        if question.width <= self.per_threshold_width:
            return [((v, v), question.threshold_literals(v)) for v in range(low, high + 1)], "per-threshold"
        assumptions = [] if (low, high) == whole else [question.within(low, high)]
        return [((low, high), assumptions)], "symbolic"

    def _run(self, circuit: GateCircuit, prop: Property, question: ThresholdQuestion, span: tuple[int, int] | None,
             budget: Budget, tally: _Tally, started: float) -> Verdict:
        calls, mode = self._questions(question, span)
        clauses = question.clauses()
        figures = self._figures(question, clauses, mode, tally)
        if tally.certify:
            return self._run_certified(circuit, prop, question, calls, (span, mode), budget, tally, started, figures)
        done: list[tuple[int, int]] = []
        with Solver(name=self.solver, bootstrap_with=clauses) as solver:
            for number, (values, assumptions) in enumerate(calls):
                budget.report(number, len(calls), "threshold SAT")
                began = time.perf_counter()
                answer = _solve(solver, assumptions, budget)
                tally.asked(question, values, time.perf_counter() - began)
                if answer is None:
                    return self._unknown(circuit, prop, question, done, len(calls), tally, started, figures)
                if answer:
                    return self._refuted(circuit, prop, question, solver.get_model(), tally, started, figures)
                done.append(values)
                tally.thresholds_proved += values[1] - values[0] + 1
        return self._proved(circuit, prop, question, span, mode, tally, started, figures)

    def _run_certified(self, circuit: GateCircuit, prop: Property, question: ThresholdQuestion, calls: list,
                       how: tuple, budget: Budget, tally: _Tally, started: float, figures: dict) -> Verdict:
        """:meth:`_run` with each question solved as its own CNF with DRUP proof logging, recorded when proved."""
        span, mode = how
        names = variable_comments(question, circuit, question.outputs)
        done: list[tuple[int, int]] = []
        for number, (values, assumptions) in enumerate(calls):
            budget.report(number, len(calls), "threshold SAT, with proofs")
            kind = ("miter" if question.method == "miter" else "fixed" if mode == "per-threshold"
                    else "range" if assumptions else "free")
            claim = question_claim(circuit, prop, question, kind, values)
            clauses = claim_clauses(question, claim)
            began = time.perf_counter()
            answer, model, proof = self._solve_with_proof(clauses, budget)
            tally.asked(question, values, time.perf_counter() - began)
            if answer is None:
                return self._unknown(circuit, prop, question, done, len(calls), tally, started, figures)
            if answer:
                return self._refuted(circuit, prop, question, model, tally, started, figures)
            text = dimacs(clauses, question.builder.pool, claim_comments(claim, names))
            tally.calls.append(UnsatCall(claim_text(claim), text, proof, self._proof_solver(), claim))
            done.append(values)
            tally.thresholds_proved += values[1] - values[0] + 1
        return self._proved(circuit, prop, question, span, mode, tally, started, figures)

    def _proof_solver(self) -> str:
        return self.solver if self.solver in PROOF_SOLVERS else PROOF_SOLVER

    def _solve_with_proof(self, clauses: list, budget: Budget) -> tuple[bool | None, list[int] | None, str]:
        """The answer on ``clauses`` alone, the model when satisfiable, and the DRUP proof text when not."""
        with Solver(name=self._proof_solver(), bootstrap_with=clauses, with_proof=True) as solver:
            answer = _solve(solver, [], budget)
            if answer is not False:
                return answer, solver.get_model() if answer else None, ""
            steps = list(solver.get_proof() or ())
        if not steps or steps[-1].strip() != "0":
            steps.append("0")  # a CNF refuted by unit propagation alone: the empty clause follows at once
        return False, None, "\n".join(steps) + "\n"

    # -- verdicts ---------------------------------------------------------------------------------------------

    def _figures(self, question: ThresholdQuestion, clauses: list, mode: str, tally: _Tally) -> dict:
        asked, encoded = question.circuit_nodes
        return {"method": "miter-sat" if question.method == "miter" else "threshold-sat", "mode": mode,
                "solver": self.solver, "thresholds": question.thresholds if question.threshold else 0,
                "clauses": len(clauses), "variables": question.builder.pool.top,
                "circuit_nodes": encoded, "nodes_hashed_away": asked - encoded,
                "all_nodes_hashed_away": question.builder.asked - question.builder.encoded}

    def _finish(self, figures: dict, tally: _Tally, started: float) -> dict:
        figures.update(sat_calls=tally.sat_calls, thresholds_asked=tally.thresholds_asked,
                       thresholds_proved=tally.thresholds_proved, solver_seconds=round(tally.solver_seconds, 4),
                       simulated=self.samples if tally.simulated else 0, seconds=time.perf_counter() - started)
        return figures

    def _inputs_text(self, circuit: GateCircuit, prop: Property) -> str:
        text = f"every input of {circuit.words} words of {circuit.width} bits ({_domain(prop)})"
        if isinstance(prop, Merges):
            text += (f" whose words 0..{prop.split - 1} and {prop.split}..{circuit.words - 1} each ascend "
                     f"(the others are outside the property)")
        return text

    def _proved(self, circuit: GateCircuit, prop: Property, question: ThresholdQuestion,
                span: tuple[int, int] | None, mode: str, tally: _Tally, started: float, figures: dict) -> Verdict:
        verdict = self._proved_plain(circuit, prop, question, span, mode, tally, started, figures)
        if not tally.certify:
            return verdict
        scope = verdict.scope + ("; each question was solved as a self-contained CNF with DRUP proof logging "
                                 f"({self._proof_solver()}) for the certificate")
        return replace(verdict, scope=scope, certificate=CertificateMaterial("drup", tuple(tally.calls)))

    def _proved_plain(self, circuit: GateCircuit, prop: Property, question: ThresholdQuestion,
                      span: tuple[int, int] | None, mode: str, tally: _Tally, started: float, figures: dict
                      ) -> Verdict:
        figures = self._finish(figures, tally, started)
        inputs = self._inputs_text(circuit, prop)
        if question.method == "miter":
            scope = (f"{inputs} is covered: a SAT miter ({self.solver}) proved the outputs equal, bit for bit, those "
                     f"of a stable reference sorter by the {prop.key_bits} most significant bits (odd-even "
                     f"transposition swapping only on a strictly greater key), so {prop.describe()} holds")
            return Verdict(Status.PROVED, self.name, prop, StopReason.COVERED, scope, figures["seconds"], None, figures)
        if mode == "per-threshold":
            how = (f"{tally.sat_calls} SAT calls, one per threshold, " +
                   ("each a CNF of its own" if tally.certify else "in one incremental solver"))
        else:
            how = "one SAT call with the threshold free" if span is None else "one SAT call for the range"
        if span is None:
            scope = (f"{inputs} is covered: threshold SAT proved {prop.describe()} for all 2^{circuit.width} = "
                     f"{question.thresholds:,} thresholds ({how}, {self.solver})")
            return Verdict(Status.PROVED, self.name, prop, StopReason.COVERED, scope, figures["seconds"], None, figures)
        scope = (f"only thresholds {span[0]}..{span[1]} of all 2^{circuit.width} are covered, for {inputs}: threshold "
                 f"SAT proved {prop.describe()} there ({how}, {self.solver}); the property needs every threshold")
        return Verdict(Status.PROVED, self.name, prop, StopReason.COVERED, scope, figures["seconds"], None, figures)

    def _refuted(self, circuit: GateCircuit, prop: Property, question: ThresholdQuestion, model: list[int],
                 tally: _Tally, started: float, figures: dict) -> Verdict:
        words, threshold = question.decode(model)
        found = counterexample_of(circuit, prop, words)
        figures = self._finish(figures, tally, started)
        where = "a miter against a stable reference sorter" if threshold is None else f"threshold v = {threshold}"
        scope = (f"this input of {circuit.words} words of {circuit.width} bits breaks the property (found by SAT at "
                 f"{where}, {self.solver})")
        return Verdict(Status.REFUTED, self.name, prop, StopReason.COUNTEREXAMPLE, scope, figures["seconds"], found,
                       figures)

    def _unknown(self, circuit: GateCircuit, prop: Property, question: ThresholdQuestion | None,
                 done: list[tuple[int, int]], calls: int, tally: _Tally, started: float,
                 figures: dict | None = None) -> Verdict:
        figures = self._finish(figures if figures is not None else {"method": "threshold-sat"}, tally, started)
        simulated = (f"{self.samples:,} simulated inputs found no failure; " if tally.simulated else "")
        if question is None or not done:
            covered = "no SAT call finished"
        elif question.method == "miter":
            covered = "the miter call did not finish"
        else:
            covered = (f"{tally.thresholds_proved:,} of the {question.thresholds:,} thresholds were proved "
                       f"({done[0][0]}..{done[-1][1]}) and the others were not")
        scope = f"the time budget ran out: {simulated}{covered}; nothing is proved for the circuit"
        return Verdict(Status.UNKNOWN, self.name, prop, StopReason.TIMEOUT, scope, figures["seconds"], None, figures)
