"""One SAT call within a time budget, with a python-sat solver that can be interrupted."""

from __future__ import annotations

import threading
from typing import Sequence

from pysat.solvers import Solver

from sortcheck.engines.base import Budget, interruption

#: A python-sat solver whose ``interrupt`` works, so a deadline holds inside a call.
INTERRUPTIBLE_SOLVER = "glucose4"


class Interrupted(Exception):
    """The budget ran out before the solver answered."""


def solve_interruptibly(solver: Solver, assumptions: Sequence[int], seconds: float | None) -> bool | None:
    """One call of ``solver`` (python-sat, one whose ``interrupt`` works) that ends, with None, after ``seconds``
    (None: no limit) or when the run is interrupted (:data:`~sortcheck.engines.base.interruption`).

    The call releases the interpreter lock (``expect_interrupt``), so the thread that hears of a
    signal can interrupt it; the solver is ready for another call afterwards.  A solver without
    limited calls (lingeling) runs a plain call, which nothing interrupts.

    >>> with Solver(name="glucose4", bootstrap_with=[[1, 2], [-1]]) as solver:
    ...     solve_interruptibly(solver, [-2], None), solve_interruptibly(solver, [], 5.0)
    (False, True)
    """
    timer = None if seconds is None else threading.Timer(seconds, solver.interrupt)
    with interruption.calling(solver.interrupt):
        if timer is not None:
            timer.start()
        try:
            return solver.solve_limited(assumptions=list(assumptions), expect_interrupt=True)
        except NotImplementedError:  # lingeling: no limited calls, so neither a deadline nor a signal reaches it
            return solver.solve(assumptions=list(assumptions))
        finally:
            if timer is not None:
                timer.cancel()
            solver.clear_interrupt()


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
        if remaining is not None and remaining <= 0 or budget.expired():
            raise Interrupted
        answer = solve_interruptibly(engine, assumptions, remaining)
        if answer is None:
            raise Interrupted
        if not answer and proof is not None:
            proof.extend(engine.get_proof() or ())
        return engine.get_model() if answer else None
