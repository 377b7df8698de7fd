"""Results of checking files: one :class:`FileResult` per file, and the exit status.

A file that cannot be read or does not fit its property becomes an ``error``
result; the run goes on with the next file.
"""

from __future__ import annotations

import time
import traceback
from dataclasses import dataclass, replace
from typing import Any, Iterable

from sortcheck.engines import Budget, Options, Progress, Status, StopReason, Verdict, check
from sortcheck.engines.base import interruption
from sortcheck.engines.runners.distribute import check_split
from sortcheck.errors import SortcheckError
from sortcheck.explain import (
    Diagnosis, Trace, diagnose_network, minimize_network_counterexample, permutation_of, trace_network,
)
from sortcheck.explain.gate_minimal import minimize_circuit_counterexample
from sortcheck.explain.lifted import lifted_view
from sortcheck.explain.trace import fits_in_report
from sortcheck.load import read_netlist
from sortcheck.load.verilog import Elaboration, design_scope
from sortcheck.model import ComparatorNetwork, DEFAULT_PROPERTY, GateCircuit, Netlist, Property, check_fits

#: Refuted gate circuits of at most this many gates are lifted, within this many seconds, for a trace.
LIFT_TRACE_GATES, LIFT_TRACE_SECONDS = 20000, 3.0

#: Exit statuses of ``sortcheck check`` (and ``stats``, which only uses 0 and 2).
EXIT_PROVED, EXIT_REFUTED, EXIT_ERROR, EXIT_UNKNOWN = 0, 1, 2, 3

VERDICTS = ("proved", "refuted", "unknown", "error")


def kind_of(netlist: Netlist) -> str:
    """The format's name for the kind of a netlist."""
    return "comparator-network" if isinstance(netlist, ComparatorNetwork) else "gate-circuit"


@dataclass(frozen=True)
class FileResult:
    """The outcome for one file: a verdict, or an error that kept it from being checked."""

    path: str
    kind: str | None = None
    prop: Property | None = None
    verdict: Verdict | None = None
    error: SortcheckError | None = None
    stats: dict[str, Any] | None = None
    seconds: float = 0.0
    diagnosis: Diagnosis | None = None
    trace: Trace | None = None
    #: ``{"certified": bool, "certificate": {...}}`` when certificates were asked for (``--certify``).
    certification: dict[str, Any] | None = None

    @property
    def status(self) -> str:
        """``proved``, ``refuted``, ``unknown`` or ``error``."""
        return "error" if self.verdict is None else self.verdict.status.value

    def to_json(self) -> dict[str, Any]:
        """The result object of the JSON report (fixed fields first, extras after)."""
        verdict = self.verdict
        counterexample = verdict.counterexample.to_json() if verdict and verdict.counterexample else None
        error = None
        if self.error is not None:
            error = {"message": self.error.message, "where": self.error.where, "text": str(self.error)}
        return {
            "path": self.path,
            "kind": self.kind,
            "property": self.prop.to_json() if self.prop else None,
            "verdict": self.status,
            "engine": verdict.engine if verdict else None,
            "seconds": round(self.seconds, 6),
            "stats": self.stats,
            "counterexample": counterexample,
            "error": error,
            "scope": verdict.scope if verdict else None,
            "stop_reason": verdict.stop.value if verdict else None,
            "engine_reason": verdict.engine_reason if verdict else None,
            "figures": verdict.figures if verdict else None,
            "diagnosis": self.diagnosis.to_json() if self.diagnosis else None,
            "trace": self.trace.to_json() if self.trace else None,
            **(self.certification or {}),
        }


#: Seconds the minimisation of a counterexample may take when no timeout is given.
MINIMIZE_SECONDS = 10.0


def explain_refutation(netlist: Netlist, verdict: Verdict, minimize: bool, timeout: float | None
                       ) -> tuple[Verdict, Diagnosis | None, Trace | None]:
    """Minimise (unless asked not to), diagnose and trace the counterexample of a refuted network.

    A gate circuit's counterexample is minimised (fewest one bits over all input words), and diagnosed
    and traced on its lifted network when the circuit lifts (:func:`_lifted_trace`).
    """
    example = verdict.counterexample
    if isinstance(netlist, GateCircuit) and example is not None and example.domain == "words":
        if minimize:
            budget = Budget.of(timeout if timeout is not None else MINIMIZE_SECONDS)
            verdict = replace(verdict, counterexample=minimize_circuit_counterexample(netlist, verdict.prop, example,
                                                                                      budget))
        return (verdict, *_lifted_trace(netlist, verdict, timeout))
    if not isinstance(netlist, ComparatorNetwork) or example is None or example.domain != "0-1":
        return verdict, None, None
    if minimize:
        budget = Budget.of(timeout if timeout is not None else MINIMIZE_SECONDS)
        example = minimize_network_counterexample(netlist, verdict.prop, example, budget)
        verdict = replace(verdict, counterexample=example)
    else:
        example = replace(example, permutation=tuple(permutation_of(list(example.input))))
        verdict = replace(verdict, counterexample=example)
    trace = trace_network(netlist, example.input) if fits_in_report(netlist) else None
    return verdict, diagnose_network(netlist, verdict.prop, example.input), trace


