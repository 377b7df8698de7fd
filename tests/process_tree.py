"""Run a command, signal it while its worker processes run, and report which of its processes are left.

Run as a script (the tests start it as a process of its own, so that what
it does to itself stays out of pytest)::

    python tests/process_tree.py SIGNAL WORKERS [--group] -- COMMAND...

It makes itself a child subreaper (``prctl(PR_SET_CHILD_SUBREAPER)``): a
process of the command's tree whose parent dies is handed to this process
instead of init, so no orphan escapes the count.  It starts COMMAND in a
session of its own, waits until the command has WORKERS descendants that
have each used :data:`BUSY_TICKS` of processor time (they are at work), sends
SIGNAL to the command (``--group``: to its process group, as ``timeout``
and a terminal's Ctrl-C do), and from then on watches the whole tree,
reading ``/proc``, until no process of it (the command included) is alive or
:data:`WATCH_SECONDS` have passed since the signal.  It prints one JSON
object: ``left``, the processes alive at the end of the watch (then killed,
so that nothing stays on the machine), the orphans handed to it (processes
whose parent ended without ending them), the descendants it saw at work,
and the command's exit status and output.
"""

from __future__ import annotations

import ctypes
import json
import os
import signal
import subprocess
import sys
import threading
import time

#: prctl option that makes a process the reaper of the orphans of its tree (linux/prctl.h).
PR_SET_CHILD_SUBREAPER = 36

#: Processor time (clock ticks, usually 1/100 s) each worker must have used before the signal is sent.
BUSY_TICKS = 20

#: How long after the signal the tree is watched; a process still alive then is left over.
WATCH_SECONDS = 3.0

#: The longest wait for the command's workers to be at work.
START_SECONDS = 180.0


def stat(pid: int) -> tuple[str, int, int] | None:
    """State letter, parent pid and processor ticks (user + system) of ``pid``, None if it is gone."""
    try:
        with open(f"/proc/{pid}/stat") as stream:
            text = stream.read()
    except OSError:
        return None
    fields = text.rsplit(")", 1)[1].split()
    return fields[0], int(fields[1]), int(fields[11]) + int(fields[12])


def processes() -> dict[int, tuple[str, int, int]]:
    table = {}
    for name in os.listdir("/proc"):
        if name.isdigit():
            found = stat(int(name))
            if found is not None:
                table[int(name)] = found
    return table


def descendants(root: int, table: dict[int, tuple[str, int, int]] | None = None) -> list[int]:
    """Every process below ``root`` (children, their children, ...), from ``/proc``."""
    table = processes() if table is None else table
    children: dict[int, list[int]] = {}
    for pid, (_, parent, _) in table.items():
        children.setdefault(parent, []).append(pid)
    found, stack = [], [root]
    while stack:
        for child in children.get(stack.pop(), []):
            found.append(child)
            stack.append(child)
    return found


def reap(pids: list[int]) -> None:
    """Collect the exit status of those of ``pids`` that ended (orphans handed to this process)."""
    for pid in pids:
        try:
            os.waitpid(pid, os.WNOHANG)
        except ChildProcessError:
            pass


def main(argv: list[str]) -> dict:
    separator = argv.index("--")
    options, command = argv[:separator], argv[separator + 1:]
    signal_number, workers, group = getattr(signal, options[0]), int(options[1]), "--group" in options
    libc = ctypes.CDLL(None, use_errno=True)
    if libc.prctl(PR_SET_CHILD_SUBREAPER, 1, 0, 0, 0) != 0:
        raise OSError(ctypes.get_errno(), "prctl(PR_SET_CHILD_SUBREAPER) failed")
    me = os.getpid()
    child = subprocess.Popen(command, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                             start_new_session=True)
    output: dict[str, str] = {}
    readers = [threading.Thread(target=lambda name=name, stream=stream: output.update({name: stream.read()}),
                                daemon=True)
               for name, stream in (("stdout", child.stdout), ("stderr", child.stderr))]
    for reader in readers:
        reader.start()
    started = time.monotonic()
    busy: list[int] = []
    while child.poll() is None and time.monotonic() - started < START_SECONDS:
        table = processes()
        busy = [pid for pid in descendants(child.pid, table) if table[pid][0] != "Z" and table[pid][2] >= BUSY_TICKS]
        if len(busy) >= workers:
            break
        time.sleep(0.05)
    report = {"busy": busy, "ended_early": child.poll() is not None or len(busy) < workers}
    signalled = time.monotonic()
    if group:
        os.killpg(child.pid, signal_number)
    else:
        child.send_signal(signal_number)
    # watch the whole tree (the command too, until it ends) from the signal on, for WATCH_SECONDS at most
    orphans: set[int] = set()
    while True:
        child.poll()  # reaps the command once it ends
        table = processes()
        adopted = [pid for pid, (_, parent, _) in table.items() if parent == me and pid != child.pid]
        orphans.update(adopted)
        alive = [pid for pid in descendants(me, table) if table[pid][0] != "Z"]
        reap(adopted)
        if not alive or time.monotonic() - signalled >= WATCH_SECONDS:
            break
        time.sleep(0.02)
    report["seconds"] = round(time.monotonic() - signalled, 3)
    report["left"] = alive  # alive WATCH_SECONDS after the signal (the command itself included)
    for pid in alive:  # leave nothing behind on the machine
        try:
            os.kill(pid, signal.SIGKILL)
        except ProcessLookupError:
            pass
    report["exit"] = child.wait()
    time.sleep(0.1)
    reap([pid for pid, (_, parent, _) in processes().items() if parent == me])
    for reader in readers:
        reader.join(timeout=10)
    report.update(stdout=output.get("stdout", ""), stderr=output.get("stderr", ""), orphans=sorted(orphans))
    return report


if __name__ == "__main__":
    print(json.dumps(main(sys.argv[1:])))
