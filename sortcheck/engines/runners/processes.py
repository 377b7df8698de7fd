"""Every child process sortcheck starts is started here, bound to its parent, and ended here.

A child must never outlive the process that started it, whatever ends that
process (a return, an exception, SIGTERM, SIGKILL).  :func:`start` runs the
child's work behind :func:`bind_to_parent`, which, in the child, before any
work:

* asks Linux for SIGKILL when the parent dies (``prctl(PR_SET_PDEATHSIG)``
  through ctypes), then checks that the parent is still the one that started
  it (the parent may have died before ``prctl`` ran: the child then ends at
  once); where there is no such call, a thread of the child asks every
  :data:`PARENT_POLL_SECONDS` whether its parent changed and ends it if so;
* ignores SIGINT: a Ctrl-C at a terminal reaches the whole process group, and
  deciding what an interruption means is the parent's business (it ends its
  children itself; see :mod:`sortcheck.engines.runners.interrupts`).  SIGTERM
  keeps its default action, so a child ends at once when the group is sent it
  (as ``timeout`` does).

Linux sends the parent-death signal when the *thread* that started the child
ends, not only the process: start children from the thread that waits for
them (every runner here does).  Children stay in the parent's process group,
so a signal to the group reaches them too.  A child that starts children of
its own (a worker that runs an isolated engine) binds them the same way, so a
chain of them ends link by link.  Every child is ended with SIGKILL and
joined (:meth:`Worker.stop`, :func:`end`), so none is left a zombie;
:func:`ending_children` ends any a block started that still run (the command
line runs every command in it), :func:`end_all` every one.

An external program (``drat-trim``) is run by :func:`run_program`, which
sets the same parent-death signal between fork and exec
(:mod:`sortcheck.load.external`, where the Verilog front end runs Yosys).

Workers are forked where ``fork`` exists, so they inherit what the parent
prepared; elsewhere they are spawned (and the ``spawn`` machinery's resource
tracker ends when its last user does).  :class:`Worker` is a child that runs
the calls it is sent over a pipe, one at a time; :func:`run_calls` runs a
list of calls on a few of them (files checked ``--jobs`` at a time).
"""

from __future__ import annotations

import contextlib
import ctypes
import multiprocessing
import multiprocessing.connection
import os
import signal
import subprocess
import sys
import threading
import time
import traceback
from typing import Any, Callable, Iterator, Sequence

from sortcheck.engines.base import interruption
from sortcheck.load import external

#: ``prctl`` option that sets the signal a process gets when its parent dies (linux/prctl.h).
PR_SET_PDEATHSIG = external.PR_SET_PDEATHSIG

#: How often a child asks whether its parent is alive, where the parent-death signal does not exist.
PARENT_POLL_SECONDS = 0.5

#: Exit status of a child that found its parent gone before it began.
ORPHANED = external.ORPHANED

#: How often :func:`run_calls` wakes up to ask whether to stop and to report.
WAIT_SECONDS = 0.1

_started: set[multiprocessing.process.BaseProcess] = set()


def context() -> multiprocessing.context.BaseContext:
    """The multiprocessing context of every child: ``fork`` where it exists, else ``spawn``."""
    methods = multiprocessing.get_all_start_methods()
    return multiprocessing.get_context("fork" if "fork" in methods else "spawn")


def _parent_death_signal(signal_number: int) -> bool:
    """Ask Linux to send ``signal_number`` to this process when its parent dies; whether that worked."""
    if not sys.platform.startswith("linux"):
        return False
    try:
        libc = ctypes.CDLL(None, use_errno=True)
        return libc.prctl(PR_SET_PDEATHSIG, signal_number, 0, 0, 0) == 0
    except (OSError, AttributeError):
        return False


def _watch_parent(parent: int) -> None:
    while True:
        time.sleep(PARENT_POLL_SECONDS)
        if os.getppid() != parent:
            os._exit(ORPHANED)


