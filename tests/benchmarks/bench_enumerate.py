"""Benchmark: the enumerate engine against two baselines, in one run.

Run from the repository root::

    python tests/benchmarks/bench_enumerate.py

Baselines (each checks the same merge exchange networks for sorting):

* a pure-Python 0-1 loop: every input as a list, comparators applied one by one;
* a numpy matrix: all 2^n 0-1 vectors as a ``uint8`` matrix, one column per
  channel, ``np.minimum``/``np.maximum`` per comparator (in chunks of 2^20 rows).

Throughput is 0-1 inputs checked (for ours: covered, with the reduction) per
second; ratios are ours over the baseline.
The last line times ``sortcheck check corpus/merge-exchange-24.json`` as a
new process, start-up included.

Then raw throughput without the reduction against a compiled brute force
(when a C compiler is present): straight-line bit-sliced C for the network,
512-bit GCC vector extensions, ``-O3 -march=native``, one core, on merge
exchange 32; ours with the numpy and the numba kernels (numba timed on a
second run, its kernel compiled and cached by the first).  Last, merge
exchange 36 and 40 with the reduction: time, vectors evaluated against 2^n.
"""

from __future__ import annotations

import itertools
import os
import platform
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

from sortcheck.engines import Budget, check
from sortcheck.engines.networks import compiled
from sortcheck.engines.networks.enumeration import EnumerateEngine
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
    """0-1 inputs covered per second by the engine as shipped (with the reduction), and its seconds."""
    verdict = check(network, Sorts(), engine="enumerate")
    assert verdict.status.value == "proved"
    return verdict.figures["vectors_total"] / verdict.figures["seconds"], verdict.figures["seconds"]


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


C_VECTOR_WORDS = 8  # 512-bit vectors


def c_source(network) -> str:
    """Straight-line bit-sliced C: 512 inputs per iteration, early exit on the first unsorted one."""
    n, words = network.channels, C_VECTOR_WORDS
    patterns = [sum(1 << lane for lane in range(64) if (lane >> bit) & 1) for bit in range(6)]
    lines = ["#include <stdint.h>", "#include <stdio.h>", "#include <time.h>",
             f"typedef uint64_t v __attribute__((vector_size({words * 8})));",
             "int main(void) {", "  struct timespec t0, t1; clock_gettime(CLOCK_MONOTONIC, &t0);",
             f"  const uint64_t iterations = 1ULL << {n - 9};", "  uint64_t failed = 0, i;",
             "  for (i = 0; i < iterations; i++) {"]
    for c in range(n):
        if c < 6:
            lines.append(f"    v x{c} = {{{', '.join([hex(patterns[c]) + 'ULL'] * words)}}};")
        elif c < 9:
            values = ["0xFFFFFFFFFFFFFFFFULL" if (w >> (c - 6)) & 1 else "0ULL" for w in range(words)]
            lines.append(f"    v x{c} = {{{', '.join(values)}}};")
        else:
            lines.append(f"    uint64_t s{c} = 0 - ((i >> {c - 9}) & 1); v x{c} = {{{', '.join([f's{c}'] * words)}}};")
    for a, b in network.comparators:
        lines.append(f"    {{ v t = x{a} & x{b}; x{b} = x{a} | x{b}; x{a} = t; }}")
    fail = " | ".join(f"(x{c} & ~x{c + 1})" for c in range(n - 1))
    lines += [f"    v f = {fail};", "    uint64_t any = 0;",
              f"    for (int w = 0; w < {words}; w++) any |= f[w];",
              "    if (any) { failed = 1; break; }", "  }",
              "  clock_gettime(CLOCK_MONOTONIC, &t1);",
              "  double s = (t1.tv_sec - t0.tv_sec) + 1e-9 * (t1.tv_nsec - t0.tv_nsec);",
              f"  printf(\"%llu %.6f %llu\\n\", (unsigned long long)failed, s, (unsigned long long)(i * {64 * words}));",
              "  return 0;", "}"]
    return "\n".join(lines) + "\n"


def c_brute_force(network) -> tuple[float, float] | None:
    """(inputs per second, seconds) of the compiled brute force, or None without a C compiler."""
    compiler = shutil.which("gcc") or shutil.which("cc")
    if compiler is None:
        return None
    with tempfile.TemporaryDirectory() as directory:
        source, binary = Path(directory) / "brute.c", Path(directory) / "brute"
        source.write_text(c_source(network))
        subprocess.run([compiler, "-O3", "-march=native", str(source), "-o", str(binary)], check=True)
        runs = [subprocess.run([str(binary)], check=True, capture_output=True, text=True).stdout.split()
                for _ in range(3)]
    if any(failed != "0" for failed, _, _ in runs):
        raise AssertionError("the C baseline found a failure in a sorting network")
    seconds = min(float(s) for _, s, _ in runs)
    return int(runs[0][2]) / seconds, seconds


def raw_rate(network, backend: str) -> tuple[float, float, float]:
    """(inputs per second, seconds, first run's seconds) without the reduction, best of three runs.

    For numba the first run includes compiling the kernel; the later ones reuse it.
    """
    engine = EnumerateEngine(backend=backend, reduction=False)
    times = []
    for _ in range(3):
        verdict = engine.check(network, Sorts(), Budget())
        assert verdict.status.value == "proved" and verdict.figures["kernel"] == backend
        times.append(verdict.figures["seconds"])
    return verdict.figures["vectors_total"] / min(times), min(times), times[0]


def raw_throughput() -> None:
    network = build_family("merge-exchange", 32)
    baseline = c_brute_force(network)
    if baseline is None:
        print("no C compiler: compiled brute force skipped")
    else:
        print(f"compiled C brute force (512-bit vectors, -O3 -march=native), {network.name}: "
              f"{baseline[0]:.3g} inputs/s ({baseline[1]:.2f} s)")
    numpy_network = build_family("merge-exchange", 28)
    rate, seconds, _ = raw_rate(numpy_network, "numpy")
    versus = f", {rate / baseline[0]:.2f}x the C brute force" if baseline else ""
    print(f"ours, numpy, no reduction, {numpy_network.name}: {rate:.3g} inputs/s ({seconds:.2f} s){versus}")
    if compiled.available():
        rate, seconds, first = raw_rate(network, "numba")
        versus = f", {rate / baseline[0]:.2f}x the C brute force" if baseline else ""
        print(f"ours, numba {compiled.numba_module().__version__}, no reduction, {network.name}: {rate:.3g} "
              f"inputs/s ({seconds:.2f} s; first run with compiling {first:.2f} s){versus}")
    else:
        print("numba not installed: compiled kernels skipped")
    for n in (36, 40):
        network = build_family("merge-exchange", n)
        verdict = check(network, Sorts(), engine="enumerate")
        figures = verdict.figures
        estimate = f"; C brute force would need ~{2 ** n / baseline[0]:.0f} s" if baseline else ""
        print(f"ours, reduction, {network.name}: {verdict.status.value} in {figures['seconds']:.3f} s, "
              f"{figures['vectors_evaluated']:,} vectors evaluated for 2^{n} = {2 ** n:,} inputs "
              f"(prefix {figures['prefix_comparators']}, suffix {figures['suffix_comparators']} comparators, "
              f"largest set {figures['largest_set']:,}, kernel {figures['kernel']}){estimate}")


if __name__ == "__main__":
    main()
    raw_throughput()
