"""The gate sat engine (threshold SAT) against the plain miter with a reference sorter, in one run.

Usage::

    python tests/benchmarks/bench_gate_sat.py [--cap SECONDS] [--flips 30] [--skip-large]

Part 1 proves sorters: counting sorters and lowered sorting networks. The
baseline is ``gate_spec.miter_cnf`` of the circuit against
``gate_spec.reference_sorter`` (Batcher's merge exchange network lowered to
words, in a style other than the circuit's), solved by the same solver
(glucose 4) under the same cap.  Both sides include building their CNF.

Part 2 flips one AND/OR gate (seeded choice) of a 32-word, 16-bit sorter and
times the refutation: how many were refuted by simulation, how many by SAT,
how many not at all within the cap (a flip that does not change the function
cannot be refuted); then a few of the same flips by SAT alone, to time the
path that catches what simulation misses.
"""

from __future__ import annotations

import argparse
import os
import platform
import random
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from sortcheck.engines.base import Budget, Status  # noqa: E402
from sortcheck.engines.gates.threshold.sat import GateSatEngine  # noqa: E402
from sortcheck.engines.gates.threshold.spec import miter_cnf, reference_sorter  # noqa: E402
from sortcheck.engines.solving import Interrupted, solve_within  # noqa: E402
from sortcheck.model import Gate, GateCircuit, Sorts  # noqa: E402
from sortcheck.model.circuit_builds import build_circuit  # noqa: E402

CASES = [("counting", 16, 2, None), ("counting", 8, 3, None), ("merge-exchange", 8, 6, "and-or"),
         ("merge-exchange", 16, 8, "and-or"), ("bitonic", 16, 8, "mux"), ("merge-exchange", 32, 8, "xor"),
         ("merge-exchange", 32, 16, "and-or")]
LARGE = {("merge-exchange", 32, 8, "xor"), ("merge-exchange", 32, 16, "and-or")}


def ours(circuit, cap: float, samples: int | None = None):
    started = time.perf_counter()
    engine = GateSatEngine() if samples is None else GateSatEngine(samples=samples)
    verdict = engine.check(circuit, Sorts(), Budget.of(cap))
    return verdict, time.perf_counter() - started


def baseline(circuit, family: str, style: str | None, cap: float):
    """(answer, seconds) of the plain miter against the reference sorter; answer None past the cap."""
    started = time.perf_counter()
    reference_style = "xor" if style == "mux" else "mux"
    clauses = miter_cnf(circuit, reference_sorter(circuit.words, circuit.width, style=reference_style))[0]
    try:
        model = solve_within(clauses, Budget.of(max(0.0, cap - (time.perf_counter() - started))))
        answer = "refuted" if model is not None else "proved"
    except Interrupted:
        answer = None
    return answer, time.perf_counter() - started


def show(seconds: float, answer: str | None, cap: float) -> str:
    return f"> {cap:.0f} s" if answer is None else f"{seconds:7.2f} s"


def part_sorters(cap: float, skip_large: bool) -> None:
    print(f"{'circuit':34} {'gates':>7} {'threshold SAT':>14} {'plain miter':>12} {'ratio':>7}  (cap {cap:.0f} s)")
    for family, n, w, style in CASES:
        if skip_large and (family, n, w, style) in LARGE:
            continue
        circuit = build_circuit(family, n, w, style=style)
        verdict, mine = ours(circuit, cap)
        answer, theirs = baseline(circuit, family, style, cap)
        status = verdict.status.value
        mine_text = show(mine, None if status == "unknown" else status, cap)
        ratio = f"{theirs / mine:6.2f}x" if status != "unknown" and answer is not None else "   n/a"
        print(f"{circuit.name:34} {len(circuit.gates):7,} {mine_text:>14} {show(theirs, answer, cap):>12} {ratio}"
              f"  [{status}, {verdict.figures.get('mode')}, {verdict.figures.get('clauses', 0):,} clauses]",
              flush=True)


def flipped(circuit: GateCircuit, rng: random.Random) -> tuple[GateCircuit, int]:
    candidates = [i for i, gate in enumerate(circuit.gates) if gate.op in ("and", "or")]
    index = rng.choice(candidates)
    gate = circuit.gates[index]
    swapped = Gate(gate.out, "or" if gate.op == "and" else "and", gate.inputs)
    gates = circuit.gates[:index] + (swapped,) + circuit.gates[index + 1:]
    return GateCircuit(circuit.inputs, gates, circuit.outputs), index


def part_flips(flips: int, cap: float, samples: int | None = None) -> None:
    base = build_circuit("merge-exchange", 32, 16, style="and-or")
    rng = random.Random(2024)
    times, methods = [], {"simulation": 0, "threshold-sat": 0, "not refuted": 0}
    how = "simulation, then SAT" if samples is None else "SAT alone (no simulation)"
    print(f"\n{flips} single flipped AND/OR gates in {base.name} ({len(base.gates):,} gates), {how}, "
          f"cap {cap:.0f} s each")
    for _ in range(flips):
        circuit, index = flipped(base, rng)
        verdict, seconds = ours(circuit, cap, samples)
        if verdict.status is Status.REFUTED:
            methods[verdict.figures["method"]] += 1
            times.append(seconds)
            if verdict.figures["method"] != "simulation":
                print(f"  gate {index} ({base.gates[index].out}): refuted by SAT in {seconds:.2f} s", flush=True)
        else:
            methods["not refuted"] += 1
            print(f"  gate {index} ({base.gates[index].out}): {verdict.status.value} after {seconds:.2f} s", flush=True)
    times.sort()
    if times:
        print(f"refuted {len(times)} of {flips}: median {times[len(times) // 2]:.2f} s, slowest {times[-1]:.2f} s; "
              f"by method {methods}")
    else:
        print(f"none refuted; by method {methods}")


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cap", type=float, default=60.0, help="seconds per check and per baseline")
    parser.add_argument("--flips", type=int, default=30)
    parser.add_argument("--flip-cap", type=float, default=30.0)
    parser.add_argument("--sat-flips", type=int, default=5, help="flips refuted by SAT alone")
    parser.add_argument("--skip-sorters", action="store_true", help="skip part 1")
    parser.add_argument("--skip-large", action="store_true", help="skip the 32-word sorters in part 1")
    args = parser.parse_args(argv)
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, python {platform.python_version()}; "
          f"load average {os.getloadavg()[0]:.2f} (other sessions share the machine)")
    if not args.skip_sorters:
        part_sorters(args.cap, args.skip_large)
    if args.flips:
        part_flips(args.flips, args.flip_cap)
    if args.sat_flips:
        part_flips(args.sat_flips, args.flip_cap, samples=0)


if __name__ == "__main__":
    main()
