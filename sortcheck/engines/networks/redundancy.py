"""Comparators that never exchange anything, proved by SAT.

A comparator ``(a, b)`` swaps on some input of any values exactly when it
swaps on some 0-1 input (threshold the input at the larger of the two values
that meet it), that is when some 0-1 input puts 1 on channel ``a`` and 0 on
channel ``b`` just before it.  One incremental solver holds the whole network;
each comparator is one query under the assumptions ``x_a = 1, x_b = 0`` on
the wires before it.  Random 0-1 inputs first rule out every comparator they
see swapping, and each comparator proved redundant adds the clause
``x_a -> x_b``, which later queries reuse.

>>> from sortcheck.model import ComparatorNetwork
>>> from sortcheck.engines.base import Budget
>>> redundant_comparators(ComparatorNetwork(3, ((0, 1), (0, 1), (1, 2), (0, 2))), Budget())
[1, 3]
"""

from __future__ import annotations

import numpy as np
from pysat.solvers import Solver

from sortcheck.engines.base import Budget
from sortcheck.engines.networks.cnf import encode_network
from sortcheck.engines.solving import solve_interruptibly
from sortcheck.model import ComparatorNetwork

#: An interruptible python-sat solver, so the budget's deadline holds.
SOLVER = "glucose4"


def swapping_seen(network: ComparatorNetwork, lanes: int = 4096, seed: int = 11) -> set[int]:
    """Indices of comparators that swap on some of ``lanes`` random 0-1 inputs (a cheap filter)."""
    rng = np.random.default_rng(seed)
    n = network.channels
    weights = rng.integers(0, n + 1, size=lanes)
    bits = rng.random((lanes, n)).argsort(axis=1).argsort(axis=1) < weights[:, None]
    packed = np.ascontiguousarray(np.packbits(bits.T, axis=1, bitorder="little")).view("<u8")
    rows = [packed[c].copy() for c in range(n)]
    seen = set()
    for index, (a, b) in enumerate(network.comparators):
        low, high = rows[a], rows[b]
        if np.any(low & ~high):
            seen.add(index)
        rows[a], rows[b] = low & high, low | high
    return seen


def redundant_comparators(network: ComparatorNetwork, budget: Budget, solver: str = SOLVER) -> list[int] | None:
    """Indices of the comparators that never swap on any input, or None if the budget ran out.

    Parameters
    ----------
    network : ComparatorNetwork
    budget : Budget
        Its deadline interrupts the solver.
    solver : str
        python-sat solver name; it must support ``interrupt`` for the
        deadline to hold inside a query.

    Returns
    -------
    list of int or None
        Indices into ``network.comparators``, ascending.
    """
    encoding = encode_network(network)
    seen = swapping_seen(network)
    redundant: list[int] = []
    with Solver(name=solver, bootstrap_with=encoding.clauses) as sat:
        for index, before_low, before_high in encoding.before:
            if index in seen:
                continue
            remaining = budget.remaining()
            if remaining is not None and remaining <= 0 or budget.expired():
                return None
            answer = solve_interruptibly(sat, [before_low, -before_high], remaining)
            if answer is None:
                return None
            if answer is False:
                redundant.append(index)
                sat.add_clause([-before_low, before_high])
    return redundant
