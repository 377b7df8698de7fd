"""The ``smt`` engine on gate circuits: every gate a 1-bit term, the property stated on whole words.

Input word ``i`` is a bit-vector symbol ``x<i>`` of the circuit's width; its
bits (``BVExtract``) feed the gates, each gate becomes a 1-bit bit-vector
term of its op, and every output word is its bits put together
(``BVConcat``, least significant bit last).  The property's violation is
stated on the input and output words (:func:`sortcheck.engines.smt_words.circuit_violation_cases`),
with no assumption about what the circuit computes, and z3 looks for an input
that satisfies one of its cases.  ``encodings/gate-circuit-smt.md`` gives the
terms and why the cases are right.

Each case goes to a fresh solver without assumptions: z3 then bit-blasts it
with its dedicated bit-vector tactic, which on lowered sorters of 8 words of
4 bits (mux style) took 2.7 s for all cases, against 18 s for one incremental
solver asked case by case under assumptions and 210 s for the whole
disjunction at once (2 cores under load; see :data:`MAX_GATES`).
"""

from __future__ import annotations

import io
import time
from dataclasses import dataclass
from functools import reduce
from typing import Any

from sortcheck.engines.base import Budget, Options, Status, StopReason, Verdict
from sortcheck.engines.gates.simulation import counterexample_of
from sortcheck.engines.smt_words import (SOLVER_ERRORS, WordOrder, cases_done, circuit_violation_cases,
                                         failure_text, solver_name, unknown_reason, _MISSING)
from sortcheck.errors import PropertyError
from sortcheck.model import GateCircuit, Merges, PartialSort, Property, bit_name, check_fits

if _MISSING is None:
    from pysmt.environment import Environment
    from pysmt.exceptions import SolverReturnedUnknownResultError
    from pysmt.logics import QF_BV
    from pysmt.smtlib.script import smtlibscript_from_formula
    from pysmt.typing import BVType

#: Circuits with more gates are refused (SIZE_LIMIT).  Measured (tests/benchmarks/bench_smt_gates.py, sorts,
#: 2 cores under a load of 4 to 8, so rough): proved within seconds: counting sorters 8 x 2 (163 gates, 0.1 s)
#: and 8 x 3 (423, 0.4 s), lowered merge exchange 8 x 4 in the mux (285, 1.6 s) and and-or (931, 3.5 s)
#: styles; not proved within 90 s: merge exchange 8 x 8 mux (589) and and-or (1,919), 16 x 8 mux (1,953).
#: Refutations of one flipped gate vary: 0.3 s (8 x 8 mux), 51 s (8 x 8 and-or), 5.6 s (16 x 8 and-or,
#: 6,363 gates), none within 90 s (16 x 8 mux).  The gate SAT engine did not prove the 8 x 8 and 16 x 8
#: circuits within 60 s either.  The limit is about twice the largest circuit proved.
MAX_GATES = 2_000

#: Circuits with more input words are refused: the cases hold about 2 n^2 word comparisons.
MAX_WORDS = 64


@dataclass(frozen=True)
class CircuitEncoding:
    """The terms of one check of a gate circuit: input symbols, output words, the violation's cases.

    Some input breaks the property exactly when some case is satisfiable;
    ``nodes`` counts the distinct formula nodes built.
    """

    inputs: tuple[Any, ...]
    outputs: tuple[Any, ...]
    cases: tuple[Any, ...]
    width: int
    signed: bool
    nodes: int

    def formula(self, manager: Any) -> Any:
        """The whole check as one formula: the disjunction of the cases."""
        return manager.Or(self.cases)


def _gate_term(manager: Any, op: str, values: list) -> Any:
    """One gate as a 1-bit term; ``values`` are the 1-bit terms of its inputs (a mux: select, when0, when1)."""
    if op == "not":
        return manager.BVNot(values[0])
    if op == "mux":
        select, when0, when1 = values
        return manager.Ite(manager.Equals(select, manager.BV(1, 1)), when1, when0)
    combine = {"and": manager.BVAnd, "nand": manager.BVAnd, "or": manager.BVOr, "nor": manager.BVOr,
               "xor": manager.BVXor, "xnor": manager.BVXor}[op]
    term = reduce(combine, values)
    return manager.BVNot(term) if op in ("nand", "nor", "xnor") else term


