"""The ``smt`` engine: comparator networks and gate circuits checked on bit-vector words with an SMT solver.

Gate circuits are encoded gate by gate in :mod:`sortcheck.engines.gates.smt`;
this module encodes comparator networks and holds the engine.  Every channel is a bit-vector of ``width`` bits and every comparator an
if-then-else on one comparison (unsigned, or two's complement when the
property is signed), so the solver reasons about words, not 0-1 vectors.
The property's violation is stated on the output words and the solver looks
for an input that satisfies it: none means the property holds for every input
of ``width``-bit words; a model is a counterexample.  Formulas are built with
pysmt and solved by z3.  ``encodings/comparator-network-smt.md`` gives the
conditions and why they are right.

The default width, ``ceil(log2 n)`` bits (at least 1), is the smallest that
holds ``n`` distinct values.  Every input of ``n`` values from any ordered set
then has a word input with the same order pattern (replace each value by its
rank), and a comparator network only compares, so a proof at that width covers
every input of any values without appeal to the 0-1 principle.
"""

from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Any

from sortcheck.engines.base import Budget, Counterexample, Options, Status, StopReason, Verdict, refused_verdict
from sortcheck.engines.gates.smt import MAX_GATES, check_circuit, circuit_refusal, circuit_smtlib_text
from sortcheck.engines.smt_words import (SOLVER_ERRORS, WordOrder, cases_done, failure_text,
                                         network_violation_cases, solver_name, unknown_reason, word_value,
                                         words_text, _MISSING)
from sortcheck.model import ComparatorNetwork, GateCircuit, Median, Merges, Netlist, PartialSort, Property, Selects, Sorts
from sortcheck.model.semantics import violation

if _MISSING is None:
    from pysmt.environment import Environment
    from pysmt.exceptions import SolverReturnedUnknownResultError
    from pysmt.logics import QF_BV
    from pysmt.smtlib.script import smtlibscript_from_formula
    from pysmt.typing import BVType

#: Checks on more channels than this are refused.  Measured proofs of merge exchange
#: networks (tests/benchmarks/bench_smt.py, 2 cores): 16 channels about 12 s, 20 channels
#: about 4 minutes; refutations stay fast, so the limit is set above what proofs reach.
MAX_CHANNELS = 32

#: Widths above this are refused; a comparator network never needs more than
#: ceil(log2 n) bits, so wider words only make the formula larger.
MAX_WIDTH = 64


def default_width(channels: int) -> int:
    """The smallest width that holds ``channels`` distinct values: ceil(log2 n), at least 1.

    >>> [default_width(n) for n in (1, 2, 3, 4, 5, 8, 9, 16, 17)]
    [1, 1, 2, 2, 3, 3, 4, 4, 5]
    """
    return max(1, (channels - 1).bit_length())


@dataclass(frozen=True)
class Encoding:
    """The formulas of one check: input symbols, output terms, the violation's cases and lemmas.

    Some input of ``width``-bit words breaks the property exactly when the
    lemmas and some case are satisfiable together; the lemmas hold for every
    input (:func:`order_facts`), so they change no answer and only guide the
    solver.  ``nodes`` counts the distinct formula nodes built.
    """

    inputs: tuple[Any, ...]
    outputs: tuple[Any, ...]
    cases: tuple[Any, ...]
    lemmas: tuple[Any, ...]
    width: int
    signed: bool
    nodes: int

    def formula(self, manager: Any) -> Any:
        """The whole check as one formula: the lemmas and the disjunction of the cases."""
        return manager.And(*self.lemmas, manager.Or(self.cases))


