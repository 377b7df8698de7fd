"""Benchmark: the smt engine on gate circuits against exhaustive simulation, in one run.

Run from the repository root::

    python tests/benchmarks/bench_smt_gates.py [--timeout SECONDS] [--quick]

Each row checks one circuit for sorting: lowered merge exchange networks of 8
and 16 words in the and-or and mux styles, counting sorters, and broken
copies (one gate's op flipped).  smt runs under the time budget (default
90 s; ``unknown`` when it runs out).  The baselines are the gate SAT engine
(same budget) and the simulate engine on every input when the circuit has at
most 2^24 of them (``-`` otherwise), each with the ratio smt / baseline.  All
run in this process, one after the other.
These runs set :data:`sortcheck.engines.gates.smt.MAX_GATES`.
"""

from __future__ import annotations

import argparse
import dataclasses
import platform
import time

from sortcheck.engines import Budget
from sortcheck.engines.gates.threshold.sat import GateSatEngine
from sortcheck.engines.gates.simulation import SimulateEngine
from sortcheck.engines.smt import SmtEngine
from sortcheck.model import Gate, Sorts
from sortcheck.model.circuit_builds import build_circuit

EXHAUSTIVE_BITS = 24
FLIP = {"and": "or", "or": "and", "nand": "nor", "nor": "nand", "xor": "xnor", "xnor": "xor"}


def flipped(circuit):
    """The circuit with the op of the first and/or/xor gate past the middle flipped."""
    middle = len(circuit.gates) // 2
    index = next(i for i in range(middle, len(circuit.gates)) if circuit.gates[i].op in FLIP)
    gate = circuit.gates[index]
    gates = circuit.gates[:index] + (Gate(gate.out, FLIP[gate.op], gate.inputs),) + circuit.gates[index + 1:]
    return dataclasses.replace(circuit, gates=gates, name=f"{circuit.name} gate {index} flipped")


def cases(quick: bool):
    specs = [("counting", 8, 2, None), ("counting", 8, 3, None), ("merge-exchange", 8, 4, "mux"),
             ("merge-exchange", 8, 4, "and-or")]
    if not quick:
        specs += [("merge-exchange", 8, 8, "mux"), ("merge-exchange", 8, 8, "and-or"),
                  ("merge-exchange", 16, 8, "mux"), ("merge-exchange", 16, 8, "and-or")]
    for family, n, width, style in specs:
        circuit = build_circuit(family, n, width, style=style)
        yield circuit
        yield flipped(circuit)


def timed(engine, circuit, timeout):
    started = time.perf_counter()
    verdict = engine.check(circuit, Sorts(), Budget.of(timeout))
    return verdict.status.value, time.perf_counter() - started


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--timeout", type=float, default=90.0, help="seconds for each smt check")
    parser.add_argument("--quick", action="store_true", help="only the circuits of 8 words of at most 4 bits")
    args = parser.parse_args()
    print(f"{platform.processor() or platform.machine()}, Python {platform.python_version()}; "
          f"smt budget {args.timeout:.0f} s")
    print(f"{'circuit':44} {'gates':>6} {'smt':>8} {'s':>6} {'sat':>8} {'s':>6} {'ratio':>6} "
          f"{'simulate':>8} {'s':>6} {'ratio':>6}")
    smt, sat = SmtEngine(max_gates=10 ** 9), GateSatEngine()
    simulate = SimulateEngine(max_exhaustive_bits=EXHAUSTIVE_BITS)
    for circuit in cases(args.quick):
        status, seconds = timed(smt, circuit, args.timeout)
        columns = [f"{circuit.name:44} {len(circuit.gates):6} {status:>8} {seconds:6.2f}"]
        baselines = [sat, simulate] if circuit.words * circuit.width <= EXHAUSTIVE_BITS else [sat]
        for baseline in baselines:
            base_status, base_seconds = timed(baseline, circuit, args.timeout)
            columns.append(f"{base_status:>8} {base_seconds:6.2f} {seconds / base_seconds:6.2f}")
        print(" ".join(columns), flush=True)


if __name__ == "__main__":
    main()
