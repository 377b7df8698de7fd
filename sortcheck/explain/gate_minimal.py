"""Provably minimal counterexamples for gate circuits: fewest one bits over all input words.

The measure of an input is the number of one bits of its words' bit
patterns (two's complement for signed properties).  Minimisation runs in
three phases:

1. shrink the engine's counterexample with the word passes of
   :mod:`sortcheck.explain.shrink` (drop a word to zero, clear a bit, lower a
   value, move a bit down), every pass's candidates evaluated bit-parallel,
   which gives an upper bound ``u``;
2. evaluate every input with ``w`` one bits for ``w = 0, 1, ...`` as long as
   the gate evaluations stay within ``max_evaluations`` (the first failing
   one is the minimum);
3. beyond that, ask a SAT solver for a failing input with fewer one bits
   (the CNF of "the circuit breaks the property on this input" from
   :func:`sortcheck.engines.gates.threshold.spec.gate_violation_cnf`, and a totalizer
   over the input bits), lowering the bound until the solver answers that
   none exists: that answer proves minimality.

When the budget runs out, the result keeps the best counterexample found,
with ``minimal`` false.  A counterexample an engine has already proved to
have the fewest one bits (``minimal`` true, as the ``bdd`` engine's are,
read off BDDs that hold every failing input) is re-checked and kept as it
is: searching again could only find another input of the same measure.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import replace

import numpy as np

from pysat.card import ITotalizer
from pysat.solvers import Solver

from sortcheck.engines.base import Budget, Counterexample
from sortcheck.engines.gates.threshold.spec import gate_violation_cnf
from sortcheck.engines.solving import INTERRUPTIBLE_SOLVER
from sortcheck.explain.gate_inputs import CircuitFailures, Raw, solve_in_budget, to_raw, to_values
from sortcheck.explain.shrink import WORD_PASSES, shrink, word_measure
from sortcheck.model import GateCircuit, Property
from sortcheck.model.semantics import violation

#: Most gate evaluations (inputs times gates) phase 2 spends before it hands over to the SAT solver.
MAX_EVALUATIONS = 2_000_000_000

#: Inputs per evaluated batch in phase 2.
BATCH = 1 << 14


def _input_of(positions: tuple[int, ...], words: int, width: int) -> Raw:
    """The raw input whose one bits are ``positions`` (bit ``p`` is bit ``p % width`` of word ``p // width``).

    >>> _input_of((0, 4, 5), 2, 3)
    (1, 6)
    """
    raw = [0] * words
    for position in positions:
        raw[position // width] |= 1 << (position % width)
    return tuple(raw)


def _weight_batch(positions: np.ndarray, words: int, width: int) -> np.ndarray:
    """Raw inputs ``(count, words)`` whose one bits are the rows of ``positions`` ``(count, weight)``.

    >>> _weight_batch(np.array([[0, 4, 5]]), 2, 3).tolist()
    [[1, 6]]
    """
    raw = np.zeros((len(positions), words), dtype=np.uint64)
    rows = np.repeat(np.arange(len(positions)), positions.shape[1])
    flat = positions.ravel()
    np.bitwise_or.at(raw, (rows, flat // width), np.left_shift(np.uint64(1), (flat % width).astype(np.uint64)))
    return raw


def _search_by_weight(failures: CircuitFailures, gates: int, below: int, budget: Budget, max_evaluations: int
                      ) -> tuple[Raw | None, int]:
    """Evaluate every input of 0, 1, ... one bits below ``below`` while ``max_evaluations`` allows.

    ``max_evaluations`` bounds inputs times gates.  Returns the first failing
    input found (of least measure) or None, and the measure up to which
    (exclusive) the search was complete.
    """
    words, width = failures.words, failures.width
    bits, spent = words * width, 0
    for weight in range(below):
        spent += math.comb(bits, weight) * max(1, gates)
        if spent > max_evaluations or budget.expired():
            return None, weight
        combinations = itertools.combinations(range(bits), weight)
        while True:
            chunk = list(itertools.islice(combinations, BATCH))
            if not chunk:
                break
            if budget.expired():
                return None, weight
            if width <= 64:
                positions = np.array(chunk, dtype=np.int64).reshape(len(chunk), weight)
                flags = failures.failing_array(_weight_batch(positions, words, width))
            else:
                flags = failures.failing([_input_of(positions, words, width) for positions in chunk])
            if flags.any():
                return _input_of(chunk[int(flags.argmax())], words, width), weight
    return None, below


def _search_by_sat(circuit: GateCircuit, prop: Property, failures: CircuitFailures, floor: int, best: Raw,
                   budget: Budget) -> tuple[Raw, int]:
    """Lower the measure of ``best`` with a SAT solver, down to ``floor`` (below which none exists).

    Returns the best input and the measure below which no failing input
    exists (``floor`` when the budget ran out first).
    """
    clauses, pool, _ = gate_violation_cnf(circuit, prop)
    bits = [pool.id(("bit", word.name, i)) for word in circuit.inputs for i in range(word.width)]
    totalizer = ITotalizer(lits=bits, ubound=word_measure(best), top_id=pool.top)
    with Solver(name=INTERRUPTIBLE_SOLVER, bootstrap_with=clauses + totalizer.cnf.clauses) as solver:
        while word_measure(best) > floor:
            bound = word_measure(best) - 1
            answer = solve_in_budget(solver, [-totalizer.rhs[bound]], budget)
            if answer is None:
                return best, floor
            if not answer:
                return best, bound + 1
            true = {literal for literal in solver.get_model() if literal > 0}
            found = tuple(sum(1 << i for i in range(word.width) if pool.id(("bit", word.name, i)) in true)
                          for word in circuit.inputs)
            if not failures(found) or word_measure(found) > bound:
                raise AssertionError(f"internal error: the solver's input {found} is no smaller failing input")
            best = found
    return best, floor


def _proved_minimal(failures: CircuitFailures, example: Counterexample, width: int) -> Counterexample:
    """``example``, proved minimal by its engine, after checking that it fails and that ``ones`` is its measure."""
    raw = to_raw(example.input, width)
    if word_measure(raw) != example.ones or not failures(raw):
        raise AssertionError(f"internal error: the counterexample {example.input} proved minimal with {example.ones} "
                             "one bits does not fail with that many")
    return example


def minimize_circuit_counterexample(circuit: GateCircuit, prop: Property, example: Counterexample, budget: Budget,
                                    max_evaluations: int = MAX_EVALUATIONS) -> Counterexample:
    """A failing input of fewest one bits, proved minimal when the search completes.

    Examples
    --------
    >>> from sortcheck.model import Gate, OutputWord, Sorts, Word
    >>> swapped = GateCircuit((Word("a", 2), Word("b", 2)),
    ...     (Gate("lo0", "or", ("a[0]", "b[0]")), Gate("hi0", "and", ("a[0]", "b[0]")),
    ...      Gate("lo1", "and", ("a[1]", "b[1]")), Gate("hi1", "or", ("a[1]", "b[1]"))),
    ...     (OutputWord("y0", ("lo0", "lo1")), OutputWord("y1", ("hi0", "hi1"))))
    >>> first = Counterexample((3, 2), (3, 2), "words", "")
    >>> small = minimize_circuit_counterexample(swapped, Sorts(), first, Budget())
    >>> small.input, small.output, small.minimal, small.ones
    ((1, 0), (1, 0), True, 1)
    >>> minimize_circuit_counterexample(swapped, Sorts(), small, Budget()) == small  # already proved minimal
    True
    """
    width = circuit.width
    failures = CircuitFailures(circuit, prop)
    if example.minimal and example.ones is not None:
        return _proved_minimal(failures, example, width)
    best = shrink(to_raw(example.input, width), failures, WORD_PASSES, measure=word_measure)
    smaller, covered = _search_by_weight(failures, len(circuit.gates), word_measure(best), budget, max_evaluations)
    if smaller is not None:
        best = smaller
    elif covered < word_measure(best):
        best, covered = _search_by_sat(circuit, prop, failures, covered, best, budget)
    values = to_values(best, width, prop.signed)
    output = to_values(tuple(circuit.evaluate(list(values))), width, prop.signed)
    reason = violation(prop, values, output, key_bits_width=width)
    if reason is None:
        raise AssertionError(f"internal error: minimised input {values} meets {prop.describe()}")
    return replace(example, input=values, output=output, violation=reason, minimal=covered >= word_measure(best),
                   ones=word_measure(best))
