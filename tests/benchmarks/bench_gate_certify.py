"""Benchmark: the gate-circuit sat engine with and without certificates, and the time to check them.

For counting sorters, the table gives the engine's seconds without certificate
material (one incremental solver, assumptions) and with it (each question a
CNF of its own, glucose 4 logging a DRUP proof), their ratio, the DRUP lines
recorded and the seconds of checking the whole certificate again
(:func:`sortcheck.certify.check.certify_result`: our DRUP checker, the
re-encoding and the coverage).  Run by hand:
``python tests/benchmarks/bench_gate_certify.py``.
"""

from __future__ import annotations

import tempfile
import time
from pathlib import Path

from sortcheck.engines.base import Budget, Options
from sortcheck.engines.gates.threshold.sat import GateSatEngine
from sortcheck.load import write_netlist
from sortcheck.model import Sorts
from sortcheck.model.counting import counting_sorter
from sortcheck.certify.check import certify_result

CASES = [(4, 2), (8, 2), (16, 2), (4, 3), (8, 3), (4, 4), (5, 5)]


def best_of(runs: int, job) -> tuple[float, object]:
    best, result = float("inf"), None
    for _ in range(runs):
        started = time.perf_counter()
        result = job()
        best = min(best, time.perf_counter() - started)
    return best, result


def main() -> None:
    print(f"{'circuit':<14} {'plain s':>8} {'certify s':>10} {'ratio':>6} {'proof lines':>12} {'check s':>8}")
    with tempfile.TemporaryDirectory() as folder:
        for words, width in CASES:
            circuit = counting_sorter(words, width)
            plain, _ = best_of(2, lambda: GateSatEngine().check(circuit, Sorts(), Budget()))
            logged, verdict = best_of(2, lambda: GateSatEngine().check(circuit, Sorts(), Budget(),
                                                                        Options(certify=True)))
            path = str(Path(folder) / f"counting-{words}x{width}.json")
            write_netlist(circuit, path)
            started = time.perf_counter()
            outcome = certify_result(circuit, path, verdict, Path(folder) / "certs")
            checked = time.perf_counter() - started
            assert outcome["certified"], outcome["certificate"]
            lines = sum(len(call.proof.splitlines()) for call in verdict.certificate.calls)
            print(f"{f'{words} x {width} bits':<14} {plain:>8.2f} {logged:>10.2f} {logged / plain:>5.2f}x "
                  f"{lines:>12,} {checked:>8.2f}")


if __name__ == "__main__":
    main()