def _lifted_trace(circuit: GateCircuit, verdict: Verdict, timeout: float | None
                  ) -> tuple[Diagnosis | None, Trace | None]:
    """Diagnosis and trace of a refuted circuit on its lifted network, when it lifts with its inputs in place.

    A circuit whose compare-and-swap blocks are all sound lifts although it
    is wrong (a comparator missing or misplaced): the trace then shows the
    words' order keys after every layer of the lifted network.
    """
    if len(circuit.gates) > LIFT_TRACE_GATES:
        return None, None
    seconds = LIFT_TRACE_SECONDS if timeout is None else min(timeout, LIFT_TRACE_SECONDS)
    try:
        view = lifted_view(circuit, verdict.prop, verdict.counterexample.input, Budget.of(seconds))
    except SortcheckError:  # it does not lift
        return None, None
    if view.lifting.input_channels is not None or not fits_in_report(view.network):
        return None, None
    return view.diagnosis, view.trace


def check_file(path: str, prop: Property | None = None, engine: str = "auto", timeout: float | None = None,
               options: Options = Options(), progress: Progress | None = None, minimize: bool = True,
               words: int | None = None, runner=None, elaboration: Elaboration | None = None) -> FileResult:
    """Load one file and check it; never raises for bad input.

    ``prop`` (from the command line) overrides the property the file claims;
    with neither, ``sorts`` is checked.  ``options`` and ``progress`` go to
    the engine (see :func:`sortcheck.engines.check`); a counterexample is
    minimised unless ``minimize`` is false (within ``timeout`` again, or
    :data:`MINIMIZE_SECONDS`), then diagnosed and traced.  ``words`` and
    ``options.width`` group the bits of AIGER and BLIF files.  With a
    ``runner`` (:mod:`sortcheck.engines.runners.distribute`) a check that splits into
    pieces runs them there, and the figures say where the work ran.
    """
    started = time.perf_counter()
    netlist = None
    chosen = None
    try:
        netlist = read_netlist(path, words, options.width, elaboration)
        chosen = prop or netlist.claim or DEFAULT_PROPERTY
        check_fits(chosen, netlist, path, where="--property" if prop else "property")
        if runner is None:
            verdict = check(netlist, chosen, engine=engine, timeout=timeout, source=path, options=options,
                            progress=progress)
        else:
            verdict = check_split(netlist, chosen, engine, timeout, path, options, progress, runner)
        verdict, diagnosis, trace = explain_refutation(netlist, verdict, minimize, timeout)
        if getattr(netlist, "origin", None) is not None:
            verdict = replace(verdict, scope=f"{verdict.scope}; {design_scope(netlist.origin)}")
        if interruption.requested():
            verdict = verdict.interrupted(interruption.signal)
    except SortcheckError as error:
        return _error_result(path, netlist, chosen, error, started)
    except Exception as error:  # an internal bug: report it as an error result and go on
        detail = traceback.format_exception_only(type(error), error)[-1].strip()
        return _error_result(path, netlist, chosen, SortcheckError(f"internal error (please report): {detail}", path),
                             started)
    return FileResult(path, kind_of(netlist), chosen, verdict, None, netlist.stats(), time.perf_counter() - started,
                      diagnosis, trace)


def interrupted_result(path: str, prop: Property | None, started: bool) -> FileResult:
    """The result of a file whose check the interruption of the run kept from finishing (or from starting).

    >>> result = interrupted_result("a.json", None, started=False)
    >>> result.status, result.verdict.stop.value
    ('unknown', 'interrupted')
    >>> result.verdict.scope
    'interrupted by a signal before this file was checked; nothing is proved'
    """
    signal = interruption.signal or "a signal"
    when = "before this file's check had finished" if started else "before this file was checked"
    verdict = Verdict(Status.UNKNOWN, "none", prop, StopReason.INTERRUPTED,
                      f"interrupted by {signal} {when}; nothing is proved", 0.0, None,
                      {"interrupted_by": interruption.signal})
    return FileResult(path, None, prop, verdict)


def _error_result(path: str, netlist: Netlist | None, prop: Property | None, error: SortcheckError,
                  started: float) -> FileResult:
    kind = kind_of(netlist) if netlist is not None else None
    stats = netlist.stats() if netlist is not None else None
    return FileResult(path, kind, prop, None, error, stats, time.perf_counter() - started)


def summarise(results: Iterable[FileResult]) -> dict[str, int]:
    """Count the results by verdict.

    >>> summarise([FileResult("a.json")])
    {'proved': 0, 'refuted': 0, 'unknown': 0, 'error': 1}
    """
    counts = dict.fromkeys(VERDICTS, 0)
    for result in results:
        counts[result.status] += 1
    return counts


def exit_status(summary: dict[str, int]) -> int:
    """0 all proved; 1 some refuted; 3 some unknown and none refuted; 2 any error (2 wins).

    >>> exit_status({"proved": 3, "refuted": 1, "unknown": 2, "error": 0})
    1
    """
    if summary["error"]:
        return EXIT_ERROR
    if summary["refuted"]:
        return EXIT_REFUTED
    if summary["unknown"]:
        return EXIT_UNKNOWN
    return EXIT_PROVED
