"""Inputs read off a BDD: the satisfying assignment of fewest one bits, and plain node counts.

:func:`fewest_ones` is a shortest-path computation over the BDD: a path from
the root to the constant true fixes the variables on it, every variable it
skips is free, and setting a free variable to 0 costs nothing.  So the
fewest ones of any satisfying assignment is the least number of high edges
on a path to true, computed once per node (bottom up, memoised); among the
assignments of that weight the one returned takes the low edge whenever
that is no worse, which makes it the least in the order of the variables
(0 before 1, top variable first).  The result depends only on the function
and the variable order, not on the backend.

Both backends use complemented edges; a node's ``low``/``high`` are its
regular children, so a complemented function's cofactors are their negations.

>>> from sortcheck.engines.gates.bdd.manager import BddManager
>>> manager = BddManager(["a", "b", "c"], backend="python")
>>> a, b, c = (manager.variable(name) for name in "abc")
>>> f = manager.or_(manager.and_(a, b), c)
>>> fewest_ones(manager, f)
(1, {'c': True})
>>> fewest_ones(manager, manager.false) is None
True
>>> plain_size(manager, [f]), plain_size(manager, [manager.not_(f)])
(5, 5)
"""

from __future__ import annotations

import math
from typing import Any, Sequence

from sortcheck.engines.gates.bdd.manager import BddManager


def _cofactors(manager: BddManager, u: Any) -> tuple[Any, Any]:
    """The functions of ``u`` with its top variable 0 and 1."""
    low, high = u.low, u.high
    if u.negated:
        return manager.not_(low), manager.not_(high)
    return low, high


def _weights(manager: BddManager, root: Any) -> dict:
    """Fewest high edges to the constant true from every node under ``root`` (``inf`` when none reaches it)."""
    weight: dict = {manager.true: 0, manager.false: math.inf}
    stack = [root]
    children: dict = {}
    while stack:
        u = stack[-1]
        if u in weight:
            stack.pop()
            continue
        if u not in children:
            children[u] = _cofactors(manager, u)
        low, high = children[u]
        pending = [child for child in (low, high) if child not in weight]
        if pending:
            stack.extend(pending)
            continue
        weight[u] = min(weight[low], weight[high] + 1)
        stack.pop()
    return weight


def fewest_ones(manager: BddManager, function: Any) -> tuple[int, dict[str, bool]] | None:
    """The least number of true variables of a satisfying assignment, and the least such assignment.

    Returns None for the constant false.  The assignment lists the variables
    set to true (and those on the chosen path set to false are left out: every
    variable not listed is false).
    """
    weight = _weights(manager, function)
    if weight[function] == math.inf:
        return None
    chosen: dict[str, bool] = {}
    u = function
    while not manager.is_true(u):
        low, high = _cofactors(manager, u)
        if weight[low] <= weight[high] + 1:
            u = low
        else:
            chosen[u.var] = True
            u = high
    return int(weight[function]), chosen


def plain_size(manager: BddManager, functions: Sequence[Any]) -> int:
    """Nodes of the shared ROBDD of ``functions`` *without* complemented edges, both constants included.

    Every node of such a BDD is a distinct function, so this count does not
    depend on how a backend stores complements (the golden file records it).
    """
    seen: set = set()
    stack = list(functions)
    while stack:
        u = stack.pop()
        if u in seen:
            continue
        seen.add(u)
        if not (manager.is_true(u) or manager.is_false(u)):
            stack.extend(_cofactors(manager, u))
    return len(seen)
