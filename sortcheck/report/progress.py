"""Progress on standard error: a line redrawn in place at a terminal, or a line a minute in a log.

At a terminal (standard error is one and the ``CI`` variable is not set) a
:class:`ProgressLine` is redrawn at most ten times a second.  Elsewhere (a CI
log, a file) a :class:`ProgressLog` writes, once a check has run for a
minute and every minute after, one line saying what is being worked on, so
that a long run without ``--timeout`` is seen to be alive.  ``--quiet``
shows neither.
"""

from __future__ import annotations

import os
import threading
import time
from typing import Callable, TextIO

BAR_WIDTH = 24


def wanted(stream: TextIO, quiet: bool) -> bool:
    """Whether to show progress on ``stream``."""
    return not quiet and not os.environ.get("CI") and hasattr(stream, "isatty") and stream.isatty()


class ProgressLine:
    """Draws ``label  [#####.....]  42%  phase`` in place; ``clear`` removes it.

    >>> import io
    >>> line = ProgressLine(io.StringIO(), "net.json", interval=0)
    >>> line(21, 50, "enumerate")
    >>> line.stream.getvalue().strip()
    'net.json  [##########..............]  42%  enumerate'
    """

    def __init__(self, stream: TextIO, label: str, interval: float = 0.1):
        self.stream, self.label, self.interval = stream, label, interval
        self.started = time.monotonic()
        self.last = float("-inf")
        self.width = 0

    def __call__(self, done: float, total: float | None, phase: str) -> None:
        now = time.monotonic()
        if now - self.last < self.interval:
            return
        self.last = now
        if total:
            fraction = min(1.0, max(0.0, done / total))
            filled = int(fraction * BAR_WIDTH)
            text = f"{self.label}  [{'#' * filled}{'.' * (BAR_WIDTH - filled)}]  {fraction:3.0%}  {phase}"
        else:
            text = f"{self.label}  {now - self.started:6.1f} s  {phase}"
        self.stream.write("\r" + text.ljust(self.width))
        self.stream.flush()
        self.width = len(text)

    def clear(self) -> None:
        if self.width:
            self.stream.write("\r" + " " * self.width + "\r")
            self.stream.flush()
            self.width = 0


#: Seconds between the lines of a :class:`ProgressLog`.
LOG_SECONDS = 60.0


def elapsed_words(seconds: float) -> str:
    """``42 s``, ``3 min 05 s`` or ``2 h 07 min``.

    >>> elapsed_words(42.4), elapsed_words(185), elapsed_words(7620)
    ('42 s', '3 min 05 s', '2 h 07 min')
    """
    seconds = int(seconds)
    if seconds < 60:
        return f"{seconds} s"
    if seconds < 3600:
        return f"{seconds // 60} min {seconds % 60:02d} s"
    return f"{seconds // 3600} h {seconds % 3600 // 60:02d} min"


class ProgressLog:
    """Writes ``sortcheck: net.json: 3 min 00 s so far; enumerate: pieces, 42%`` every ``interval`` seconds.

    ``interval`` is :data:`LOG_SECONDS` unless given.

    Calls only record the latest progress; a thread of its own writes the
    lines (so a step that reports nothing for long, a SAT call, is still
    seen to be under way) until :meth:`clear`.  :meth:`line` is the line it
    would write now.

    >>> import io
    >>> clock = iter([0.0, 185.0]).__next__
    >>> log = ProgressLog(io.StringIO(), "net.json", clock=clock)
    >>> log(21, 50, "enumerate: pieces")
    >>> log.line()
    'sortcheck: net.json: 3 min 05 s so far; enumerate: pieces, 42%'
    """

    def __init__(self, stream: TextIO, label: str, interval: float | None = None,
                 clock: Callable[[], float] = time.monotonic):
        self.stream, self.label, self.clock = stream, label, clock
        self.interval = LOG_SECONDS if interval is None else interval
        self.started = clock()
        self.latest: tuple[float, float | None, str] | None = None
        self._stop = threading.Event()
        self._thread: threading.Thread | None = None

    def __call__(self, done: float, total: float | None, phase: str) -> None:
        self.latest = (done, total, phase)

    def line(self) -> str:
        text = f"sortcheck: {self.label}: {elapsed_words(self.clock() - self.started)} so far"
        if self.latest is not None:
            done, total, phase = self.latest
            text += f"; {phase}" + (f", {min(1.0, max(0.0, done / total)):.0%}" if total else "")
        return text

    def start(self) -> "ProgressLog":
        """Write a line every ``interval`` seconds from now on, until :meth:`clear`."""
        self._thread = threading.Thread(target=self._run, name="sortcheck-progress", daemon=True)
        self._thread.start()
        return self

    def _run(self) -> None:
        while not self._stop.wait(self.interval):
            try:
                self.stream.write(self.line() + "\n")
                self.stream.flush()
            except (OSError, ValueError):  # the stream was closed
                return

    def clear(self) -> None:
        self._stop.set()
        if self._thread is not None and self._thread is not threading.current_thread():
            self._thread.join()


def for_file(stream: TextIO, label: str, quiet: bool) -> ProgressLine | ProgressLog | None:
    """Progress for one file (or one run): a line at a terminal, a log line a minute elsewhere, None if quiet."""
    if quiet:
        return None
    return ProgressLine(stream, label) if wanted(stream, quiet) else ProgressLog(stream, label).start()


__all__ = ["LOG_SECONDS", "ProgressLine", "ProgressLog", "elapsed_words", "for_file", "wanted"]
