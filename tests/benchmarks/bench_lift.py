"""The lift engine against plain miters, on Batcher's merge exchange network lowered to gates.

Usage::

    python tests/benchmarks/bench_lift.py [--cap SECONDS] [--cases 16x8,32x8,32x16] [--styles mux,and-or]

For every case the circuit is ``lower_network(merge_exchange(n), w, style)``
and the question is ``sorts``.  Columns:

* ``lift``: seconds of :func:`sortcheck.engines.gates.lifting.structural.lift_circuit` (simulation
  signatures, block search, one SAT proof per distinct block shape);
* ``total``: seconds of ``LiftEngine().check`` (lifting, then the network by
  the comparator engines, ``auto``), and the verdict;
* ``miter same``: the plain miter (``sortcheck.engines.gates.threshold.spec.miter_cnf``) of
  the circuit against the reference sorter (merge exchange lowered in the mux
  style) solved by glucose 4; for the mux style both sides are the same gates
  and structural hashing alone decides it;
* ``miter bitonic``: the miter against Batcher's bitonic sorter lowered in the
  mux style (a sorter of another structure), solved by glucose 4, ended at
  ``--cap`` seconds (``>cap``).

Ratios are baseline / total.  The machine is shared: say how loaded it was.
"""

from __future__ import annotations

import argparse
import os
import platform
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from sortcheck.engines.base import Budget  # noqa: E402
from sortcheck.engines.gates.threshold.spec import miter_cnf, reference_sorter  # noqa: E402
from sortcheck.engines.gates.lifting.engine import LiftEngine  # noqa: E402
from sortcheck.engines.gates.lifting.structural import lift_circuit  # noqa: E402
from sortcheck.engines.solving import Interrupted, solve_within  # noqa: E402
from sortcheck.model import Sorts  # noqa: E402
from sortcheck.model.families import bitonic, merge_exchange  # noqa: E402
from sortcheck.model.lowering import lower_network  # noqa: E402


def miter_seconds(circuit, reference, cap: float) -> tuple[float | None, bool | None]:
    """Seconds to build and solve the miter, and whether the circuits are equal (None past the cap)."""
    started = time.perf_counter()
    clauses, _, _ = miter_cnf(circuit, reference)
    try:
        model = solve_within(clauses, Budget.of(cap))
    except Interrupted:
        return None, None
    return time.perf_counter() - started, model is None


def show(seconds: float | None, cap: float) -> str:
    return f">{cap:.0f}" if seconds is None else f"{seconds:.2f}"


def ratio(baseline: float | None, ours: float, cap: float) -> str:
    return f">{cap / ours:.1f}x" if baseline is None else f"{baseline / ours:.1f}x"


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cap", type=float, default=120.0, help="seconds for each miter baseline")
    parser.add_argument("--cases", default="16x8,32x8,32x16", help="NxW cases, comma-separated")
    parser.add_argument("--styles", default="mux,and-or", help="lowering styles, comma-separated")
    args = parser.parse_args(argv)
    print(f"python {platform.python_version()} on {platform.machine()}, {os.cpu_count()} cores, "
          f"load average {os.getloadavg()[0]:.1f}")
    print(f"{'case':>12} {'style':>7} {'gates':>6} {'lift':>6} {'total':>6} {'verdict':>8} {'engine':>10} "
          f"{'miter same':>11} {'ratio':>7} {'miter bitonic':>14} {'ratio':>8}")
    for case in args.cases.split(","):
        n, w = map(int, case.split("x"))
        for style in args.styles.split(","):
            circuit = lower_network(merge_exchange(n), w, style=style)
            started = time.perf_counter()
            lifting = lift_circuit(circuit, Sorts())
            lift = time.perf_counter() - started
            started = time.perf_counter()
            verdict = LiftEngine().check(circuit, Sorts(), Budget())
            total = time.perf_counter() - started
            assert lifting.lifted and verdict.status.value == "proved", verdict.scope
            same, equal = miter_seconds(circuit, reference_sorter(n, w, style="mux"), args.cap)
            other, other_equal = miter_seconds(circuit, lower_network(bitonic(n), w, style="mux"), args.cap)
            assert equal in (None, True) and other_equal in (None, True)
            print(f"{case:>12} {style:>7} {len(circuit.gates):>6} {lift:>6.2f} {total:>6.2f} "
                  f"{verdict.status.value:>8} {verdict.figures['network_engine']:>10} "
                  f"{show(same, args.cap):>11} {ratio(same, total, args.cap):>7} "
                  f"{show(other, args.cap):>14} {ratio(other, total, args.cap):>8}", flush=True)


if __name__ == "__main__":
    main()
