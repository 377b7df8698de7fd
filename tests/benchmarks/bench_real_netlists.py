"""sortcheck on netlists from a real synthesis flow (corpus/rtl) against threshold SAT and the plain miter, in one run.

Usage::

    python tests/benchmarks/bench_real_netlists.py [--cap SECONDS] [--only NAME ...]

Each netlist of ``corpus/rtl`` named in :data:`TARGETS` (Verilog of our own,
synthesized by Yosys and ABC: gates, and-inverter graphs, 4-input lookup
tables) is checked three ways:

* ``sortcheck``: ``sortcheck check FILE`` in a fresh process, as a user runs it
  (start-up, loading, the ``auto`` portfolio, shrinking a counterexample
  within its default 10 s), with its grouping file giving words, width and
  claim, and no ``--timeout`` (the process is ended at the cap);
* ``sat``: the threshold SAT engine (``--engine sat``), which is what ``auto``
  fell through to before lifting by function and BDDs, through
  ``sortcheck.engines.check`` with the cap as its timeout;
* ``miter``: the plain miter of the netlist against a reference sorter
  (Batcher's merge exchange network lowered to words, as ``miter_cnf``
  builds it) solved by glucose 4 under the same cap, CNF building included;
  only for the plain ascending sort, the one claim the reference states.

Ratios are the baseline's seconds over sortcheck's; ``>`` marks a baseline
stopped at the cap (the ratio is then a lower bound).  Each answer is also
compared with the listed verdict (``corpus/rtl/expected-verdicts.txt``).
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))

from sortcheck.engines import Budget, check  # noqa: E402
from sortcheck.engines.gates.threshold.spec import miter_cnf, reference_sorter  # noqa: E402
from sortcheck.engines.solving import Interrupted, solve_within  # noqa: E402
from sortcheck.load import read_netlist  # noqa: E402
from sortcheck.model import GateCircuit, Sorts  # noqa: E402

RTL = ROOT / "corpus" / "rtl"

#: The netlists the issue names, with broken variants (a comparator left out in the Verilog, a wrong count).
TARGETS = ("merge_exchange_sort16x8.blif", "transposition_sort8x8.blif", "median3x3_filter.blif",
           "bitonic_sort32x16.blif", "merge_exchange_sort16x8-lut4.blif", "counting_sort16x2.blif",
           "counting_sort8x3.blif", "counting_sort32x2.blif", "counting_sort64x2.blif",
           "transposition_sort8x8_missing.blif", "merge_exchange_sort16x8_missing.blif",
           "median3x3_filter_missing.blif", "bitonic_sort32x16_missing.aig", "counting_sort16x2_miscount.blif",
           "merge_exchange_sort16x8_missing-lut4.blif")


def listed_verdicts() -> dict[str, str]:
    rows = [line.split() for line in (RTL / "expected-verdicts.txt").read_text(encoding="utf-8").splitlines()
            if line.strip() and not line.startswith("#")]
    return {name: verdict for verdict, _, name in rows}


def through_cli(path: Path, cap: float) -> tuple[str, float, str]:
    """(verdict, seconds, the engine that decided) of ``sortcheck check FILE`` in a fresh process."""
    started = time.perf_counter()
    try:
        done = subprocess.run([sys.executable, "-m", "sortcheck", "check", str(path), "--format", "json", "--quiet"],
                              capture_output=True, text=True, timeout=cap)
    except subprocess.TimeoutExpired:
        return "unknown", time.perf_counter() - started, "-"
    seconds = time.perf_counter() - started
    try:
        result = json.loads(done.stdout)["results"][0]
        return result["verdict"], seconds, result.get("engine", "?")
    except (ValueError, KeyError, IndexError):
        return f"exit {done.returncode}", seconds, "?"


def threshold_sat(circuit: GateCircuit, cap: float) -> tuple[str, float]:
    started = time.perf_counter()
    verdict = check(circuit, circuit.claim, engine="sat", timeout=cap)
    return verdict.status.value, time.perf_counter() - started


def plain_miter(circuit: GateCircuit, cap: float) -> tuple[str | None, float]:
    """(answer, seconds) of the miter against the reference sorter; None past the cap, "n/a" for other claims."""
    if circuit.claim != Sorts():
        return "n/a", 0.0
    started = time.perf_counter()
    clauses = miter_cnf(circuit, reference_sorter(circuit.words, circuit.width, style="mux"))[0]
    try:
        model = solve_within(clauses, Budget.of(max(0.0, cap - (time.perf_counter() - started))))
        return ("refuted" if model is not None else "proved"), time.perf_counter() - started
    except Interrupted:
        return None, time.perf_counter() - started


def shown(status: str | None, seconds: float, cap: float) -> str:
    if status == "n/a":
        return "n/a"
    return f"> {cap:.0f} s" if status in (None, "unknown") else f"{seconds:.2f} s"


def ratio(status: str | None, seconds: float, mine: float) -> str:
    if status == "n/a":
        return "-"
    bound = ">" if status in (None, "unknown") else ""
    value = seconds / mine
    return f"{bound}{value:.1f}x" if value < 10 else f"{bound}{value:.0f}x"


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cap", type=float, default=60.0, help="seconds per check and per baseline")
    parser.add_argument("--only", nargs="*", help="netlists of corpus/rtl to run (default: all targets)")
    args = parser.parse_args(argv)
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, python {platform.python_version()}; "
          f"load average {os.getloadavg()[0]:.2f} at the start")
    listed = listed_verdicts()
    print(f"{'netlist':42} {'gates':>7} {'listed':>8} {'sortcheck':>10} {'engine':>9} {'sat':>9} {'sat/ours':>9} "
          f"{'miter':>9} {'miter/ours':>10}  (cap {args.cap:.0f} s)")
    for name in args.only or TARGETS:
        path = RTL / name
        circuit = read_netlist(path)
        verdict, mine, engine = through_cli(path, args.cap)
        sat, sat_seconds = threshold_sat(circuit, args.cap)
        miter, miter_seconds = plain_miter(circuit, args.cap)
        agrees = "" if verdict == listed[name] else "  DISAGREES WITH THE LISTING"
        print(f"{name:42} {len(circuit.gates):7,} {listed[name]:>8} {verdict + f' {mine:.1f} s':>10} {engine:>9} "
              f"{shown(sat, sat_seconds, args.cap):>9} {ratio(sat, sat_seconds, mine):>9} "
              f"{shown(miter, miter_seconds, args.cap):>9} {ratio(miter, miter_seconds, mine):>10}{agrees}",
              flush=True)
    print(f"load average {os.getloadavg()[0]:.2f} at the end")


if __name__ == "__main__":
    main()
