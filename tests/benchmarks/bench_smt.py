"""Benchmark: the smt engine against the enumerate engine, in one run.

Run from the repository root::

    python tests/benchmarks/bench_smt.py [--timeout SECONDS] [--largest N]

Each row checks one network for sorting with both engines and prints their
verdicts, seconds and the ratio smt / enumerate.  The networks are merge
exchange networks of 8 to 24 channels (proved) and a few broken ones (one
comparator removed or reversed: refuted).  smt runs under the given time
budget (default 600 s); a row whose smt check ran out says ``unknown``.
Both engines run in this process, one after the other, on the same machine.
"""

from __future__ import annotations

import argparse
import platform
import time

from sortcheck.engines import Budget, check
from sortcheck.engines.smt import SmtEngine
from sortcheck.model import ComparatorNetwork, Sorts
from sortcheck.model.families import build_family


def cases(largest: int):
    for n in range(8, largest + 1, 4):
        yield f"merge-exchange-{n}", build_family("merge-exchange", n)
    for n in (12, 16, 24):
        network = build_family("merge-exchange", n)
        middle = network.size // 2
        yield f"merge-exchange-{n} missing #{middle}", ComparatorNetwork(
            n, network.comparators[:middle] + network.comparators[middle + 1:])
        a, b = network.comparators[-1]
        yield f"merge-exchange-{n} last reversed", ComparatorNetwork(n, network.comparators[:-1] + ((b, a),))


def timed_enumerate(network):
    started = time.perf_counter()
    verdict = check(network, Sorts(), engine="enumerate")
    return verdict.status.value, time.perf_counter() - started


def timed_smt(network, timeout):
    started = time.perf_counter()
    verdict = SmtEngine().check(network, Sorts(), Budget.of(timeout))
    return verdict.status.value, time.perf_counter() - started, verdict.figures


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--timeout", type=float, default=600.0, help="smt time budget per network (s)")
    parser.add_argument("--largest", type=int, default=24, help="largest merge exchange network proved")
    args = parser.parse_args()
    print(f"# {platform.python_implementation()} {platform.python_version()}, {platform.machine()}")
    print(f"{'network':34} {'enumerate':>18} {'smt':>18} {'smt/enum':>9}  width lemmas cases")
    for label, network in cases(args.largest):
        enum_status, enum_seconds = timed_enumerate(network)
        smt_status, smt_seconds, figures = timed_smt(network, args.timeout)
        ratio = smt_seconds / enum_seconds if enum_seconds > 0 else float("inf")
        print(f"{label:34} {enum_status:>8} {enum_seconds:8.3f} s {smt_status:>8} {smt_seconds:8.2f} s "
              f"{ratio:8.0f}x  {figures.get('width', '-'):>5} {figures.get('lemmas', '-'):>6} "
              f"{figures.get('cases', '-'):>5}", flush=True)


if __name__ == "__main__":
    main()
