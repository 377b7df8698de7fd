"""Running an external program (Yosys, ``drat-trim``) bound to this process.

A child must never outlive the process that started it, whatever ends that
process, SIGKILL included.  On Linux the program's child process asks, between
fork and exec, for SIGKILL when its parent dies (``prctl(PR_SET_PDEATHSIG)``,
kept across exec), then checks that its parent is still the one that forked
it.  Elsewhere only the time limit bounds it.  The process machinery of the
engines (:mod:`sortcheck.engines.runners.processes`) runs programs through
:func:`run_program` too, with its interruption flag as ``stopped``.
"""

from __future__ import annotations

import ctypes
import os
import signal
import subprocess
import sys
import time
from typing import Callable, Sequence

#: ``prctl`` option that sets the signal a process gets when its parent dies (linux/prctl.h).
PR_SET_PDEATHSIG = 1

#: Exit status of a child that found its parent gone before it began.
ORPHANED = 70

#: How often :func:`run_program` wakes up to ask whether to stop.
WAIT_SECONDS = 0.1


def program_binding(parent: int) -> Callable[[], None] | None:
    """What an external program's child runs between fork and exec to bind itself to ``parent`` (Linux only).

    The ``prctl`` function is looked up here, before the fork, so the child
    only makes two system calls (little can go wrong in a child forked from a
    process with threads).
    """
    if not sys.platform.startswith("linux"):
        return None
    try:
        prctl = ctypes.CDLL(None, use_errno=True).prctl
    except (OSError, AttributeError):
        return None

    def bind() -> None:
        prctl(PR_SET_PDEATHSIG, signal.SIGKILL, 0, 0, 0)  # kept across exec
        if os.getppid() != parent:
            os._exit(ORPHANED)

    return bind


def run_program(argv: Sequence[str], seconds: float, stopped: Callable[[], bool] | None = None,
                cwd: str | None = None) -> subprocess.CompletedProcess:
    """Run an external program to its end, its output captured, bound to this process.

    It is ended, and ``subprocess.TimeoutExpired`` raised, after ``seconds``
    or as soon as ``stopped()`` says so.

    >>> run_program([sys.executable, "-c", "print(6 * 7)"], 60).stdout
    '42\\n'
    """
    with subprocess.Popen(list(argv), stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, cwd=cwd,
                          stdin=subprocess.DEVNULL, preexec_fn=program_binding(os.getpid())) as program:
        until = time.monotonic() + seconds
        while True:
            try:
                stdout, stderr = program.communicate(timeout=WAIT_SECONDS)
            except subprocess.TimeoutExpired:
                if (stopped is not None and stopped()) or time.monotonic() >= until:
                    program.kill()
                    program.communicate()
                    raise subprocess.TimeoutExpired(list(argv), seconds) from None
                continue
            return subprocess.CompletedProcess(list(argv), program.returncode, stdout, stderr)
