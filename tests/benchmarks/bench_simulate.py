"""Benchmark: the simulate engine's bit-parallel evaluator against a pure-Python loop, in one run.

Run from the repository root::

    python tests/benchmarks/bench_simulate.py

The circuits are gate-level sorters: Batcher's merge exchange comparators,
each a compare-and-swap of and/or/not/xnor gates and muxes.  Figures, in
inputs per second:

* ``eval``: :func:`evaluate_rows` alone (bit rows in, bit rows out);
* ``engine``: the whole ``simulate`` check (input generation, bit-slicing,
  evaluation, conversion back to words, the exact property check per input);
* ``loop``: a Python loop of ``GateCircuit.evaluate`` on random inputs, each
  judged with ``sorted``.

Ratios are ours over the loop.
"""

from __future__ import annotations

import os
import platform
import random
import time

import numpy as np

from sortcheck.engines.base import Budget
from sortcheck.engines.gates.simulation import SimulateEngine, compile_circuit, evaluate_rows, new_table, \
    block_words_for
from sortcheck.model import Gate, GateCircuit, OutputWord, Sorts, Word, bit_name
from sortcheck.model.families import build_family


def gate_sorter(words: int, width: int) -> GateCircuit:
    """A sorter of ``words`` words of ``width`` bits: merge exchange comparators as compare-and-swap gates."""
    gates: list[Gate] = []

    def gate(op, *inputs):
        gates.append(Gate(f"s{len(gates)}", op, tuple(inputs)))
        return gates[-1].out

    inputs = tuple(Word(f"x{k}", width) for k in range(words))
    wires = [[bit_name(word.name, i) for i in range(width)] for word in inputs]
    for a, b in build_family("merge-exchange", words).comparators:
        x, y = wires[a], wires[b]
        less, equal = 0, 1
        for i in reversed(range(width)):
            here = gate("and", gate("not", x[i]), y[i])
            less = here if less == 0 else gate("or", less, gate("and", equal, here))
            same = gate("xnor", x[i], y[i])
            equal = same if equal == 1 else gate("and", equal, same)
        wires[a] = [gate("mux", less, yi, xi) for xi, yi in zip(x, y)]
        wires[b] = [gate("mux", less, xi, yi) for xi, yi in zip(x, y)]
    return GateCircuit(inputs, tuple(gates), tuple(OutputWord(f"y{k}", tuple(w)) for k, w in enumerate(wires)))


def python_loop(circuit: GateCircuit, limit_seconds: float = 2.0) -> float:
    """Inputs per second of ``GateCircuit.evaluate`` plus a ``sorted`` check."""
    rng = random.Random(1)
    started, checked = time.perf_counter(), 0
    while time.perf_counter() - started < limit_seconds:
        for _ in range(64):
            values = [rng.getrandbits(circuit.width) for _ in range(circuit.words)]
            if circuit.evaluate(values) != sorted(values):
                raise AssertionError("baseline found a failure in a sorter")
        checked += 64
    return checked / (time.perf_counter() - started)


def evaluator(circuit: GateCircuit, limit_seconds: float = 1.0) -> float:
    """Inputs per second of the compiled program alone."""
    program = compile_circuit(circuit)
    words = block_words_for(program)
    table = new_table(program, words)
    rows = np.random.default_rng(0).integers(0, 1 << 63, size=(program.input_bits, words)).astype(np.uint64)
    started, blocks = time.perf_counter(), 0
    while time.perf_counter() - started < limit_seconds:
        evaluate_rows(program, table, rows)
        blocks += 1
    return blocks * words * 64 / (time.perf_counter() - started)


def engine(circuit: GateCircuit) -> tuple[float, str]:
    verdict = SimulateEngine().check(circuit, Sorts(), Budget.of(10))  # 2^32 inputs of 4x8 take longer
    if verdict.status.value == "refuted":
        raise AssertionError("the engine refuted a sorter")
    figures = verdict.figures
    return figures["vectors_evaluated"] / figures["seconds"], f"{verdict.status.value} ({figures['mode']})"


def main() -> None:
    print(f"machine: {platform.processor() or platform.machine()}, {os.cpu_count()} cores, "
          f"Python {platform.python_version()}, numpy {np.__version__}, load {os.getloadavg()[0]:.1f}")
    print(f"{'circuit':<14} {'gates':>6} {'eval in/s':>10} {'engine in/s':>12} {'loop in/s':>10} "
          f"{'eval/loop':>10} {'engine/loop':>12}  verdict")
    for words, width in ((3, 6), (4, 8), (4, 16), (8, 16), (16, 32)):
        circuit = gate_sorter(words, width)
        evaluated = evaluator(circuit)
        checked, verdict = engine(circuit)
        loop = python_loop(circuit)
        print(f"{f'{words}x{width}':<14} {len(circuit.gates):>6} {evaluated:10.3g} {checked:12.3g} {loop:10.3g} "
              f"{evaluated / loop:9.0f}x {checked / loop:11.0f}x  {verdict}")


if __name__ == "__main__":
    main()
