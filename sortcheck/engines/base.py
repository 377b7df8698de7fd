"""What every engine shares: verdicts as data, budgets, and the engine interface.

Engines never print and never raise for a check they cannot finish: they
return a :class:`Verdict` whose status is ``unknown`` and whose
:class:`StopReason` says why.
"""

from __future__ import annotations

import enum
import threading
import time
from dataclasses import dataclass, field
from typing import Any, Callable, Protocol

from sortcheck.model import Netlist, Property


class Status(enum.Enum):
    """The answer of a check."""

    PROVED = "proved"
    REFUTED = "refuted"
    UNKNOWN = "unknown"


class StopReason(enum.Enum):
    """Why an engine stopped."""

    COVERED = "covered"
    COUNTEREXAMPLE = "counterexample"
    TIMEOUT = "timeout"
    SIZE_LIMIT = "size-limit"
    UNSUPPORTED = "unsupported"
    INTERRUPTED = "interrupted"

    def describe(self) -> str:
        """A short phrase for people.

        >>> StopReason.TIMEOUT.describe()
        'the time budget ran out'
        """
        return {
            StopReason.COVERED: "every input in scope was covered",
            StopReason.COUNTEREXAMPLE: "a counterexample was found",
            StopReason.TIMEOUT: "the time budget ran out",
            StopReason.SIZE_LIMIT: "the netlist is beyond this engine's size limit",
            StopReason.UNSUPPORTED: "this engine does not handle this netlist or property",
            StopReason.INTERRUPTED: "the run was interrupted (SIGINT or SIGTERM) before the check finished",
        }[self]


class Interruption:
    """A request, for the whole process, that every budget expire now: how SIGINT and SIGTERM end a check.

    :meth:`Budget.expired` turns true once :meth:`request` was called, so
    every engine, piece runner and explanation stops at its next look at its
    budget and returns what it covered.  Blocking steps that cannot look (a
    SAT call) register a callable with :meth:`calling` that makes them
    return (``solver.interrupt``).  :mod:`sortcheck.engines.runners.interrupts`
    requests it when a signal arrives; nothing else in the package does.

    >>> stop = Interruption()
    >>> calls = []
    >>> with stop.calling(lambda: calls.append("interrupt")):
    ...     stop.request("SIGTERM")
    >>> stop.requested(), stop.signal, calls
    (True, 'SIGTERM', ['interrupt'])
    >>> stop.clear(); stop.requested()
    False
    """

    def __init__(self):
        self._event = threading.Event()
        self._lock = threading.Lock()
        self._callbacks: list[Callable[[], Any]] = []
        self.signal: str | None = None
        #: True while signals are caught (a process that can be interrupted isolates engines that cannot stop).
        self.watched = False

    def requested(self) -> bool:
        return self._event.is_set()

    def request(self, signal: str) -> None:
        """Ask every budget to expire, and call the registered interrupt callables (from any thread)."""
        with self._lock:
            if self.signal is None:
                self.signal = signal
            self._event.set()
            callbacks = list(self._callbacks)
        for callback in callbacks:
            callback()

    def clear(self) -> None:
        with self._lock:
            self._event.clear()
            self.signal = None

    def calling(self, callback: Callable[[], Any]) -> "_Registration":
        """A context in which ``callback`` is called when an interruption is requested (at once if it already was)."""
        return _Registration(self, callback)


class _Registration:
    def __init__(self, owner: Interruption, callback: Callable[[], Any]):
        self.owner, self.callback = owner, callback

    def __enter__(self) -> None:
        with self.owner._lock:
            self.owner._callbacks.append(self.callback)
        if self.owner.requested():
            self.callback()

    def __exit__(self, *exc) -> None:
        with self.owner._lock:
            self.owner._callbacks.remove(self.callback)


#: The interruption of this process (see :class:`Interruption`).
interruption = Interruption()

#: How a verdict that stopped because its budget expired reads once the run was interrupted (see :func:`interrupted`).
_INTERRUPTED_WORDS = (("before the time budget ran out", "before the run was interrupted"),
                      ("when the time budget ran out", "when the run was interrupted"),
                      ("the time budget ran out", "the run was interrupted"),
                      ("within the time budget", "before the run was interrupted"))


def interrupted_words(text: str) -> str:
    """``text`` (about a budget that ran out) reworded for a run that was interrupted.

    >>> interrupted_words("1,024 of 4,096 vectors were checked before the time budget ran out; nothing is proved")
    '1,024 of 4,096 vectors were checked before the run was interrupted; nothing is proved'
    """
    for budget_words, interrupt_words in _INTERRUPTED_WORDS:
        text = text.replace(budget_words, interrupt_words)
    return text


