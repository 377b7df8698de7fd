"""Benchmark: the enumerate engine against two baselines, in one run.

Run from the repository root::

    python tests/benchmarks/bench_enumerate.py

Baselines (each checks the same merge exchange networks for sorting):

* a pure-Python 0-1 loop: every input as a list, comparators applied one by one;
* a numpy matrix: all 2^n 0-1 vectors as a ``uint8`` matrix, one column per
  channel, ``np.minimum``/``np.maximum`` per comparator (in chunks of 2^20 rows).

Throughput is 0-1 inputs checked per second; ratios are ours over the baseline.
The last line times ``sortcheck check corpus/merge-exchange-24.json`` as a
new process, start-up included.
"""

from __future__ import annotations

import itertools
import os
import platform
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

from sortcheck.engines import check
from sortcheck.model import Sorts
from sortcheck.model.families import build_family

ROOT = Path(__file__).resolve().parents[2]


def python_loop(network, limit_seconds=2.0):
    """Inputs per second of the plain loop (stops after ``limit_seconds``)."""
    started, checked = time.perf_counter(), 0
    for vector in itertools.product((0, 1), repeat=network.channels):
        wires = list(vector)
        for a, b in network.comparators:
            if wires[a] > wires[b]:
                wires[a], wires[b] = wires[b], wires[a]
        if any(wires[i] > wires[i + 1] for i in range(len(wires) - 1)):
            raise AssertionError("baseline found a failure in a sorting network")
        checked += 1
        if checked % 4096 == 0 and time.perf_counter() - started > limit_seconds:
            break
    return checked / (time.perf_counter() - started)


def numpy_matrix(network, limit_seconds=4.0):
    """Inputs per second of the all-vectors matrix (stops after ``limit_seconds``)."""
    n, chunk = network.channels, 1 << min(network.channels, 20)
    started, checked = time.perf_counter(), 0
    for start in range(0, 1 << n, chunk):
        index = np.arange(start, start + chunk, dtype=np.int64)
        matrix = ((index[:, None] >> np.arange(n)) & 1).astype(np.uint8)
        for a, b in network.comparators:
            low = np.minimum(matrix[:, a], matrix[:, b])
            matrix[:, b] = np.maximum(matrix[:, a], matrix[:, b])
            matrix[:, a] = low
        if (matrix[:, :-1] > matrix[:, 1:]).any():
            raise AssertionError("baseline found a failure in a sorting network")
        checked += chunk
        if time.perf_counter() - started > limit_seconds:
            break
    return checked / (time.perf_counter() - started)


def ours(network):
    verdict = check(network, Sorts(), engine="enumerate")
    assert verdict.status.value == "proved"
    return verdict.figures["vectors_evaluated"] / verdict.figures["seconds"], verdict.figures["seconds"]


def cpu_name() -> str:
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                return line.split(":", 1)[1].strip()
    except OSError:
        pass
    return platform.processor() or platform.machine()


def main() -> None:
    print(f"machine: {cpu_name()}, {os.cpu_count()} cores, "
          f"Python {platform.python_version()}, numpy {np.__version__}")
    print(f"{'network':<20} {'ours in/s':>11} {'ours s':>8} {'loop in/s':>11} {'matrix in/s':>12} "
          f"{'vs loop':>8} {'vs matrix':>10}")
    for n in (16, 20, 24, 28):
        network = build_family("merge-exchange", n)
        rate, seconds = ours(network)
        loop = python_loop(network)
        matrix = numpy_matrix(network)
        print(f"{network.name:<20} {rate:11.3g} {seconds:8.3f} {loop:11.3g} {matrix:12.3g} "
              f"{rate / loop:8.0f}x {rate / matrix:9.0f}x")
    started = time.perf_counter()
    subprocess.run([sys.executable, "-m", "sortcheck", "check", str(ROOT / "corpus" / "merge-exchange-24.json")],
                   check=True, stdout=subprocess.DEVNULL)
    print(f"sortcheck check corpus/merge-exchange-24.json, new process: {time.perf_counter() - started:.2f} s")


if __name__ == "__main__":
    main()
