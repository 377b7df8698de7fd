"""SIGINT and SIGTERM end a run cleanly: every budget expires, and the report is still written.

Within :func:`catching_signals` (the command line runs every command in it)
the first SIGINT or SIGTERM requests the process's
:data:`~sortcheck.engines.base.interruption`: every budget expires, so the
check under way stops at its next look at its budget and returns what it
covered, piece runners end their worker processes, SAT calls registered with
the interruption are interrupted, and the command writes its report with an
``unknown`` verdict whose stop reason is ``interrupted``.

Python runs signal handlers in the main thread only, and only between
bytecodes, so a main thread inside a long native call would hear of the
signal late.  The signal is therefore also read, as a byte, from the wakeup
file descriptor (``signal.set_wakeup_fd``) by a thread of its own, which
requests the interruption at once and so interrupts a SAT call the main
thread waits in (native calls that keep the global interpreter lock cannot
be reached: every SAT call of sortcheck releases it, and engines whose steps
cannot be interrupted run in a child process, see
:mod:`sortcheck.engines.runners.isolation`).

A signal repeated more than :data:`REPEAT_SECONDS` after the first ends the
process at once (its children first), with status 128 + the signal's number
and no report: the way out of a run that does not stop.  Repeats closer
together are one signal (``timeout`` sends its signal to the process and to
its group).
"""

from __future__ import annotations

import contextlib
import os
import signal
import socket
import threading
import time
from typing import Iterator

from sortcheck.engines.base import interruption
from sortcheck.engines.runners import processes

#: The signals that end a run cleanly.
SIGNALS = (signal.SIGINT, signal.SIGTERM)

#: A signal repeated later than this after the first ends the process at once.
REPEAT_SECONDS = 1.0


def _name(number: int) -> str:
    return signal.Signals(number).name


def _handler(number: int, frame) -> None:  # the main thread's handler: the watcher does the rest
    interruption.request(_name(number))


class _Watcher:
    """Reads the signal numbers the wakeup file descriptor receives, on a thread of its own."""

    def __init__(self):
        self.reader, self.writer = socket.socketpair()
        self.writer.setblocking(False)
        self.first: float | None = None
        self.thread = threading.Thread(target=self._run, name="sortcheck-signals", daemon=True)

    def _run(self) -> None:
        while True:
            try:
                data = self.reader.recv(64)
            except OSError:
                return
            if not data:
                return
            for number in data:
                if number in SIGNALS:
                    self._heard(number)

    def _heard(self, number: int) -> None:
        now = time.monotonic()
        if self.first is None:
            self.first = now
            interruption.request(_name(number))
        elif now - self.first > REPEAT_SECONDS:
            processes.end_all()
            os._exit(128 + number)

    def close(self) -> None:
        try:
            self.reader.shutdown(socket.SHUT_RDWR)
        except OSError:
            pass
        self.thread.join(timeout=5)
        self.reader.close()
        self.writer.close()


@contextlib.contextmanager
def catching_signals() -> Iterator[None]:
    """Catch SIGINT and SIGTERM as an interruption of the run, for the duration of the block.

    Outside the main thread (where Python cannot catch signals) the block
    runs unchanged.  Afterwards the earlier handlers are back and the
    interruption is cleared.

    >>> with catching_signals():
    ...     os.kill(os.getpid(), signal.SIGTERM)
    ...     _ = [time.sleep(0.01) for _ in range(100) if not interruption.requested()]
    ...     interruption.requested(), interruption.signal
    (True, 'SIGTERM')
    >>> interruption.requested()
    False
    """
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    watcher = _Watcher()
    previous_fd = signal.set_wakeup_fd(watcher.writer.fileno(), warn_on_full_buffer=False)
    previous = {number: signal.signal(number, _handler) for number in SIGNALS}
    watcher.thread.start()
    interruption.watched = True
    try:
        yield
    finally:
        interruption.watched = False
        for number, handler in previous.items():
            signal.signal(number, handler)
        signal.set_wakeup_fd(previous_fd)
        watcher.close()
        interruption.clear()


__all__ = ["REPEAT_SECONDS", "SIGNALS", "catching_signals"]