def circuit_terms(circuit: GateCircuit, manager: Any) -> tuple[tuple[Any, ...], tuple[Any, ...]]:
    """Input word symbols ``x0, x1, ...`` and the output word terms of ``circuit``.

    >>> from sortcheck.model import Gate, OutputWord, Word
    >>> circuit = GateCircuit((Word("a", 1), Word("b", 1)),
    ...     (Gate("lo", "and", ("a[0]", "b[0]")), Gate("hi", "nor", ("a[0]", 0))),
    ...     (OutputWord("y0", ("lo",)), OutputWord("y1", ("hi",))))
    >>> inputs, outputs = circuit_terms(circuit, Environment().formula_manager)
    >>> [str(term) for term in inputs + outputs]
    ['x0', 'x1', '(x0[0:0] & x1[0:0])', '(! (x0[0:0] | 0_1))']
    """
    inputs = tuple(manager.Symbol(f"x{i}", BVType(word.width)) for i, word in enumerate(circuit.inputs))
    signals: dict[Any, Any] = {0: manager.BV(0, 1), 1: manager.BV(1, 1)}
    for word, symbol in zip(circuit.inputs, inputs):
        for index in range(word.width):
            signals[bit_name(word.name, index)] = manager.BVExtract(symbol, index, index)
    for gate in circuit.gate_order:
        signals[gate.out] = _gate_term(manager, gate.op, [signals[source] for source in gate.inputs])
    outputs = tuple(reduce(lambda low, high: manager.BVConcat(high, low), [signals[bit] for bit in word.bits])
                    for word in circuit.outputs)
    return inputs, outputs


def encode_circuit(circuit: GateCircuit, prop: Property, environment: Any = None) -> CircuitEncoding:
    """Build the violation cases of ``prop`` on ``circuit`` (its own word width).

    Examples
    --------
    >>> from sortcheck.model import Gate, OutputWord, Sorts, Word
    >>> pair = GateCircuit((Word("a", 1), Word("b", 1)),
    ...     (Gate("lo", "and", ("a[0]", "b[0]")), Gate("hi", "or", ("a[0]", "b[0]"))),
    ...     (OutputWord("y0", ("lo",)), OutputWord("y1", ("hi",))))
    >>> encoding = encode_circuit(pair, Sorts())
    >>> len(encoding.cases), [str(word) for word in encoding.outputs]
    (4, ['(x0[0:0] & x1[0:0])', '(x0[0:0] | x1[0:0])'])
    >>> print(encoding.cases[0].serialize(threshold=None))
    (0_2 u< ((0_2 + ((x0 u< (x0[0:0] & x1[0:0])) ? 1_2 : 0_2)) + ((x1 u< (x0[0:0] & x1[0:0])) ? 1_2 : 0_2)))
    """
    environment = environment or Environment()
    manager = environment.formula_manager
    before = len(manager.formulae)
    inputs, outputs = circuit_terms(circuit, manager)
    cases = tuple(circuit_violation_cases(WordOrder(manager, prop.signed), prop, inputs, outputs))
    return CircuitEncoding(inputs, outputs, cases, circuit.width, prop.signed, len(manager.formulae) - before)


def circuit_smtlib_text(circuit: GateCircuit, prop: Property) -> str:
    """The check as an SMT-LIB 2 script: the disjunction of the cases (``sat`` means refuted, ``unsat`` proved)."""
    environment = Environment()
    encoding = encode_circuit(circuit, prop, environment)
    script = smtlibscript_from_formula(encoding.formula(environment.formula_manager), logic=QF_BV)
    stream = io.StringIO()
    script.serialize(stream, daggify=True)
    return stream.getvalue()


def circuit_refusal(circuit: GateCircuit, prop: Property, max_gates: int = MAX_GATES
                    ) -> tuple[StopReason, str] | None:
    """Why smt cannot take this circuit check (None when it can); no formula is built."""
    if not circuit.inputs:
        return StopReason.UNSUPPORTED, "the circuit has no input words"
    widths = sorted(set(circuit.widths))
    if len(widths) > 1:
        return StopReason.UNSUPPORTED, (f"smt compares words of one width, but the input words of this circuit "
                                        f"have widths {', '.join(map(str, widths))}")
    try:
        check_fits(prop, circuit, None)
    except PropertyError as error:
        return StopReason.UNSUPPORTED, error.message
    if len(circuit.gates) > max_gates:
        return StopReason.SIZE_LIMIT, (f"{len(circuit.gates):,} gates are beyond smt's limit of {max_gates:,} "
                                       f"gates for gate circuits (z3 did not finish larger ones within minutes)")
    if circuit.words > MAX_WORDS:
        return StopReason.SIZE_LIMIT, f"{circuit.words} input words are beyond smt's limit of {MAX_WORDS}"
    return None


def _words_phrase(circuit: GateCircuit, signed: bool) -> str:
    """``3 unsigned words of 2 bits``: the input words a verdict speaks of."""
    kind = "two's complement" if signed else "unsigned"
    return f"{circuit.words} {kind} words of {circuit.width} bits"


def _inputs_text(circuit: GateCircuit, prop: Property) -> str:
    n = circuit.words
    text = f"every input of {_words_phrase(circuit, prop.signed)}"
    if isinstance(prop, Merges):
        m = prop.split
        text += f" whose words 0..{m - 1} and {m}..{n - 1} each ascend"
    return text


