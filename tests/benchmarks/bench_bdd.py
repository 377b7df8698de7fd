"""The bdd engine against threshold SAT (``--engine sat``) and the plain miter against a reference sorter, in one run.

Usage::

    python tests/benchmarks/bench_bdd.py [--cap SECONDS] [--skip-large] [--no-cli]

Part 1 proves sorters: counting sorters (no comparators; the circuits the bdd
engine is meant for) and a few lowered sorting networks.  Every check runs
through ``sortcheck.engines.check`` with the cap as its timeout (both engines
then run in a process that is ended at the deadline).  The baseline miter is
``miter_cnf`` of the circuit against ``reference_sorter`` (Batcher's merge
exchange network lowered to words), solved by glucose 4 under the same cap, CNF
building included.  With the CLI column, the bdd check also runs as
``sortcheck check FILE --engine bdd`` in a fresh process: the time a user
waits, start-up included.

Part 2 breaks each counting sorter by turning one gate of its popcount adders
into another op (a wrong count), refutes it with the bdd engine and with
threshold SAT, and checks the bdd counterexample on the netlist (the circuit
evaluated again) and its minimality claim.  ``limit`` marks a bdd check that
ended at its node limit (unknown, or refuted by the simulation that follows).
"""

from __future__ import annotations

import argparse
import os
import platform
import random
import subprocess
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from sortcheck.engines import Budget, Status, check  # noqa: E402
from sortcheck.engines.gates.threshold.spec import miter_cnf, reference_sorter  # noqa: E402
from sortcheck.engines.solving import Interrupted, solve_within  # noqa: E402
from sortcheck.load.write import write_netlist  # noqa: E402
from sortcheck.model import Gate, GateCircuit, Sorts  # noqa: E402
from sortcheck.model.circuit_builds import build_circuit  # noqa: E402

CASES = [("counting", 8, 3, None), ("counting", 16, 2, None), ("counting", 32, 2, None), ("counting", 64, 2, None),
         ("merge-exchange", 4, 8, "mux"), ("merge-exchange", 8, 4, "and-or"), ("bitonic", 8, 3, "mux")]
LARGE = {("counting", 64, 2, None)}
OTHER_OP = {"and": "or", "or": "and", "xor": "xnor", "xnor": "xor"}


def timed(engine: str, circuit: GateCircuit, cap: float):
    started = time.perf_counter()
    verdict = check(circuit, Sorts(), engine=engine, timeout=cap)
    return verdict, time.perf_counter() - started


def miter(circuit: GateCircuit, cap: float):
    """(answer, seconds) of the plain miter against the reference sorter; answer None past the cap."""
    started = time.perf_counter()
    clauses = miter_cnf(circuit, reference_sorter(circuit.words, circuit.width, style="mux"))[0]
    try:
        model = solve_within(clauses, Budget.of(max(0.0, cap - (time.perf_counter() - started))))
        answer = "refuted" if model is not None else "proved"
    except Interrupted:
        answer = None
    return answer, time.perf_counter() - started


def through_cli(circuit: GateCircuit, cap: float) -> tuple[str, float]:
    """(verdict word, seconds) of ``sortcheck check FILE --engine bdd`` in a fresh process."""
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / f"{circuit.name}.json"
        write_netlist(circuit, path)
        started = time.perf_counter()
        done = subprocess.run([sys.executable, "-m", "sortcheck", "check", str(path), "--engine", "bdd",
                               "--timeout", str(cap), "--quiet"], capture_output=True, text=True)
        seconds = time.perf_counter() - started
    words = {0: "proved", 1: "refuted", 3: "unknown"}
    return words.get(done.returncode, f"exit {done.returncode}"), seconds


def show(seconds: float, status: str | None, cap: float) -> str:
    return f"> {cap:.0f} s" if status in (None, "unknown") else f"{seconds:6.2f} s"


def show_verdict(verdict, seconds: float, cap: float) -> str:
    """The seconds of a decided check, ``limit`` with them for an unknown at the node limit, else past the cap."""
    if verdict.status is Status.UNKNOWN and verdict.stop.value == "size-limit":
        return f"limit {seconds:.0f} s"
    return show(seconds, verdict.status.value, cap)