def order_facts(network: ComparatorNetwork) -> list[list[tuple[int, int]]]:
    """For each comparator, pairs ``(i, j)`` whose words satisfy ``word i <= word j`` right after it, for every input.

    Only facts that the comparator makes new are listed.  With ``lo`` and
    ``hi`` the words a comparator leaves on channels ``a`` and ``b`` (the
    minimum and maximum of the words ``u, v`` it received) and ``c`` any other
    channel: ``lo <= hi``; ``c <= lo`` when ``c <= u`` and ``c <= v``;
    ``lo <= c`` when ``u <= c`` or ``v <= c``; ``c <= hi`` when ``c <= u`` or
    ``c <= v``; ``hi <= c`` when ``u <= c`` and ``v <= c``.  Each is a law of
    ``min`` and ``max`` on any total order, so the facts hold for signed and
    unsigned words alike.

    >>> order_facts(ComparatorNetwork(3, ((0, 1), (1, 2))))
    [[(0, 1)], [(0, 2), (1, 2)]]
    """
    known: set[tuple[int, int]] = set()
    facts = []
    for a, b in network.comparators:
        new = set()
        for c in range(network.channels):
            if c in (a, b):
                continue
            c_below_a, c_below_b = (c, a) in known, (c, b) in known
            a_below_c, b_below_c = (a, c) in known, (b, c) in known
            if c_below_a and c_below_b:
                new.add((c, a))
            if a_below_c or b_below_c:
                new.add((a, c))
            if c_below_a or c_below_b:
                new.add((c, b))
            if a_below_c and b_below_c:
                new.add((b, c))
        new.add((a, b))
        known = {pair for pair in known if a not in pair and b not in pair} | new
        facts.append(sorted(new))
    return facts


def encode(network: ComparatorNetwork, prop: Property, width: int, environment: Any = None) -> Encoding:
    """Build the violation formula of ``prop`` on ``network`` over ``width``-bit words.

    Parameters
    ----------
    network : ComparatorNetwork
    prop : Property
        sorts, merges, selects or median; ``prop.signed`` picks two's complement comparisons.
    width : int
        Bits per channel.
    environment : pysmt Environment or None
        Where the formula lives; a fresh one by default, so that nothing is
        kept between checks.

    Examples
    --------
    >>> encoding = encode(ComparatorNetwork(2, ((0, 1),)), Sorts(), 1)
    >>> [str(word) for word in encoding.inputs], [str(case) for case in encoding.cases]
    (['x0', 'x1'], ['(((x1 u< x0) ? x0 : x1) u< ((x1 u< x0) ? x1 : x0))'])
    >>> [str(lemma) for lemma in encoding.lemmas]
    ['(((x1 u< x0) ? x1 : x0) u<= ((x1 u< x0) ? x0 : x1))']
    """
    environment = environment or Environment()
    manager = environment.formula_manager
    before = len(manager.formulae)
    order = WordOrder(manager, prop.signed)
    less, less_equal = order.less, order.less_equal
    inputs = tuple(manager.Symbol(f"x{i}", BVType(width)) for i in range(network.channels))
    wires = list(inputs)
    lemmas = []
    for (a, b), facts in zip(network.comparators, order_facts(network)):
        swap = less(wires[b], wires[a])  # channel a keeps the smaller word, as in ComparatorNetwork.apply
        wires[a], wires[b] = manager.Ite(swap, wires[b], wires[a]), manager.Ite(swap, wires[a], wires[b])
        lemmas += [less_equal(wires[i], wires[j]) for i, j in facts]
    outputs = tuple(wires)
    cases = tuple(network_violation_cases(order, prop, inputs, outputs))
    return Encoding(inputs, outputs, cases, tuple(lemmas), width, prop.signed, len(manager.formulae) - before)


def smtlib_text(network: Netlist, prop: Property, width: int | None = None) -> str:
    """The check as an SMT-LIB 2 script (``sat`` means refuted, ``unsat`` proved).

    A gate circuit keeps its own width (``width`` must be None or that width).

    >>> text = smtlib_text(ComparatorNetwork(2, ((0, 1),)), Sorts())
    >>> text.splitlines()[:3] + text.splitlines()[-1:]
    ['(set-logic QF_BV)', '(declare-fun x0 () (_ BitVec 1))', '(declare-fun x1 () (_ BitVec 1))', '(check-sat)']
    """
    import io

    if isinstance(network, GateCircuit):
        if width is not None and width != network.width:
            raise ValueError(f"a gate circuit is checked at its own width {network.width}, not {width}")
        return circuit_smtlib_text(network, prop)
    environment = Environment()
    encoding = encode(network, prop, width or default_width(network.channels), environment)
    script = smtlibscript_from_formula(encoding.formula(environment.formula_manager), logic=QF_BV)
    stream = io.StringIO()
    script.serialize(stream, daggify=True)
    return stream.getvalue()


