"""Least failing 0-1 inputs of a network, searched over the counts of ones of its proved sorting parts.

The ``sat`` engine splits a network along its structure
(:func:`sortcheck.engines.networks.sat.proved_frontier`): just below the root lie
parts ``G_1 .. G_k`` on disjoint channel sets that cover every channel, each
proved, together with everything below it, to sort its channels from any
input; the comparators ``S`` that remain act after them.  So, writing ``P``
for the comparators of the parts,

* ``N(x) = S(P(x))``, and ``P(x)`` depends only on the counts
  ``c_i`` = ones of ``x`` on ``G_i``: it holds, on each ``G_i``, the sorted
  run ``y(c)`` with ``c_i`` ones (in the part's order), and leaves the count
  of ones of ``x`` unchanged (comparators keep it);
* the properties handled here (sorts, selects, median) judge a 0-1 input by
  its outputs alone, so ``x`` fails exactly when ``S`` breaks the property
  on ``y(c)``;
* the measure of ``x`` (fewest ones or zeros) is ``min(sum c, n - sum c)``,
  the same for every input with counts ``c``.

Hence the least measure of a failing input is the least
``min(sum c, n - sum c)`` over the count vectors ``c`` on which ``S`` fails,
and ``y(c)`` itself is a failing input of that measure (a sorter maps a
sorted input to itself, so ``N(y(c)) = S(y(c))``).  When the count vectors
are few (``prod(|G_i| + 1)`` at most :data:`ENUMERATION_LIMIT`) every one of
them is evaluated bit-parallel; otherwise a SAT solver answers, on the CNF
of ``S`` with each group's inputs constrained to a sorted run (the engine's
own part CNF), whether a failing input of measure at most ``k`` exists, for
``k`` one below the best so far, until it is unsatisfiable.  Only parts the
engine proved are used; parts it dissolved are looked through.
"""

from __future__ import annotations

import numpy as np
from pysat.card import CardEnc, EncType
from pysat.formula import IDPool

from sortcheck.engines.base import Budget
from sortcheck.engines.networks.bitslice import apply_network, failure_mask
from sortcheck.engines.networks.split import SortedParts
from sortcheck.engines.networks.cnf import part_clauses
from sortcheck.engines.networks.sat import proved_frontier
from sortcheck.engines.solving import Interrupted, solve_within
from sortcheck.explain.shrink import zero_one_measure
from sortcheck.model import ComparatorNetwork, Median, Property, Selects, Sorts

#: Most count vectors evaluated one by one; beyond that the solver searches them.
ENUMERATION_LIMIT = 1 << 22

#: Count vectors per bit-parallel batch (a multiple of 64).
LANES = 1 << 16


def fits(prop: Property) -> bool:
    """Whether ``prop`` judges a 0-1 input by its outputs alone, as the argument above needs.

    >>> from sortcheck.model import Merges
    >>> fits(Sorts()), fits(Merges(2))
    (True, False)
    """
    return isinstance(prop, (Sorts, Selects, Median))