def circuit_proof_scope(circuit: GateCircuit, prop: Property, options: Options = Options()) -> str:
    """What a proof covers, in plain words.

    >>> from sortcheck.model import Sorts, Word
    >>> print(circuit_proof_scope(GateCircuit((Word("a", 2),), (), ()), Sorts(signed=True), Options(width=3)))
    sorts ascending (signed): every input of 1 two's complement words of 2 bits is covered; the SMT solver (z3, engine smt) proved that none breaks the property, with all 0 gates encoded bit by bit; this covers this circuit at its own width of 2 bits only (--width 3 does not apply to gate circuits)
    """
    text = (f"{prop.describe()}: {_inputs_text(circuit, prop)} is covered; the SMT solver (z3, engine smt) "
            f"proved that none breaks the property, with all {len(circuit.gates):,} gates encoded bit by bit")
    if isinstance(prop, PartialSort):
        text += f" (keys: the {prop.key_bits} most significant bits of each word)"
    text += f"; this covers this circuit at its own width of {circuit.width} bits only"
    if options.width is not None and options.width != circuit.width:
        text += f" (--width {options.width} does not apply to gate circuits)"
    return text


def check_circuit(engine_name: str, circuit: GateCircuit, prop: Property, budget: Budget,
                  options: Options = Options()) -> Verdict:
    """Prove or refute ``prop`` on ``circuit``; the caller has checked :func:`circuit_refusal`."""
    started = time.perf_counter()
    figures: dict[str, Any] = {"width": circuit.width, "signed": prop.signed, "solver": solver_name(),
                               "words": circuit.words, "gates_encoded": len(circuit.gates)}
    try:
        return _solve(engine_name, circuit, prop, budget, options, figures, started)
    except SOLVER_ERRORS as error:
        return _verdict(engine_name, Status.UNKNOWN, prop, StopReason.UNSUPPORTED, failure_text(error), figures,
                        started)


def _verdict(engine_name: str, status: Status, prop: Property, stop: StopReason, scope: str,
             figures: dict[str, Any], started: float, counterexample: Any = None) -> Verdict:
    figures["seconds"] = time.perf_counter() - started
    return Verdict(status, engine_name, prop, stop, scope, figures["seconds"], counterexample, figures)


def _solve(engine_name: str, circuit: GateCircuit, prop: Property, budget: Budget, options: Options,
           figures: dict[str, Any], started: float) -> Verdict:
    environment = Environment()
    encoding = encode_circuit(circuit, prop, environment)
    figures.update(formula_nodes=encoding.nodes, cases=len(encoding.cases),
                   encode_seconds=time.perf_counter() - started)
    solving = time.perf_counter()
    for number, case in enumerate(encoding.cases):
        remaining = budget.remaining()
        if remaining is not None and remaining <= 0:
            stop, scope = unknown_reason("timeout")
            return _verdict(engine_name, Status.UNKNOWN, prop, stop, cases_done(scope, number, encoding.cases),
                            figures, started)
        solver = environment.factory.Solver(name="z3", logic=QF_BV)
        try:
            if remaining is not None:
                solver.z3.set("timeout", max(1, int(remaining * 1000)))
            solver.add_assertion(case)
            try:
                found = solver.solve()
            except SolverReturnedUnknownResultError:
                stop, scope = unknown_reason(solver.z3.reason_unknown())
                return _verdict(engine_name, Status.UNKNOWN, prop, stop, cases_done(scope, number, encoding.cases),
                                figures, started)
            if found:
                raw = tuple(int(solver.get_py_value(symbol)) for symbol in encoding.inputs)
                figures["solve_seconds"] = time.perf_counter() - solving
                return _refuted(engine_name, circuit, prop, raw, figures, started)
        finally:
            solver.exit()
    figures["solve_seconds"] = time.perf_counter() - solving
    return _verdict(engine_name, Status.PROVED, prop, StopReason.COVERED, circuit_proof_scope(circuit, prop, options),
                    figures, started)


def _refuted(engine_name: str, circuit: GateCircuit, prop: Property, raw: tuple[int, ...],
             figures: dict[str, Any], started: float) -> Verdict:
    # counterexample_of evaluates the circuit gate by gate and re-checks with the reference semantics;
    # it raises AssertionError when the model does not really break the property (an internal error).
    found = counterexample_of(circuit, prop, raw)
    scope = (f"this input of {_words_phrase(circuit, prop.signed)} breaks the property: the circuit was "
             f"evaluated gate by gate on it and the outputs checked")
    return _verdict(engine_name, Status.REFUTED, prop, StopReason.COUNTEREXAMPLE, scope, figures, started, found)