def _inputs_text(network: ComparatorNetwork, prop: Property) -> str:
    n = network.channels
    if isinstance(prop, Merges):
        m = prop.split
        return f"every input on {n} channels whose positions 0..{m - 1} and {m}..{n - 1} are each ascending"
    return f"every input on {n} channels"


def proof_scope(network: ComparatorNetwork, prop: Property, width: int) -> str:
    """What a proof at ``width`` covers, in plain words.

    >>> proof_scope(ComparatorNetwork(4, ()), Sorts(), 2)[:62]
    'every input on 4 channels of 2-bit unsigned words (w = 2): the'
    """
    n = network.channels
    text = (f"{_inputs_text(network, prop)} of {words_text(width, prop.signed)}: the SMT solver (z3) proved "
            f"that none breaks the property")
    if width >= default_width(n):
        return text + (f"; {width}-bit words hold {n} distinct values, so any input of any ordered values has "
                       f"a word input with the same order pattern, and this covers inputs of any values "
                       f"(without the 0-1 principle)")
    return text + (f"; {width}-bit words hold only {1 << width} distinct values, fewer than the {n} channels, so "
                   f"inputs with more distinct values are covered only through the 0-1 principle, not by this "
                   f"proof (the default width {default_width(n)} covers them directly)")


class SmtEngine:
    """Bit-vector words, comparators as if-then-else, solved by z3 through pysmt.

    Gate circuits go to :mod:`sortcheck.engines.gates.smt` (every gate a
    1-bit term, at the circuit's own width); comparator networks are encoded
    here.  ``cooperative`` is False: z3's timeout is passed on and usually holds, but
    z3 checks it only at points of its own choosing (simplification and
    bit-blasting of a large formula can overrun it), so a hard deadline needs
    a process that can be ended.

    Examples
    --------
    >>> net = ComparatorNetwork(3, ((0, 1), (1, 2)))
    >>> verdict = SmtEngine().check(net, Sorts(), Budget())
    >>> verdict.status.value, verdict.counterexample.domain, verdict.figures["width"]
    ('refuted', 'words', 2)
    >>> SmtEngine().check(ComparatorNetwork(3, ((0, 1), (1, 2), (0, 1))), Sorts(), Budget()).status.value
    'proved'
    >>> from sortcheck.model.lowering import lower_network
    >>> circuit = lower_network(ComparatorNetwork(3, ((0, 1), (1, 2), (0, 1))), 2, style="mux")
    >>> verdict = SmtEngine().check(circuit, Sorts(), Budget())
    >>> verdict.status.value, verdict.figures["gates_encoded"], verdict.scope[:70]
    ('proved', 21, 'sorts ascending: every input of 3 unsigned words of 2 bits is covered;')
    >>> broken = lower_network(ComparatorNetwork(3, ((0, 1), (1, 2))), 2, style="mux")
    >>> example = SmtEngine().check(broken, Sorts(), Budget()).counterexample
    >>> sorted(example.input) != list(example.output), example.output == tuple(broken.evaluate(example.input))
    (True, True)
    """

    name = "smt"
    cooperative = False

    def __init__(self, max_channels: int = MAX_CHANNELS, max_width: int = MAX_WIDTH, max_gates: int = MAX_GATES):
        self.max_channels = max_channels
        self.max_width = max_width
        self.max_gates = max_gates

    def refusal(self, netlist: Netlist, prop: Property, options: Options = Options()
                ) -> tuple[StopReason, str] | None:
        if _MISSING is not None:  # pragma: no cover
            return StopReason.UNSUPPORTED, _MISSING
        if isinstance(netlist, GateCircuit):
            return circuit_refusal(netlist, prop, self.max_gates)
        if not isinstance(netlist, ComparatorNetwork):
            return StopReason.UNSUPPORTED, "smt checks comparator networks and gate circuits"
        if isinstance(prop, PartialSort):
            return StopReason.UNSUPPORTED, "partial-sort applies to gate circuits only"
        if not isinstance(prop, (Sorts, Merges, Selects, Median)):
            return StopReason.UNSUPPORTED, f"smt has no encoding for {prop.describe()}"
        if netlist.channels > self.max_channels:
            return StopReason.SIZE_LIMIT, (f"{netlist.channels} channels are beyond smt's limit of "
                                           f"{self.max_channels} channels")
        width = options.width
        if width is not None and width < 1:
            return StopReason.UNSUPPORTED, f"the word width must be at least 1 bit, got {width}"
        if width is not None and width > self.max_width:
            return StopReason.SIZE_LIMIT, f"width {width} is beyond smt's limit of {self.max_width} bits"
        return None

    def check(self, netlist: Netlist, prop: Property, budget: Budget, options: Options = Options()) -> Verdict:
        started = time.perf_counter()
        refused = refused_verdict(self, netlist, prop, options, started)
        if refused is not None:
            return refused
        if isinstance(netlist, GateCircuit):
            return check_circuit(self.name, netlist, prop, budget, options)
        network: ComparatorNetwork = netlist  # type: ignore[assignment]
        width = options.width or default_width(network.channels)
        figures: dict[str, Any] = {"width": width, "signed": prop.signed, "solver": solver_name(),
                                   "comparators_encoded": network.size}
        try:
            return self._solve(network, prop, width, budget, figures, started)
        except SOLVER_ERRORS as error:
            return self._unknown(prop, figures, started, StopReason.UNSUPPORTED, failure_text(error))

    def _solve(self, network: ComparatorNetwork, prop: Property, width: int, budget: Budget,
               figures: dict[str, Any], started: float) -> Verdict:
        environment = Environment()
        manager = environment.formula_manager
        encoding = encode(network, prop, width, environment)
        selectors = [manager.FreshSymbol(template="case%d") for _ in encoding.cases]
        guarded = [manager.Implies(selector, case) for selector, case in zip(selectors, encoding.cases)]
        figures.update(formula_nodes=encoding.nodes, lemmas=len(encoding.lemmas), cases=len(encoding.cases),
                       encode_seconds=time.perf_counter() - started)
        solver = environment.factory.Solver(name="z3", logic=QF_BV)
        try:
            for formula in (*encoding.lemmas, *guarded):
                solver.add_assertion(formula)
            solving = time.perf_counter()
            # One case at a time under an assumption: the solver keeps what it learnt between
            # cases, and each query is far easier than the whole disjunction.
            for number, selector in enumerate(selectors):
                remaining = budget.remaining()
                if remaining is not None and remaining <= 0:
                    stop, scope = unknown_reason("timeout")
                    return self._unknown(prop, figures, started, stop, cases_done(scope, number, selectors))
                if remaining is not None:
                    solver.z3.set("timeout", max(1, int(remaining * 1000)))
                try:
                    found = solver.solve([selector])
                except SolverReturnedUnknownResultError:
                    stop, scope = unknown_reason(solver.z3.reason_unknown())
                    return self._unknown(prop, figures, started, stop, cases_done(scope, number, selectors))
                if found:
                    words = tuple(word_value(solver.get_py_value(symbol), width, prop.signed)
                                  for symbol in encoding.inputs)
                    figures["solve_seconds"] = time.perf_counter() - solving
                    return self._refuted(network, prop, words, width, figures, started)
            figures["solve_seconds"] = time.perf_counter() - solving
        finally:
            solver.exit()
        figures["seconds"] = time.perf_counter() - started
        return Verdict(Status.PROVED, self.name, prop, StopReason.COVERED, proof_scope(network, prop, width),
                       figures["seconds"], None, figures)

    def _unknown(self, prop: Property, figures: dict[str, Any], started: float, stop: StopReason,
                 scope: str) -> Verdict:
        figures["seconds"] = time.perf_counter() - started
        return Verdict(Status.UNKNOWN, self.name, prop, stop, scope, figures["seconds"], None, figures)

    def _refuted(self, network: ComparatorNetwork, prop: Property, words: tuple[int, ...], width: int,
                 figures: dict[str, Any], started: float) -> Verdict:
        output = tuple(network.apply(list(words)))
        reason = violation(prop, words, output)
        if reason is None:  # the word encoding and the reference semantics disagree
            raise AssertionError(f"internal error: smt input {words} was a model but meets {prop.describe()}")
        figures["seconds"] = time.perf_counter() - started
        scope = (f"this input of {words_text(width, prop.signed)} breaks the property: the network was run "
                 f"on it and the outputs checked")
        return Verdict(Status.REFUTED, self.name, prop, StopReason.COUNTEREXAMPLE, scope, figures["seconds"],
                       Counterexample(words, output, "words", reason), figures)
