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
                 assumptions: Sequence[int] = (), proof: list[str] | None = None) -> list[int] | None:
    """A model of ``clauses`` (under ``assumptions``), None when unsatisfiable; :class:`Interrupted` at the deadline.

    With a ``proof`` list, the solver logs a DRUP proof (it must support proof logging, as glucose does)
    and, when the clauses are unsatisfiable, its steps are appended to the list, one a line.

    >>> solve_within([[1, 2], [-1]], Budget())
    [-1, 2]
    >>> steps = []
    >>> solve_within([[1, 2], [-1, 2], [1, -2], [-1, -2]], Budget(), proof=steps) is None, steps[-1]
    (True, '0')
    """
    with Solver(name=solver, bootstrap_with=clauses, with_proof=proof is not None) as engine:
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
        if not answer and proof is not None:
            proof.extend(engine.get_proof() or ())
        return engine.get_model() if answer else None
