"""Run the pieces of a split check: in this process, on local worker processes, or on a Dask cluster.

:func:`check_split` is :func:`sortcheck.engines.check` with a *runner*: when
the chosen engine offers ``pieces`` (see :mod:`sortcheck.engines.runners.pieces`)
and splits the check, the runner runs the pieces and
:func:`~sortcheck.engines.runners.pieces.combine` makes one verdict of them; otherwise
the check runs whole, in this process.  Every runner gives the same verdict,
counterexample and counts: the first refuted piece in piece order decides,
so pieces before it always finish and pieces after it are cancelled.  A
*race* (:class:`~sortcheck.engines.runners.pieces.Race`: whole strategies for
one check, side by side) ends when any piece is proved or refuted.

* :class:`InProcess` runs the pieces one after another here.
* :class:`LocalProcesses` runs them on worker processes it starts and ends
  itself (through :mod:`sortcheck.engines.runners.processes`: they never
  outlive this process): a piece that is no longer needed (a counterexample
  came from an earlier piece, the deadline passed, or the run was
  interrupted) is stopped by ending its process, which also stops a solver
  stuck in native code.
* :class:`DaskCluster` submits them to a ``dask.distributed`` scheduler,
  earlier pieces with higher priority.  Dask cancels only pieces not yet
  started, so running pieces poll a ``distributed.Variable`` holding the
  number of the first refuted piece (through their budget's ``stopped``
  condition, at most every :data:`POLL_SECONDS`) and whether the scheduler
  still wants their result (it does not once they are cancelled or their
  client is gone, killed or not), and a piece whose worker dies is run
  again by Dask.  The workers are not ours: sortcheck starts no Dask
  process, and never ends one.  Pieces run in a worker's thread: an engine
  step that cannot be interrupted (building a large CNF) runs on until it
  returns, though nobody waits for it.  Each worker repeats the engine's
  preparation (for ``enumerate``, the reduction) once per check.
"""

from __future__ import annotations

import ctypes
import multiprocessing.connection
import os
import sys
import time
import uuid
from collections import deque
from typing import Any, Sequence

from sortcheck.engines import check, choose_engine, get_engine
from sortcheck.engines.base import Budget, Options, Progress, Verdict
from sortcheck.engines.runners import processes
from sortcheck.engines.runners.isolation import EngineFailure, check_in_child, needs_child
from sortcheck.engines.runners.pieces import Race, combine, decisive, job_data, remember_netlist, run_job
from sortcheck.errors import UsageError
from sortcheck.model import DEFAULT_PROPERTY, Netlist, Property, check_fits

#: How often a waiting runner wakes up (deadline, progress), and how often a Dask piece asks whether to stop.
POLL_SECONDS = 0.1

#: A piece whose local worker process dies is tried this many times in all.
ATTEMPTS = 2


class InProcess:
    """Run pieces one after another in this process (stopping at the first refuted piece unless counting).

    With ``splits`` False (the runner of ``--jobs 1``) :func:`check_split` runs
    every check whole instead, which is the same work without the pieces.
    """

    def __init__(self, ran_on: str = "this process", splits: bool = True):
        self.ran_on = ran_on
        self.splits = splits

    def run(self, engine, jobs: Sequence[dict], budget: Budget, complete: bool, race: bool = False
            ) -> list[Verdict | None]:
        verdicts: list[Verdict | None] = [None] * len(jobs)
        for number, data in enumerate(jobs):
            if budget.expired():
                break
            budget.report(number, len(jobs), f"{engine.name}: pieces")
            verdicts[number] = run_job(engine, data, budget.stopped)
            if decisive(verdicts[number], race) and not complete:
                break
        return verdicts

    def close(self) -> None:
        pass

    def __enter__(self):
        return self

    def __exit__(self, *exc) -> None:
        self.close()


