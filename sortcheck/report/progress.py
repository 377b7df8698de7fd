"""A one-line progress display on standard error, for people at a terminal.

Shown only when standard error is a terminal, the ``CI`` variable is not set
and ``--quiet`` was not given; redrawn at most ten times a second.
"""

from __future__ import annotations

import os

import time
from typing import TextIO

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


def for_file(stream: TextIO, label: str, quiet: bool) -> ProgressLine | None:
    """A progress line for one file, or None when progress is not wanted."""
    return ProgressLine(stream, label) if wanted(stream, quiet) else None


__all__ = ["ProgressLine", "for_file", "wanted"]
