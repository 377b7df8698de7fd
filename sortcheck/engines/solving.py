"""One SAT call within a time budget, with a python-sat solver that can be interrupted."""

from __future__ import annotations

import threading
from typing import Sequence

from pysat.solvers import Solver

from sortcheck.engines.base import Budget

#: A python-sat solver whose ``interrupt`` works, so a deadline holds inside a call.
INTERRUPTIBLE_SOLVER = "glucose4"


class Interrupted(Exception):
    """The budget ran out before the solver answered."""


def solve_within(clauses: Sequence[Sequence[int]], budget: Budget, solver: str = INTERRUPTIBLE_SOLVER,
                 assumptions: Sequence[int] = ()) -> list[int] | None:
    """A model of ``clauses`` (under ``assumptions``), None when unsatisfiable; :class:`Interrupted` at the deadline.

    >>> solve_within([[1, 2], [-1]], Budget())
    [-1, 2]
    >>> solve_within([[1], [-1]], Budget()) is None
    True
    """
    with Solver(name=solver, bootstrap_with=clauses) as engine:
        remaining = budget.remaining()
        if remaining is not None and remaining <= 0:
            raise Interrupted
        if remaining is None:
            answer = engine.solve(assumptions=list(assumptions))
        else:
            timer = threading.Timer(remaining, engine.interrupt)
            timer.start()
            try:
                answer = engine.solve_limited(assumptions=list(assumptions), expect_interrupt=True)
            finally:
                timer.cancel()
        if answer is None:
            raise Interrupted
        return engine.get_model() if answer else None