def bind_to_parent(parent: int) -> None:
    """In a child: end when process ``parent`` ends, and leave SIGINT to it (see the module text)."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    try:
        signal.set_wakeup_fd(-1)  # a forked child inherits the parent's, which is the parent's to read
    except ValueError:  # not the main thread: the caller's business
        pass
    interruption.watched = False  # a forked copy: this process catches no signals
    if not _parent_death_signal(signal.SIGKILL):
        threading.Thread(target=_watch_parent, args=(parent,), name="sortcheck-parent-watch", daemon=True).start()
    if os.getppid() != parent:  # the parent died before the request above took effect
        os._exit(ORPHANED)


def _entry(parent: int, target: Callable, args: tuple) -> None:
    bind_to_parent(parent)
    target(*args)


def start(target: Callable, *args: Any, name: str | None = None) -> multiprocessing.process.BaseProcess:
    """Start ``target(*args)`` in a child process bound to this one (see :func:`bind_to_parent`)."""
    process = context().Process(target=_entry, args=(os.getpid(), target, args), name=name, daemon=True)
    process.start()
    _started.add(process)
    return process


def end(process: multiprocessing.process.BaseProcess) -> None:
    """End ``process`` (SIGKILL) if it runs, and reap it."""
    try:
        if process.is_alive():
            process.kill()
        process.join(timeout=5)
    except ValueError:  # already closed
        pass
    _started.discard(process)


def end_all() -> None:
    """End every child started here that still runs (the last thing the command line does)."""
    for process in list(_started):
        end(process)


@contextlib.contextmanager
def ending_children() -> Iterator[None]:
    """End, when the block ends (however it ends), every child started here during the block that still runs."""
    before = set(_started)
    try:
        yield
    finally:
        for process in list(_started):
            if process not in before:
                end(process)


def run_program(argv: Sequence[str], seconds: float) -> subprocess.CompletedProcess:
    """Run an external program to its end, bound to this process (:func:`sortcheck.load.external.run_program`).

    It is ended, and ``subprocess.TimeoutExpired`` raised, after ``seconds``
    or as soon as the run is interrupted.

    >>> run_program([sys.executable, "-c", "print(6 * 7)"], 60).stdout
    '42\\n'
    """
    return external.run_program(argv, seconds, stopped=interruption.requested)


def running() -> list[int]:
    """Process ids of the children started here that still run."""
    alive = []
    for process in list(_started):
        try:
            if process.is_alive():
                alive.append(process.pid)
        except ValueError:
            pass
    return alive


def _serve(connection: Any) -> None:
    """A worker process: run the calls it is sent, answer each, until told to stop (None) or its parent goes."""
    while True:
        try:
            message = connection.recv()
        except (EOFError, OSError):
            return
        if message is None:
            return
        task, function, args = message
        try:
            answer = ("result", function(*args))
        except BaseException as error:  # reported to the parent, which raises it there
            answer = ("error", "".join(traceback.format_exception(error)).strip())
        connection.send((task, answer))


class Worker:
    """A child process that runs the calls it is sent, one at a time, and answers each.

    ``task`` is what the worker runs now (None when idle); :meth:`receive`
    returns ``(task, kind, payload)`` with kind ``"result"`` or ``"error"``
    (the call raised: the payload is the traceback's text) and raises
    ``EOFError`` when the process ended without an answer.

    >>> worker = Worker()
    >>> worker.send("sum", sum, [1, 2, 3])
    >>> worker.receive(), worker.task
    (('sum', 'result', 6), None)
    >>> worker.close(); worker.process.exitcode
    0
    """

    def __init__(self):
        self.connection, child_end = context().Pipe()
        self.process = start(_serve, child_end, name="sortcheck-worker")
        child_end.close()
        self.task: Any = None

    def send(self, task: Any, function: Callable, *args: Any) -> None:
        self.task = task
        self.connection.send((task, function, args))

    def receive(self) -> tuple[Any, str, Any]:
        try:
            task, (kind, payload) = self.connection.recv()
        except OSError:
            raise EOFError("the worker's pipe broke") from None
        self.task = None
        return task, kind, payload

    def stop(self) -> None:
        """End the process now (whatever it runs) and reap it."""
        end(self.process)
        self.connection.close()

    def close(self) -> None:
        """Let an idle worker leave by itself, then make sure it is gone."""
        try:
            self.connection.send(None)
            self.process.join(timeout=1)
        except OSError:
            pass
        self.stop()


def run_calls(calls: Sequence[tuple[Callable, tuple]], jobs: int, stopped: Callable[[], bool],
              waiting: Callable[[list[int], int], None] | None = None, grace: float = 0.0
              ) -> list[tuple[str, Any] | None]:
    """Run ``function(*args)`` for every call on at most ``jobs`` worker processes, in order of the list.

    Returns, by call, ``("result", value)``, ``("error", text)`` (it raised,
    or its process ended without an answer), ``("unfinished", None)`` (it
    was running when ``stopped()`` turned true and gave no answer in time) or
    None (not started).  When ``stopped()`` turns true the running workers
    are sent SIGTERM and given ``grace`` seconds to answer (a call that
    catches it, as the command line's file checks do, answers with what it
    covered), then ended.  ``waiting(running, finished)`` is called at every
    wake-up with the indices of the calls running and how many have finished.

    >>> run_calls([(pow, (2, 10)), (divmod, (7, 2))], 2, lambda: False)
    [('result', 1024), ('result', (3, 1))]
    """
    answers: list[tuple[str, Any] | None] = [None] * len(calls)
    queue = list(range(len(calls)))[::-1]
    busy: dict[Any, Worker] = {}
    idle: list[Worker] = []
    try:
        while queue or busy:
            if stopped():
                _collect(busy, answers, grace)
                break
            while queue and len(busy) < jobs:
                number = queue.pop()
                worker = idle.pop() if idle else Worker()
                function, args = calls[number]
                worker.send(number, function, *args)
                busy[worker.connection] = worker
            if waiting is not None:
                waiting(sorted(worker.task for worker in busy.values()), sum(a is not None for a in answers))
            for connection in multiprocessing.connection.wait(list(busy), timeout=WAIT_SECONDS):
                worker = busy.pop(connection)
                number = worker.task
                try:
                    _, kind, payload = worker.receive()
                except EOFError:  # ended without an answer (by a signal to the group if the run is stopped)
                    answers[number] = ("unfinished", None) if stopped() else (
                        "error", f"the worker process ended without an answer (exit code {worker.process.exitcode})")
                    worker.stop()
                    continue
                answers[number] = (kind, payload)
                idle.append(worker)
    finally:
        for worker in busy.values():
            worker.stop()
        for worker in idle:
            worker.close()
    return answers


def _collect(busy: dict[Any, Worker], answers: list, grace: float) -> None:
    """Send the running workers SIGTERM and keep the answers they give within ``grace`` seconds."""
    for worker in busy.values():
        answers[worker.task] = ("unfinished", None)
        if grace > 0:
            worker.process.terminate()
    until = time.monotonic() + grace
    while busy and time.monotonic() < until:
        for connection in multiprocessing.connection.wait(list(busy), timeout=max(0.0, until - time.monotonic())):
            worker = busy.pop(connection)
            number = worker.task
            try:
                _, kind, payload = worker.receive()
                answers[number] = (kind, payload)
            except EOFError:
                pass
            worker.stop()


__all__ = ["ORPHANED", "Worker", "bind_to_parent", "context", "end", "end_all", "ending_children", "run_calls",
           "run_program", "running", "start"]