class LocalProcesses:
    """Run pieces on ``jobs`` worker processes of this machine, started for each check.

    The workers (:class:`~sortcheck.engines.runners.processes.Worker`: bound
    to this process, which they never outlive) are forked when a check's
    pieces are known, so they inherit what the engine prepared in finding
    them (for ``enumerate``, the reduction) instead of repeating it (where
    only ``spawn`` exists, they repeat it).  Pieces are handed out in piece
    order, one per idle worker.  When a piece is refuted (and not every piece
    is needed, as for counting), the workers running later pieces are ended
    at once; when the budget expires (the deadline, or an interruption) every
    worker still running is ended, and the pieces it ran stay unfinished.
    """

    def __init__(self, jobs: int):
        if jobs < 1:
            raise ValueError("jobs must be at least 1")
        self.jobs = jobs
        self.ran_on = f"{jobs} local process{'es' if jobs != 1 else ''}"
        self._idle: list[processes.Worker] = []

    def _worker(self) -> processes.Worker:
        return self._idle.pop() if self._idle else processes.Worker()

    def run(self, engine, jobs: Sequence[dict], budget: Budget, complete: bool, race: bool = False
            ) -> list[Verdict | None]:
        self.close()  # workers of an earlier check lack what this check's engine prepared
        verdicts: list[Verdict | None] = [None] * len(jobs)
        waiting = deque(range(len(jobs)))
        attempts = [0] * len(jobs)
        busy: dict[Any, processes.Worker] = {}
        first_refuted = len(jobs)
        try:
            while busy or (waiting and waiting[0] < first_refuted):
                if budget.expired():
                    break
                while waiting and waiting[0] < first_refuted and len(busy) < self.jobs:
                    number = waiting.popleft()
                    worker = self._worker()
                    attempts[number] += 1
                    worker.send(number, run_job, engine, jobs[number])
                    busy[worker.connection] = worker
                budget.report(sum(v is not None for v in verdicts), len(jobs), f"{engine.name}: pieces")
                for connection in multiprocessing.connection.wait(list(busy), timeout=POLL_SECONDS):
                    worker = busy.pop(connection, None)
                    if worker is None:  # ended above, after a refutation in the same round
                        continue
                    number = worker.task
                    try:
                        _, kind, payload = worker.receive()
                    except EOFError:
                        self._lost(worker, number, attempts, waiting, engine, budget)
                        continue
                    if kind == "error":
                        worker.stop()
                        raise EngineFailure(f"the {engine.name} engine failed on piece {number + 1}:\n{payload}")
                    verdicts[number] = payload
                    self._idle.append(worker)
                    if decisive(payload, race) and not complete and number < first_refuted:
                        first_refuted = 0 if race else number  # a race's winner ends every other piece
                        for other in [w for w in busy.values() if race or w.task > number]:
                            busy.pop(other.connection).stop()
        finally:
            for worker in busy.values():
                worker.stop()
        return verdicts

    def _lost(self, worker: processes.Worker, number: int, attempts: list[int], waiting: deque, engine,
              budget: Budget) -> None:
        """A worker process died under a piece: run the piece again on a new one, or give up.

        When the budget has expired (a signal to the process group ended the
        worker as it interrupted this process), the piece just stays unfinished.
        """
        code = worker.process.exitcode
        worker.stop()
        if budget.expired():
            return
        if attempts[number] >= ATTEMPTS:
            raise EngineFailure(f"the {engine.name} engine's process ended without an answer on piece "
                                f"{number + 1} (exit code {code}), {attempts[number]} times")
        waiting.appendleft(number)

    def close(self) -> None:
        for worker in self._idle:
            worker.close()
        self._idle = []

    def __enter__(self):
        return self

    def __exit__(self, *exc) -> None:
        self.close()


#: glibc's mallopt parameters, and the values a Dask worker gets for our pieces (see :func:`_roomier_allocator`).
_M_TRIM_THRESHOLD, _M_MMAP_THRESHOLD = -1, -3
_ALLOCATOR = {_M_TRIM_THRESHOLD: 64 << 20, _M_MMAP_THRESHOLD: 32 << 20}
_allocator_tuned = False


def _roomier_allocator() -> None:
    """Undo, once per worker process, the Dask nanny's ``MALLOC_TRIM_THRESHOLD_=65536``.

    That setting (glibc only) also fixes the mmap threshold at 128 KiB, so
    every larger numpy array is mapped and unmapped again; measured, a repair
    search ran 1.7x slower under it (7.2 s against 3.9 s).  The thresholds
    are raised to 64 MiB (trim) and 32 MiB (mmap): the worker returns freed
    memory to the system less eagerly.  Elsewhere (no such variable, no
    glibc) nothing changes.
    """
    global _allocator_tuned
    if _allocator_tuned or "MALLOC_TRIM_THRESHOLD_" not in os.environ or not sys.platform.startswith("linux"):
        return
    _allocator_tuned = True
    try:
        mallopt = ctypes.CDLL(None).mallopt
    except (OSError, AttributeError):  # not glibc
        return
    for parameter, value in _ALLOCATOR.items():
        mallopt(parameter, value)


#: States of a task on a Dask worker that mean nobody waits for its result any more.
_ABANDONED = frozenset({"cancelled", "released", "forgotten"})


def _abandoned(worker, key: str) -> bool:
    """Whether the scheduler gave up the task ``key`` running on ``worker`` (cancelled, or its client left)."""
    task = worker.state.tasks.get(key)
    return task is None or task.state in _ABANDONED