@dataclass(frozen=True)
class Counterexample:
    """An input the netlist gets wrong, and what the netlist computes on it.

    ``domain`` is ``"0-1"`` for a 0-1 input of a comparator network (which by
    the 0-1 principle stands for every input with the same order pattern) and
    ``"words"`` for input words of a gate circuit.  After minimisation
    (:mod:`sortcheck.explain.minimal`) ``minimal`` says whether no failing
    input is smaller, ``ones`` is the measure (ones or zeros, whichever is
    fewer, for 0-1 inputs; one bits for words) and, for networks,
    ``permutation`` is a failing input of distinct values.
    """

    input: tuple[int, ...]
    output: tuple[int, ...]
    domain: str
    violation: str
    minimal: bool | None = None
    ones: int | None = None
    permutation: tuple[int, ...] | None = None

    def to_json(self) -> dict[str, Any]:
        data: dict[str, Any] = {"input": list(self.input), "output": list(self.output), "domain": self.domain,
                                "violation": self.violation}
        if self.minimal is not None:
            data["minimal"] = self.minimal
            data["ones"] = self.ones
        if self.permutation is not None:
            data["permutation"] = list(self.permutation)
        return data


@dataclass(frozen=True)
class UnsatCall:
    """One unsatisfiable SAT call a proof rests on: the CNF as DIMACS (variables named in comments) and the
    solver's DRUP proof, one step a line.  ``label`` says what the call proves."""

    label: str
    dimacs: str
    proof: str
    solver: str
    claim: dict[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class Enumerated:
    """A part proved by evaluating every 0-1 vector of a set: how many, and a SHA-256 digest of a
    deterministic description of them (``claim``, JSON-ready, enough to evaluate them again)."""

    label: str
    vectors: int
    digest: str
    claim: dict[str, Any] = field(default_factory=dict)


@dataclass(frozen=True)
class CertificateMaterial:
    """What a proved verdict rests on, for an independent check (engines fill it with ``Options(certify=True)``).

    ``method`` is ``"drup"`` (SAT calls only), ``"enumeration"`` (evaluation only), ``"drup+enumeration"``
    or ``"order-relations"`` (a relation propagation, listed in ``relations``); ``complete`` is False when some
    part of the proof is not covered by the material (then no certificate can be issued).
    """

    method: str
    calls: tuple[UnsatCall, ...] = ()
    enumerated: tuple[Enumerated, ...] = ()
    relations: dict[str, Any] | None = None
    complete: bool = True
    note: str = ""


@dataclass(frozen=True)
class Verdict:
    """The outcome of one check of one netlist for one property.

    Parameters
    ----------
    status : Status
        proved, refuted or unknown.
    engine : str
        The engine that decided.
    prop : Property
        The property that was checked.
    stop : StopReason
        Why the engine stopped.
    scope : str
        In plain words, what this verdict covers (and, for unknown, what was
        covered before it stopped).
    seconds : float
        Wall time of the check.
    counterexample : Counterexample or None
        Present exactly when the status is refuted.
    figures : dict
        Engine figures (vectors evaluated, blocks, ...), JSON-ready.
    certificate : CertificateMaterial or None
        What a proof rests on, when certification was asked for and the engine supports it.
    """

    status: Status
    engine: str
    prop: Property
    stop: StopReason
    scope: str
    seconds: float = 0.0
    counterexample: Counterexample | None = None
    figures: dict[str, Any] = field(default_factory=dict)
    engine_reason: str | None = None
    certificate: CertificateMaterial | None = None

    def with_choice(self, reason: str, seconds: float) -> "Verdict":
        """A copy that records why the engine was chosen and the total time."""
        return Verdict(self.status, self.engine, self.prop, self.stop, self.scope, seconds, self.counterexample,
                       self.figures, reason, self.certificate)

    def interrupted(self, signal: str | None) -> "Verdict":
        """This verdict as the verdict of a run interrupted by ``signal``.

        An unknown verdict whose budget expired (stop reason timeout: the
        interruption acts through budgets) becomes ``interrupted``, its scope
        (and the reason for its engine) reworded and still saying what was
        covered; any other verdict (proved or refuted before the signal, or
        unknown for another reason) stays.

        >>> from sortcheck.model import Sorts
        >>> stopped = Verdict(Status.UNKNOWN, "enumerate", Sorts(), StopReason.TIMEOUT,
        ...                   "2 of 8 vectors were checked before the time budget ran out; nothing is proved")
        >>> verdict = stopped.interrupted("SIGINT")
        >>> verdict.stop.value, verdict.figures
        ('interrupted', {'interrupted_by': 'SIGINT'})
        >>> print(verdict.scope)
        interrupted by SIGINT: 2 of 8 vectors were checked before the run was interrupted; nothing is proved
        """
        if self.status is not Status.UNKNOWN or self.stop is not StopReason.TIMEOUT:
            return self
        scope = interrupted_words(self.scope)
        if "nothing is proved" not in scope:
            scope += "; nothing is proved"
        reason = None if self.engine_reason is None else interrupted_words(self.engine_reason)
        return Verdict(self.status, self.engine, self.prop, StopReason.INTERRUPTED,
                       f"interrupted by {signal or 'a signal'}: {scope}", self.seconds, None,
                       {**self.figures, "interrupted_by": signal}, reason, self.certificate)


#: A progress callback: (units done, units in all or None, phase) -> None.
Progress = Callable[[float, "float | None", str], None]


@dataclass(frozen=True)
class Budget:
    """Limits for one check, and where to report progress.

    Parameters
    ----------
    deadline : float or None
        ``time.monotonic()`` value after which the check must stop.
    progress : callable or None
        Called now and then as ``progress(done, total, phase)``; engines call
        :meth:`report`, which does nothing without a callback.
    stopped : callable or None
        An extra stop condition, ``stopped() -> bool``, consulted by
        :meth:`expired` (a piece of a split check polls it to learn that the
        whole check no longer needs it); None for none.

    >>> Budget.of(None).expired()
    False
    >>> Budget(stopped=lambda: True).expired()
    True
    """

    deadline: float | None = None
    progress: Progress | None = field(default=None, compare=False)
    stopped: Callable[[], bool] | None = field(default=None, compare=False)

    @classmethod
    def of(cls, timeout: float | None, progress: Progress | None = None,
           stopped: Callable[[], bool] | None = None) -> "Budget":
        return cls(None if timeout is None else time.monotonic() + timeout, progress, stopped)

    def expired(self) -> bool:
        """Whether to stop: the deadline passed, the stop condition holds, or the run was interrupted."""
        if interruption.requested():
            return True
        if self.deadline is not None and time.monotonic() >= self.deadline:
            return True
        return self.stopped is not None and bool(self.stopped())

    def remaining(self) -> float | None:
        return None if self.deadline is None else max(0.0, self.deadline - time.monotonic())

    def report(self, done: float, total: float | None, phase: str) -> None:
        """Pass progress to the callback, if there is one."""
        if self.progress is not None:
            self.progress(done, total, phase)

    def share(self, seconds: float) -> "Budget":
        """This budget cut to at most ``seconds`` from now (same callback and stop condition)."""
        deadline = time.monotonic() + seconds
        if self.deadline is not None:
            deadline = min(deadline, self.deadline)
        return Budget(deadline, self.progress, self.stopped)

    def without_progress(self) -> "Budget":
        """The same deadline with no callback and no stop condition (for work done in another process)."""
        return Budget(self.deadline)


@dataclass(frozen=True)
class Options:
    """What a user can ask of any engine beyond the property; engines ignore what does not apply.

    Parameters
    ----------
    width : int or None
        Word width for engines that work on words (``smt``); None for the
        engine's default.
    count : bool
        Count every failing 0-1 input instead of stopping at the first
        (``enumerate``); the count goes into ``figures["failing_inputs"]``.
    certify : bool
        Gather certificate material (``Verdict.certificate``): DRUP proofs of SAT calls, digests of
        enumerated vectors (``enumerate``, ``sat``); proof logging costs solver time.
    """

    width: int | None = None
    count: bool = False
    certify: bool = False


class Engine(Protocol):
    """The interface of every engine.

    ``refusal`` says, without doing the work, why the engine cannot take a
    check (None when it can); ``check`` does it within the budget.
    ``cooperative`` says whether ``check`` itself stops at the budget's
    deadline; checks by engines that cannot (a solver stuck in native code),
    or that set an ``isolate`` attribute to True (some steps cannot be
    interrupted), are run in a process that can be ended when a deadline is
    set.
    """

    name: str
    cooperative: bool

    def refusal(self, netlist: Netlist, prop: Property, options: Options) -> tuple[StopReason, str] | None: ...

    def check(self, netlist: Netlist, prop: Property, budget: Budget, options: Options) -> Verdict: ...


def refused_verdict(engine: Engine, netlist: Netlist, prop: Property, options: Options, started: float
                    ) -> Verdict | None:
    """The ``unknown`` verdict of a check ``engine`` refuses (None when it takes it); for ``check`` methods."""
    refused = engine.refusal(netlist, prop, options)
    if refused is None:
        return None
    return Verdict(Status.UNKNOWN, engine.name, prop, refused[0], f"nothing was checked: {refused[1]}",
                   time.perf_counter() - started)