def ratio(theirs: float, mine: float, ok: bool) -> str:
    return f"{theirs / mine:7.1f}x" if ok else "    n/a"


def part_sorters(cap: float, skip_large: bool, cli: bool) -> None:
    print(f"{'circuit':26} {'gates':>6} {'bdd':>9} {'bdd CLI':>9} {'sat':>9} {'sat/bdd':>8} {'miter':>9} "
          f"{'miter/bdd':>9}  (cap {cap:.0f} s)")
    for case in CASES:
        if skip_large and case in LARGE:
            continue
        family, n, w, style = case
        circuit = build_circuit(family, n, w, style=style)
        ours, mine = timed("bdd", circuit, cap)
        cli_status, cli_seconds = through_cli(circuit, cap) if cli else (None, 0.0)
        sat, sat_seconds = timed("sat", circuit, cap)
        answer, theirs = miter(circuit, cap)
        decided = ours.status is not Status.UNKNOWN
        figures = ours.figures
        print(f"{circuit.name:26} {len(circuit.gates):6,} {show_verdict(ours, mine, cap):>9} "
              f"{show(cli_seconds, cli_status, cap) if cli else '-':>9} {show(sat_seconds, sat.status.value, cap):>9} "
              f"{ratio(sat_seconds, mine, decided and sat.status is not Status.UNKNOWN):>8} "
              f"{show(theirs, answer, cap):>9} {ratio(theirs, mine, decided and answer is not None):>9}"
              f"  [{ours.status.value}, order {figures.get('order')}, peak {figures.get('peak_nodes', 0):,} nodes, "
              f"{len(figures.get('attempts', []))} attempts]", flush=True)


def wrong_count(circuit: GateCircuit, rng: random.Random) -> tuple[GateCircuit, str]:
    """One gate of the popcount adders (``cgt*_add*``) given another op."""
    candidates = [i for i, gate in enumerate(circuit.gates) if "_add" in gate.out and gate.op in OTHER_OP]
    index = rng.choice(candidates)
    gate = circuit.gates[index]
    changed = Gate(gate.out, OTHER_OP[gate.op], gate.inputs)
    return GateCircuit(circuit.inputs, circuit.gates[:index] + (changed,) + circuit.gates[index + 1:],
                       circuit.outputs, name=f"{circuit.name}-{gate.out}-as-{changed.op}"), gate.out


def part_broken(cap: float, skip_large: bool) -> None:
    rng = random.Random(2025)
    print(f"\n{'broken counting sorter (one adder gate changed)':52} {'bdd':>9} {'sat':>9}  counterexample")
    for family, n, w, style in CASES:
        if family != "counting" or (skip_large and (family, n, w, style) in LARGE):
            continue
        circuit, gate = wrong_count(build_circuit(family, n, w), rng)
        ours, mine = timed("bdd", circuit, cap)
        sat, theirs = timed("sat", circuit, cap)
        example = ours.counterexample
        if example is not None:
            again = tuple(circuit.evaluate(list(example.input)))
            checked = "valid on the netlist" if again == tuple(example.output) else "NOT VALID"
            ones = sum(bin(value % (1 << circuit.width)).count("1") for value in example.input)
            text = (f"{checked}, {ones} one bits, minimal {example.minimal}, found by "
                    f"{ours.figures.get('method')}")
        else:
            text = ours.status.value
        print(f"{circuit.name:52} {show_verdict(ours, mine, cap):>9} {show(theirs, sat.status.value, cap):>9}"
              f"  {text}", flush=True)


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cap", type=float, default=60.0, help="seconds per check and per baseline")
    parser.add_argument("--skip-large", action="store_true", help="skip the 64 x 2 counting sorter")
    parser.add_argument("--no-cli", action="store_true", help="skip the runs through the command line")
    args = parser.parse_args(argv)
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, python {platform.python_version()}; "
          f"load average {os.getloadavg()[0]:.2f} (other sessions share the machine)")
    part_sorters(args.cap, args.skip_large, not args.no_cli)
    part_broken(args.cap, args.skip_large)


if __name__ == "__main__":
    main()