def _ones_per_lane(source: SortedParts, start: int, lanes: int) -> np.ndarray:
    """The total count of ones of count vectors ``start .. start+lanes-1`` (vector 0 past the end)."""
    index = np.arange(start, start + lanes, dtype=np.int64)
    index[max(0, source.total - start):] = 0
    total = np.zeros(lanes, dtype=np.int64)
    for (members, _), stride in zip(source.groups, source.strides):
        total += (index // stride) % (len(members) + 1)
    return total


def enumerate_counts(network: ComparatorNetwork, prop: Property, groups: list, comparators: list[int],
                     budget: Budget) -> tuple[int, ...] | None:
    """A failing input of least measure among all count vectors of ``groups`` (None if none fails).

    >>> net = ComparatorNetwork(4, ((0, 1), (2, 3), (0, 2), (1, 3)))   # misses the middle comparator
    >>> enumerate_counts(net, Sorts(), [((0, 1), "ascending"), ((2, 3), "ascending")], [2, 3], Budget())
    (0, 1, 0, 1)
    """
    n, source = network.channels, SortedParts(groups)
    lanes = min(LANES, -(-source.total // 64) * 64)
    rows = [np.zeros(lanes // 64, dtype=np.uint64) for _ in range(n)]
    scratch = np.empty(lanes // 64, dtype=np.uint64)
    pairs = [network.comparators[i] for i in comparators]
    best, best_measure = None, n + 1
    for start in range(0, source.total, lanes):
        if budget.expired():
            raise Interrupted
        valid = source.fill(start, lanes, rows)
        scratch = apply_network(rows, pairs, scratch)
        fails = np.unpackbits(failure_mask(prop, rows).view(np.uint8), bitorder="little")[:valid].astype(bool)
        if not fails.any():
            continue
        ones = _ones_per_lane(source, start, lanes)[:valid]
        measures = np.where(fails, np.minimum(ones, n - ones), n + 1)
        lane = int(np.argmin(measures))
        if measures[lane] < best_measure:
            best, best_measure = source.vector(start + lane, n), int(measures[lane])
    return best


def lower_by_sat(clauses: list, inputs: list[int], pool: IDPool, floor: int, best: tuple[int, ...],
                 budget: Budget) -> tuple[tuple[int, ...], int]:
    """Lower the measure of ``best`` with a SAT solver on ``clauses`` (failing inputs), down to ``floor``.

    ``inputs`` are the input variables by channel.  Each query asks for a
    failing input with at most ``k`` ones or at most ``k`` zeros
    (cardinality constraints behind two selectors), for ``k`` one below the
    best measure so far: satisfiable queries are usually quick and only the
    last, unsatisfiable one proves minimality.  Returns the best input and
    the measure below which no failing input exists (``floor`` if the budget
    ran out first).

    >>> found, covered = lower_by_sat([[1, 2], [-4]], [1, 2, 3, 4], IDPool(start_from=5), 0, (1, 1, 0, 0), Budget())
    >>> zero_one_measure(found), covered      # one 1 on channel 0 or 1 (or one 0, on channel 3)
    (1, 1)
    """
    while zero_one_measure(best) > floor:
        bound = zero_one_measure(best) - 1
        clauses_now = list(clauses)
        selectors = []
        for side, literals in (("ones", inputs), ("zeros", [-x for x in inputs])):
            selector = pool.id(("measure", side, bound))
            selectors.append(selector)
            cardinality = CardEnc.atmost(literals, bound=bound, vpool=pool, encoding=EncType.seqcounter)
            clauses_now += [[-selector] + clause for clause in cardinality.clauses]
        try:
            model = solve_within(clauses_now + [selectors], budget)
        except Interrupted:
            return best, floor
        if model is None:
            return best, bound + 1
        true = {literal for literal in model if literal > 0}
        best = tuple(int(x in true) for x in inputs)
    return best, floor


def search_by_structure(network: ComparatorNetwork, prop: Property, floor: int, best: tuple[int, ...],
                        budget: Budget) -> tuple[tuple[int, ...], int] | None:
    """The least failing input, from the proved parts below the root; None when the argument does not apply.

    ``best`` is a failing input and no failing input has measure below
    ``floor``; ``lower_by_sat(clauses, inputs, pool, floor, best, budget)``
    lowers ``best`` with a solver on the given CNF.  Returns the best input
    found and the measure below which no failing input exists (``floor``
    when the budget runs out first).

    >>> net = ComparatorNetwork(4, ((0, 1), (2, 3), (0, 2), (1, 3)))
    >>> search_by_structure(net, Sorts(), 0, (1, 1, 0, 1), Budget())
    ((0, 1, 0, 1), 2)
    """
    if not fits(prop):
        return None
    try:
        groups, comparators = proved_frontier(network, budget)
        if sorted(c for members, _ in groups for c in members) != list(range(network.channels)):
            return None
        if SortedParts(groups).total <= ENUMERATION_LIMIT:
            found = enumerate_counts(network, prop, groups, comparators, budget)
            if found is None:
                raise AssertionError(f"internal error: no count vector fails, yet {best} does")
            return found, zero_one_measure(found)
    except Interrupted:
        return best, floor
    pool = IDPool()
    clauses, inputs = part_clauses(network, groups, comparators, prop, pool)
    if clauses is None:
        raise AssertionError(f"internal error: {prop.describe()} cannot fail, yet {best} does")
    return lower_by_sat(clauses, inputs, pool, floor, best, budget)
