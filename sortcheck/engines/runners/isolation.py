"""Run an engine's check in a process that can be ended, to keep a time budget.

Some solvers cannot be interrupted once they are inside native code.  The
check then runs in a child process; when the deadline (plus a short grace)
passes, the child is killed and the verdict is ``unknown`` with
:attr:`StopReason.TIMEOUT`.  While waiting, the parent reports elapsed time
to the budget's progress callback.
"""

from __future__ import annotations

import multiprocessing
import time
import traceback
from typing import Any

from sortcheck.engines.base import Budget, Engine, Options, Status, StopReason, Verdict
from sortcheck.model import Netlist, Property

#: Seconds the child may run past the deadline before it is killed.
GRACE = 0.25

#: How often the parent wakes up to report progress and check the deadline.
POLL = 0.1


def _context() -> multiprocessing.context.BaseContext:
    methods = multiprocessing.get_all_start_methods()
    return multiprocessing.get_context("fork" if "fork" in methods else "spawn")


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


def check_in_child(engine: Engine, netlist: Netlist, prop: Property, budget: Budget, options: Options) -> Verdict:
    """Run ``engine.check`` in a child process that is killed if it overruns the budget."""
    started = time.monotonic()
    context = _context()
    receiver, sender = context.Pipe(duplex=False)
    child = context.Process(target=_child, args=(sender, engine, netlist, prop, budget.without_progress(), options),
                            daemon=True)
    child.start()
    sender.close()
    try:
        while True:
            if receiver.poll(POLL):
                try:
                    kind, payload = receiver.recv()
                except EOFError:
                    raise EngineFailure(f"the {engine.name} engine's process ended without an answer "
                                        f"(exit code {child.exitcode})") from None
                if kind == "error":
                    raise EngineFailure(f"the {engine.name} engine failed:\n{payload}")
                return payload
            elapsed = time.monotonic() - started
            budget.report(elapsed, budget.remaining() and elapsed + budget.remaining(), f"{engine.name}: solving")
            if budget.deadline is not None and time.monotonic() > budget.deadline + GRACE:
                return _timed_out(engine, prop, time.monotonic() - started)
            if not child.is_alive() and not receiver.poll(0):
                raise EngineFailure(f"the {engine.name} engine's process ended without an answer "
                                    f"(exit code {child.exitcode})")
    finally:
        if child.is_alive():
            child.kill()
        child.join(timeout=5)
        receiver.close()


def _timed_out(engine: Engine, prop: Property, seconds: float) -> Verdict:
    scope = (f"the {engine.name} engine had not finished when the time budget ran out and was stopped; "
             f"nothing is proved")
    return Verdict(Status.UNKNOWN, engine.name, prop, StopReason.TIMEOUT, scope, seconds,
                   figures={"seconds": seconds})
