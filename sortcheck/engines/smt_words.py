"""What the ``smt`` engine's two encodings share: the violation of each property on words, and the solver.

Comparator networks (:mod:`sortcheck.engines.smt`) and gate circuits
(:mod:`sortcheck.engines.gates.smt`) both end in bit-vector terms for the
input words and the output words; this module states on those terms when
the outputs break a property, as a list of *cases* (any one true is a
violation), and turns solver answers into values and stop reasons.

A comparator network only permutes its inputs, and some of its cases rely on
that (:func:`network_violation_cases`); a gate circuit can compute any
function, so its cases say everything (:func:`circuit_violation_cases`).
Both rest on one fact about *order statistics*: with ``n`` inputs, a word
``v`` is the ``r``-th smallest input (``sorted(inputs)[r]``) exactly when at
most ``r`` inputs are smaller than ``v`` and at most ``n - 1 - r`` are larger
(:func:`not_order_statistic`).  ``encodings/comparator-network-smt.md`` and
``encodings/gate-circuit-smt.md`` prove each case right.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from sortcheck.engines.base import StopReason
from sortcheck.model import Median, Merges, PartialSort, Property, Selects, Sorts

try:
    import z3
    from pysmt.exceptions import PysmtException
    _MISSING = None
except ImportError as error:  # pragma: no cover - the test extras install both
    _MISSING = f"the smt engine needs pysmt and z3-solver ({error})"


@dataclass(frozen=True)
class WordOrder:
    """Comparisons of bit-vector words in the property's order (unsigned, or two's complement when signed).

    >>> from pysmt.environment import Environment
    >>> from pysmt.typing import BVType
    >>> manager = Environment().formula_manager
    >>> a, b = manager.Symbol("a", BVType(2)), manager.Symbol("b", BVType(2))
    >>> order = WordOrder(manager, signed=True)
    >>> str(order.less(a, b)), str(order.count([order.less(a, b)], 2))
    ('(a s< b)', '(0_2 + ((a s< b) ? 1_2 : 0_2))')
    """

    manager: Any
    signed: bool

    def less(self, left: Any, right: Any) -> Any:
        return (self.manager.BVSLT if self.signed else self.manager.BVULT)(left, right)

    def less_equal(self, left: Any, right: Any) -> Any:
        return (self.manager.BVSLE if self.signed else self.manager.BVULE)(left, right)

    def ascending(self, words: tuple) -> Any:
        """True when ``words`` never descend."""
        return self.manager.And([self.less_equal(words[i], words[i + 1]) for i in range(len(words) - 1)])

    def count(self, conditions: list, bits: int) -> Any:
        """How many of ``conditions`` hold, as a ``bits``-wide word (a sum of if-then-else terms)."""
        one, zero = self.manager.BV(1, bits), self.manager.BV(0, bits)
        total = zero
        for condition in conditions:
            total = self.manager.BVAdd(total, self.manager.Ite(condition, one, zero))
        return total


def count_bits(n: int) -> int:
    """Bits of a counter that holds 0..n without overflow.

    >>> count_bits(1), count_bits(7), count_bits(8)
    (1, 3, 4)
    """
    return n.bit_length()


def not_order_statistic(order: WordOrder, inputs: tuple, word: Any, rank: Any) -> list:
    """Two cases, one of which holds exactly when ``word`` is not ``sorted(inputs)[rank]``.

    ``rank`` is an integer or a bit-vector term of :func:`count_bits` ``(n)`` bits.  The
    cases are: more than ``rank`` inputs are smaller than ``word``, or more
    than ``n - 1 - rank`` are larger.  When neither holds, the inputs smaller
    or larger number at most ``n - 1``, so some input equals ``word``, and
    with at most ``rank`` inputs below it and at least ``rank + 1`` at or
    below it, ``word`` is the ``rank``-th smallest; conversely the
    ``rank``-th smallest has at most ``rank`` inputs below it and at most
    ``n - 1 - rank`` above it.
    """
    manager, n = order.manager, len(inputs)
    bits = count_bits(n)
    smaller = order.count([order.less(value, word) for value in inputs], bits)
    larger = order.count([order.less(word, value) for value in inputs], bits)
    if isinstance(rank, int):
        below, above = manager.BV(rank, bits), manager.BV(n - 1 - rank, bits)
    else:
        below, above = rank, manager.BVSub(manager.BV(n - 1, bits), rank)
    return [manager.BVUGT(smaller, below), manager.BVUGT(larger, above)]


def _adjacent_disorders(order: WordOrder, words: tuple) -> list:
    """One case per adjacent pair of ``words`` out of ascending order."""
    return [order.less(words[i + 1], words[i]) for i in range(len(words) - 1)]


def _median_cases(order: WordOrder, inputs: tuple, outputs: tuple) -> list:
    """The output in the middle (the only one, for one output word) is not the median input."""
    return not_order_statistic(order, inputs, outputs[(len(outputs) - 1) // 2], (len(inputs) - 1) // 2)


def network_violation_cases(order: WordOrder, prop: Property, inputs: tuple, outputs: tuple) -> list:
    """The violation for outputs known to be a permutation of the inputs (a comparator network's).

    See ``encodings/comparator-network-smt.md``: sorts and merges need only
    adjacent pairs, selects only pairs across position ``count``.
    """
    manager, n = order.manager, len(inputs)
    if isinstance(prop, Sorts):
        if prop.order == "descending":
            return [order.less(outputs[i], outputs[i + 1]) for i in range(n - 1)]
        return _adjacent_disorders(order, outputs)
    if isinstance(prop, Merges):
        m = prop.split
        runs = manager.And(order.ascending(inputs[:m]), order.ascending(inputs[m:]))
        return [manager.And(runs, case) for case in _adjacent_disorders(order, outputs)]
    if isinstance(prop, Selects):
        t = prop.count
        # The outputs are a permutation, so the first t outputs are the t smallest exactly when
        # none of them is larger than an output at a position >= t.
        cases = [order.less(outputs[q], outputs[p]) for p in range(t) for q in range(t, n)]
        return cases + (_adjacent_disorders(order, outputs[:t]) if prop.sorted else [])
    if isinstance(prop, Median):
        return _median_cases(order, inputs, outputs)
    raise TypeError(f"the smt engine has no encoding for {prop.describe()} on comparator networks")


def stable_rank(order: WordOrder, words: tuple, position: int, bits: int, keys: tuple | None = None) -> Any:
    """Where ``words[position]`` goes when ``words`` are sorted stably (by ``keys`` when given), in ``bits`` bits.

    The words before it in the stable order are the smaller ones and the
    equal ones at earlier positions; the ranks of all positions are
    ``0 .. len(words) - 1``, each once.
    """
    manager, keys = order.manager, keys if keys is not None else words
    own = keys[position]
    before = [order.less(key, own) if index > position else order.less_equal(key, own)
              for index, key in enumerate(keys) if index != position]
    return order.count(before, bits) if before else manager.BV(0, bits)


def _selected_multiset_cases(order: WordOrder, inputs: tuple, chosen: tuple) -> list:
    """Cases of ``chosen`` not being, as a multiset, the ``len(chosen)`` smallest inputs.

    ``chosen[p]`` goes to place ``r_p`` (:func:`stable_rank`) when ``chosen``
    is sorted, and the places are ``0 .. t - 1`` once each; so ``chosen`` is
    the ``t`` smallest exactly when every ``chosen[p]`` is the ``r_p``-th
    smallest input.
    """
    cases, bits = [], count_bits(len(inputs))
    for p, word in enumerate(chosen):
        cases += not_order_statistic(order, inputs, word, stable_rank(order, chosen, p, bits))
    return cases


def key_of(order: WordOrder, word: Any, key_bits: int) -> Any:
    """The ``key_bits`` most significant bits of ``word``; compared in ``order`` they order keys as values do."""
    width = word.bv_width()
    return order.manager.BVExtract(word, width - key_bits, width - 1)


def _stable_key_sort_cases(order: WordOrder, inputs: tuple, outputs: tuple, key_bits: int) -> list:
    """Cases of ``outputs`` differing from the inputs sorted stably by key: input ``i`` missing from its place."""
    manager, n = order.manager, len(inputs)
    keys = tuple(key_of(order, word, key_bits) for word in inputs)
    bits = count_bits(n)
    cases = []
    for i, word in enumerate(inputs):
        place = stable_rank(order, inputs, i, bits, keys)
        cases.append(manager.Or([manager.And(manager.Equals(place, manager.BV(p, bits)),
                                             manager.Not(manager.Equals(outputs[p], word))) for p in range(n)]))
    return cases


def circuit_violation_cases(order: WordOrder, prop: Property, inputs: tuple, outputs: tuple) -> list:
    """The violation for outputs that may be anything (a gate circuit's); see ``encodings/gate-circuit-smt.md``.

    Output ``p`` of a sorter must be the ``p``-th smallest input; the first
    ``count`` outputs of a selector the ``count`` smallest; a partial sorter's
    outputs a permutation of the inputs with ascending keys (or, stably, the
    inputs each at its place in the stable sort by key).
    """
    manager, n = order.manager, len(inputs)

    def statistics(places: range, rank_of) -> list:
        cases = []
        for p in places:
            cases += not_order_statistic(order, inputs, outputs[p], rank_of(p))
        return cases

    if isinstance(prop, Sorts):
        descending = prop.order == "descending"
        return statistics(range(n), (lambda p: n - 1 - p) if descending else (lambda p: p))
    if isinstance(prop, Merges):
        m = prop.split
        runs = manager.And(order.ascending(inputs[:m]), order.ascending(inputs[m:]))
        return [manager.And(runs, case) for case in statistics(range(n), lambda p: p)]
    if isinstance(prop, Selects):
        if prop.sorted:
            return statistics(range(prop.count), lambda p: p)
        return _selected_multiset_cases(order, inputs, outputs[:prop.count])
    if isinstance(prop, Median):
        return _median_cases(order, inputs, outputs)
    if isinstance(prop, PartialSort):
        if prop.stable:
            return _stable_key_sort_cases(order, inputs, outputs, prop.key_bits)
        keys = tuple(key_of(order, word, prop.key_bits) for word in outputs)
        return _adjacent_disorders(order, keys) + _selected_multiset_cases(order, inputs, outputs)
    raise TypeError(f"the smt engine has no encoding for {prop.describe()}")


def word_value(unsigned: int, width: int, signed: bool) -> int:
    """A model's bit pattern as the Python integer it stands for.

    >>> word_value(6, 3, False), word_value(6, 3, True)
    (6, -2)
    """
    return unsigned - (1 << width) if signed and unsigned >> (width - 1) else unsigned


def words_text(width: int, signed: bool) -> str:
    """``4-bit unsigned words (w = 4)``: the words a verdict speaks of."""
    kind = "two's complement" if signed else "unsigned"
    return f"{width}-bit {kind} words (w = {width})"


def cases_done(scope: str, done: int, cases: list) -> str:
    return f"{scope} ({done} of {len(cases)} cases of the violation were excluded before it stopped)"


def unknown_reason(said: str) -> tuple[StopReason, str]:
    """Stop reason and scope text for z3's reason for answering unknown.

    >>> unknown_reason("timeout")[0].value
    'timeout'
    """
    if any(word in said for word in ("timeout", "canceled", "cancelled")):
        return StopReason.TIMEOUT, "the SMT solver did not finish within the time budget; nothing is proved"
    if "memory" in said or "memout" in said:
        return StopReason.SIZE_LIMIT, f"the SMT solver ran out of memory ({said}); nothing is proved"
    return StopReason.UNSUPPORTED, f"the SMT solver answered unknown ({said or 'no reason given'}); nothing is proved"


def solver_name() -> str:
    import pysmt

    return f"z3 {z3.get_version_string()} via pysmt {pysmt.__version__}"


SOLVER_ERRORS = (PysmtException, z3.Z3Exception, MemoryError, RecursionError) if _MISSING is None else (MemoryError,)
"""What a failing solver raises; the engine turns it into an ``unknown`` verdict."""


def failure_text(error: BaseException) -> str:
    reason = f"{type(error).__name__}: {error}".rstrip(": ")
    return f"the SMT solver failed ({reason}); nothing is proved"