def _dask_piece(engine, data: dict, number: int, stop_name: str) -> Verdict:
    """A piece on a Dask worker.

    It stops when the first refuted piece (in the shared Variable) comes
    before it, and when the scheduler gave its task up: the client cancelled
    it, or the client went away (the process that submitted it was killed;
    the workers are not ours to end, but our pieces on them end).
    """
    from distributed import Variable, get_client, get_worker

    _roomier_allocator()

    worker = get_worker()
    key = worker.get_current_task()
    stop = Variable(stop_name, client=get_client())
    state = {"asked": 0.0, "stopped": False}

    def stopped() -> bool:
        now = time.monotonic()
        if not state["stopped"] and now - state["asked"] >= POLL_SECONDS:
            state["asked"] = now
            try:
                state["stopped"] = _abandoned(worker, key) or stop.get(timeout=5) < number
            except Exception:  # the scheduler cannot be asked: nobody waits for this piece
                state["stopped"] = True
        return state["stopped"]

    return run_job(engine, data, stopped)


class DaskCluster:
    """Run pieces on the workers of a ``dask.distributed`` scheduler at ``address`` (``tcp://host:8786``).

    Workers need sortcheck installed (the same version).  A piece whose worker
    dies is resubmitted by Dask.
    """

    def __init__(self, address: str, connect_seconds: float = 10.0):
        self.address = address
        self.ran_on = f"dask {address}"
        self.connect_seconds = connect_seconds
        self._client = None
        self._failure: UsageError | None = None

    @property
    def client(self):
        """The Dask client, connected on first use (checks that do not split never pay for it)."""
        if self._client is None:
            if self._failure is not None:
                raise self._failure
            try:
                from distributed import Client
            except ImportError:
                self._failure = UsageError("--cluster needs dask.distributed: pip install 'sortcheck[cluster]'",
                                           "--cluster")
                raise self._failure from None
            try:
                self._client = Client(self.address, timeout=self.connect_seconds)
            except (OSError, TimeoutError, ValueError) as error:
                self._failure = UsageError(f"cannot reach a Dask scheduler at {self.address}: {error}", "--cluster")
                raise self._failure from None
        return self._client

    def run(self, engine, jobs: Sequence[dict], budget: Budget, complete: bool, race: bool = False
            ) -> list[Verdict | None]:
        from distributed import Variable, wait

        run_id = uuid.uuid4().hex
        stop_name = f"sortcheck-stop-{run_id}"
        stop = Variable(stop_name, client=self.client)
        stop.set(len(jobs))
        futures = [self.client.submit(_dask_piece, engine, data, number, stop_name, pure=False,
                                      key=f"sortcheck-piece-{run_id}-{number}", priority=len(jobs) - number)
                   for number, data in enumerate(jobs)]
        verdicts: list[Verdict | None] = [None] * len(jobs)
        first_refuted = len(jobs)
        try:
            while any(verdicts[n] is None and not futures[n].cancelled() for n in range(first_refuted)):
                if budget.expired():
                    break
                budget.report(sum(v is not None for v in verdicts), len(jobs), f"{engine.name}: pieces")
                pending = [f for n, f in enumerate(futures[:first_refuted]) if verdicts[n] is None]
                try:
                    wait(pending, timeout=POLL_SECONDS, return_when="FIRST_COMPLETED")
                except TimeoutError:
                    pass
                for number in range(len(jobs)):
                    future = futures[number]
                    if number < first_refuted and verdicts[number] is None and future.done():
                        verdicts[number] = future.result()
                        if decisive(verdicts[number], race) and not complete and number < first_refuted:
                            first_refuted = 0 if race else number  # a race's winner ends every other piece
                            stop.set(-1 if race else number)
                            self.client.cancel([f for n, f in enumerate(futures) if n > number or race and n != number])
        finally:
            stop.set(-1)
            self.client.cancel([f for f in futures if not f.done()])
            stop.delete()
        return verdicts

    def close(self) -> None:
        if self._client is not None:
            self._client.close()
            self._client = None

    def __enter__(self):
        return self

    def __exit__(self, *exc) -> None:
        self.close()


def default_jobs() -> int:
    """The number of worker processes ``--jobs`` defaults to: the cores of this machine."""
    return os.cpu_count() or 1


def make_runner(jobs: int | None = None, cluster: str | None = None):
    """The runner for ``--jobs`` and ``--cluster``: Dask, local processes (jobs > 1) or this process."""
    if cluster:
        return DaskCluster(cluster)
    jobs = default_jobs() if jobs is None else jobs
    return LocalProcesses(jobs) if jobs > 1 else InProcess(splits=False)


