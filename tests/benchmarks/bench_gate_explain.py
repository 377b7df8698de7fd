"""Repair and minimal counterexamples of gate circuits against plain baselines, in one run.

Run: ``python tests/benchmarks/bench_gate_explain.py``.

* repair: ours (SAT over replaceable gates on copies of the circuit, every
  candidate checked on all inputs) against checking every op change of
  every gate, in file order, until one is proved;
* minimal counterexample: ours (shrink, then bit-parallel by weight, then
  SAT) against evaluating every input by weight, one at a time with
  ``GateCircuit.evaluate``, until one fails.

Both sides of each row must agree (the same least measure; a proved repair
on both sides, not necessarily the same gate).
"""

from __future__ import annotations

import itertools
import time

from sortcheck.engines import Budget, Status, check
from sortcheck.explain.gate_minimal import minimize_circuit_counterexample
from sortcheck.explain.gate_repair import change_ops, repair_circuit
from sortcheck.explain.gate_repair_cnf import alternative_ops
from sortcheck.model import Sorts
from sortcheck.model.circuit_builds import build_circuit

FLIP = {"and": "or", "or": "and", "xor": "xnor", "xnor": "xor", "mux": "xor"}

CASES = [("merge-exchange", 4, 3, "and-or", 0.6), ("merge-exchange", 5, 3, "mux", 0.5),
         ("bitonic", 4, 4, "xor", 0.7), ("counting", 5, 3, None, 0.4), ("merge-exchange", 6, 3, "mux", 0.8)]
MINIMUM_CASES = [("merge-exchange", 8, 8, "mux", 0.5), ("bitonic", 8, 8, "xor", 0.5),
                 ("merge-exchange", 16, 8, "mux", 0.5), ("merge-exchange", 8, 16, "and-or", 0.5)]


def mutant_of(circuit, fraction):
    indices = [i for i, gate in enumerate(circuit.gates) if gate.op in FLIP]
    for index in indices[int(fraction * len(indices)):]:
        gate = circuit.gates[index]
        mutant = change_ops(circuit, {gate.out: FLIP[gate.op]})
        if check(mutant, Sorts()).status == Status.REFUTED:
            return mutant
    raise AssertionError("no breaking mutant")


def baseline_repair(mutant):
    """Every other op of every gate, in file order, each checked with the engine, until one is proved."""
    checks = 0
    for gate in mutant.gates:
        for op in alternative_ops(gate):
            checks += 1
            if check(change_ops(mutant, {gate.out: op}), Sorts()).status == Status.PROVED:
                return gate.out, checks
    return None, checks


def baseline_minimum(mutant, seconds):
    """The least weight of a failing input, one input at a time; None when ``seconds`` run out first."""
    words, width = mutant.words, mutant.width
    deadline = time.perf_counter() + seconds
    for weight in range(words * width + 1):
        for positions in itertools.combinations(range(words * width), weight):
            raw = [0] * words
            for p in positions:
                raw[p // width] |= 1 << (p % width)
            if mutant.evaluate(raw) != sorted(raw):
                return weight
            if time.perf_counter() > deadline:
                return None
    return None


def repairs() -> None:
    print(f"{'circuit':40} {'repair s':>9} {'checks':>7} {'baseline s':>11} {'checks':>7} {'ratio':>7}")
    for family, words, width, style, fraction in CASES:
        circuit = build_circuit(family, words, width, style=style)
        mutant = mutant_of(circuit, fraction)
        started = time.perf_counter()
        outcome = repair_circuit(mutant, Sorts(), Budget.of(600))
        ours = time.perf_counter() - started
        started = time.perf_counter()
        gate, checks = baseline_repair(mutant)
        theirs = time.perf_counter() - started
        assert outcome.verified and gate is not None
        name = f"{circuit.name} ({len(circuit.gates)} gates)"
        print(f"{name:40} {ours:9.3f} {outcome.verifications:7} {theirs:11.3f} {checks:7} {theirs / ours:6.1f}x")


def minima(baseline_seconds: float = 120.0) -> None:
    print(f"\n{'circuit':40} {'minimum s':>9} {'baseline s':>11} {'ratio':>7} {'ones':>5} {'proved':>7}")
    for family, words, width, style, fraction in MINIMUM_CASES:
        circuit = build_circuit(family, words, width, style=style)
        mutant = mutant_of(circuit, fraction)
        verdict = check(mutant, Sorts())
        started = time.perf_counter()
        example = minimize_circuit_counterexample(mutant, Sorts(), verdict.counterexample, Budget.of(600))
        ours = time.perf_counter() - started
        started = time.perf_counter()
        least = baseline_minimum(mutant, baseline_seconds)
        theirs = time.perf_counter() - started
        assert least is None or example.ones == least
        shown = f"{theirs:11.3f}" if least is not None else f"{'> ' + str(int(baseline_seconds)):>11}"
        name = f"{circuit.name} ({len(circuit.gates)} gates)"
        ratio = f"{theirs / ours:6.1f}x" if least is not None else f">{theirs / ours:5.0f}x"
        print(f"{name:40} {ours:9.3f} {shown} {ratio} {example.ones:5} {str(example.minimal):>7}")


def main() -> None:
    repairs()
    minima()


if __name__ == "__main__":
    main()
