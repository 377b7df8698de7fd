"""Run an engine's check in a process that can be ended, to keep a time budget or stop at an interruption.

Some solvers cannot be interrupted once they are inside native code.  The
check then runs in a child process (started by
:mod:`sortcheck.engines.runners.processes`); when the deadline (plus a short
grace) passes, or the budget expires otherwise (the run was interrupted),
the child is killed and the verdict is ``unknown`` with
:attr:`StopReason.TIMEOUT` (which the report words as an interruption when it
was one).  While waiting, the parent reports elapsed time to the budget's
progress callback.
"""

from __future__ import annotations

import time
import traceback
from typing import Any

from sortcheck.engines.base import Budget, Engine, Options, Status, StopReason, Verdict, interruption
from sortcheck.engines.runners import processes
from sortcheck.model import Netlist, Property

#: Seconds the child may run past the deadline before it is killed.
GRACE = 0.25

#: How often the parent wakes up to report progress and check the deadline.
POLL = 0.1


def _child(connection: Any, engine: Engine, netlist: Netlist, prop: Property, budget: Budget,
           options: Options) -> None:
    try:
        connection.send(("verdict", engine.check(netlist, prop, budget, options)))
    except BaseException as error:  # reported to the parent, which raises it there
        connection.send(("error", "".join(traceback.format_exception(error)).strip()))
    finally:
        connection.close()


class EngineFailure(RuntimeError):
    """An engine raised inside the child process (an internal error, not bad input)."""


def needs_child(engine: Engine, budget: Budget) -> bool:
    """Whether ``engine``'s check runs in a child process under ``budget``.

    An engine that cannot stop itself (``cooperative`` False), or has steps
    that cannot be interrupted (``isolate``), runs in one when there is a
    deadline; one that cannot stop itself also when the run can be
    interrupted by a signal (the command line catches them), so that the
    interruption ends it.
    """
    isolated = not engine.cooperative or getattr(engine, "isolate", False)
    return isolated and budget.deadline is not None or not engine.cooperative and interruption.watched


def may_start_children() -> bool:
    """Whether this process may start a child: not in a worker (a daemon), which its own parent ends instead."""
    return not processes.context().current_process().daemon


def check_in_child(engine: Engine, netlist: Netlist, prop: Property, budget: Budget, options: Options) -> Verdict:
    """Run ``engine.check`` in a child process that is killed if it overruns the budget."""
    started = time.monotonic()
    receiver, sender = processes.context().Pipe(duplex=False)
    child = processes.start(_child, sender, engine, netlist, prop, budget.without_progress(), options,
                            name=f"sortcheck-{engine.name}")
    sender.close()
    try:
        while True:
            if receiver.poll(POLL):
                try:
                    kind, payload = receiver.recv()
                except EOFError:
                    if interruption.requested():  # a signal to the process group ended it too
                        return _timed_out(engine, prop, time.monotonic() - started)
                    raise EngineFailure(f"the {engine.name} engine's process ended without an answer "
                                        f"(exit code {child.exitcode})") from None
                if kind == "error":
                    raise EngineFailure(f"the {engine.name} engine failed:\n{payload}")
                return payload
            elapsed = time.monotonic() - started
            budget.report(elapsed, budget.remaining() and elapsed + budget.remaining(), f"{engine.name}: solving")
            if budget.deadline is not None and time.monotonic() > budget.deadline + GRACE or interruption.requested():
                return _timed_out(engine, prop, time.monotonic() - started)
            if not child.is_alive() and not receiver.poll(0):
                raise EngineFailure(f"the {engine.name} engine's process ended without an answer "
                                    f"(exit code {child.exitcode})")
    finally:
        processes.end(child)
        receiver.close()


def _timed_out(engine: Engine, prop: Property, seconds: float) -> Verdict:
    scope = (f"the {engine.name} engine had not finished when the time budget ran out and was stopped; "
             f"nothing is proved")
    return Verdict(Status.UNKNOWN, engine.name, prop, StopReason.TIMEOUT, scope, seconds,
                   figures={"seconds": seconds})