def check_split(netlist: Netlist, prop: Property | None = None, engine: str = "auto", timeout: float | None = None,
                source: str | None = None, options: Options = Options(), progress: Progress | None = None,
                runner=None) -> Verdict:
    """:func:`sortcheck.engines.check`, with the pieces of a check that splits run by ``runner``.

    The verdict's figures say where the work ran (``ran_on``) and in how many
    pieces (``pieces``; 1 for a check run whole in this process).

    >>> from sortcheck.model import ComparatorNetwork
    >>> verdict = check_split(ComparatorNetwork(2, ((0, 1),)), runner=InProcess())
    >>> verdict.status.value, verdict.figures["ran_on"], verdict.figures["pieces"]
    ('proved', 'this process', 1)
    """
    started = time.perf_counter()
    prop = prop or netlist.claim or DEFAULT_PROPERTY
    check_fits(prop, netlist, source)
    budget = Budget.of(timeout, progress)  # the time to find the pieces counts too
    if engine == "auto":
        chosen, _, reason = choose_engine(netlist, prop, options)
        if chosen is None:
            return check(netlist, prop, engine, timeout, source, options, progress)  # the refusal verdict
    else:
        chosen, reason = get_engine(engine), f"requested with --engine {engine}"
    splits = getattr(runner, "splits", runner is not None)
    if splits and hasattr(chosen, "staged"):
        return _staged(chosen, netlist, prop, budget, options, runner, reason, started)
    pieces = None
    if splits and hasattr(chosen, "pieces"):
        pieces = chosen.pieces(netlist, prop, options)
    if not pieces or len(pieces) < 2:
        if needs_child(chosen, budget):
            verdict = check_in_child(chosen, netlist, prop, budget, options)
        else:
            verdict = chosen.check(netlist, prop, budget, options)
        verdict = verdict.with_choice(verdict.engine_reason or reason, time.perf_counter() - started)
        where = runner.ran_on if isinstance(runner, InProcess) else "this process"
        return _with_figures(verdict, {"ran_on": where, "pieces": 1})
    return run_pieces(chosen, netlist, prop, pieces, budget, options, runner).with_choice(
        reason, time.perf_counter() - started)


def _jobs(engine, netlist: Netlist, prop: Property, pieces: Sequence[dict], budget: Budget, options: Options
          ) -> list[dict]:
    """The job data of ``pieces``; workers forked after this find the netlist parsed."""
    deadline = None if budget.deadline is None else time.time() + (budget.remaining() or 0.0)
    jobs = [job_data(engine.name, netlist, prop, piece, options, deadline) for piece in pieces]
    if jobs:
        remember_netlist(jobs[0]["netlist"], netlist)
    return jobs


def run_pieces(engine, netlist: Netlist, prop: Property, pieces: Sequence[dict], budget: Budget, options: Options,
               runner) -> Verdict:
    """Run ``pieces`` of ``engine``'s check with ``runner`` and combine their verdicts."""
    started = time.perf_counter()
    jobs = _jobs(engine, netlist, prop, pieces, budget, options)
    verdicts = runner.run(engine, jobs, budget, complete=options.count)
    combined = combine(engine.name, prop, verdicts, runner.ran_on, time.perf_counter() - started,
                       complete=options.count)
    if hasattr(engine, "whole_verdict"):
        combined = engine.whole_verdict(netlist, prop, combined, options)
    return combined


def _staged(engine, netlist: Netlist, prop: Property, budget: Budget, options: Options, runner, reason: str,
            started: float) -> Verdict:
    """A check of an engine with steps before its pieces (see :class:`~sortcheck.engines.runners.pieces.Staged`)."""
    staged = engine.staged(netlist, prop, budget, options)
    if isinstance(staged, Verdict):
        verdict = staged.with_choice(staged.engine_reason or reason, time.perf_counter() - started)
        return _with_figures(verdict, {"ran_on": "this process", "pieces": 1})
    while not isinstance(staged, Verdict):
        if isinstance(staged, Race):
            jobs = _jobs(staged.engine, netlist, prop, staged.pieces, budget, options)
            staged = staged.finish(runner.run(staged.engine, jobs, budget, complete=False, race=True))
            if isinstance(staged, Verdict):
                staged = _with_figures(staged, {"ran_on": f"{runner.ran_on} (strategies raced)", "pieces": 1})
        else:
            staged = staged.finish(run_pieces(staged.engine, netlist, prop, staged.pieces, budget, options, runner))
    return staged.with_choice(staged.engine_reason or reason, time.perf_counter() - started)


def _with_figures(verdict: Verdict, extra: dict) -> Verdict:
    """The verdict with ``extra`` figures it does not have (an engine that ran its pieces here says so itself)."""
    return Verdict(verdict.status, verdict.engine, verdict.prop, verdict.stop, verdict.scope, verdict.seconds,
                   verdict.counterexample, {**extra, **verdict.figures}, verdict.engine_reason, verdict.certificate)
