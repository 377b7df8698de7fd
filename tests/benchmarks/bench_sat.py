"""The sat engine against the plain CNF solved by CaDiCaL 1.9.5, on Batcher's and Parberry's sorting networks.

Usage::

    python tests/benchmarks/bench_sat.py [--cap SECONDS] [--sizes 128,256,512,1024] [--baseline-up-to 512]
                                         [--families merge-exchange,bitonic,pairwise] [--before-cap SECONDS]

The baseline is the plain encoding (``sortcheck.engines.networks.cnf.plain_cnf``:
six clauses per comparator and one clause saying some adjacent output pair is
out of order) solved once by python-sat's cadical195, in a child process that
is ended at the cap (CaDiCaL cannot be interrupted through python-sat).

The column "no blocks" is the engine without its step through independent
sub-networks (``SatEngine(blocks=False)``, the engine as it was before that
step), in the same run, ended at ``--before-cap``: on Batcher's networks the
step is never reached and both columns should agree; on the pairwise network
it is what makes the proof.
"""

from __future__ import annotations

import argparse
import multiprocessing
import os
import platform
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from sortcheck.engines.base import Budget  # noqa: E402
from sortcheck.engines.networks.cnf import plain_cnf  # noqa: E402
from sortcheck.engines.networks.sat import SatEngine  # noqa: E402
from sortcheck.model import Sorts  # noqa: E402
from sortcheck.model.families import build_family  # noqa: E402


def _baseline_child(family: str, n: int, queue) -> None:
    from pysat.solvers import Solver

    encoding = plain_cnf(build_family(family, n), Sorts())
    started = time.perf_counter()
    with Solver(name="cadical195", bootstrap_with=encoding.clauses) as solver:
        answer = solver.solve()
    queue.put((answer, time.perf_counter() - started))


def baseline(family: str, n: int, cap: float) -> float | None:
    """Seconds the plain CNF takes with cadical195 (solving only), or None past the cap."""
    context = multiprocessing.get_context("fork")
    queue = context.Queue()
    child = context.Process(target=_baseline_child, args=(family, n, queue))
    child.start()
    child.join(cap)
    if child.is_alive():
        child.kill()
        child.join()
        return None
    answer, seconds = queue.get()
    assert answer is False, "the plain CNF of a sorting network must be unsatisfiable"
    return seconds


def machine() -> str:
    cpu = platform.processor() or "unknown CPU"
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                cpu = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    import numpy
    import pysat
    return (f"{cpu}, {os.cpu_count()} cores, Python {platform.python_version()}, numpy {numpy.__version__}, "
            f"python-sat {pysat.__version__}")


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--cap", type=float, default=180.0, help="seconds before a baseline run is ended")
    parser.add_argument("--sizes", default="128,256,512,1024")
    parser.add_argument("--baseline-up-to", type=int, default=512, help="skip the baseline above this size")
    parser.add_argument("--families", default="merge-exchange,bitonic,pairwise")
    parser.add_argument("--before-cap", type=float, default=120.0,
                        help="seconds before the engine without the block step is stopped")
    args = parser.parse_args()
    print(f"machine: {machine()}, load average {os.getloadavg()[0]:.2f} at the start")
    print(f"baseline: plain CNF, cadical195, one solve; cap {args.cap:.0f} s; "
          f"no blocks: SatEngine(blocks=False), cap {args.before_cap:.0f} s\n")
    print(f"{'network':<22}{'sortcheck sat':>14}{'no blocks':>12}{'plain CNF':>12}{'ratio':>9}   "
          f"how sortcheck decided")
    for family in args.families.split(","):
        for n in (int(size) for size in args.sizes.split(",")):
            network = build_family(family, n)
            started = time.perf_counter()
            verdict = SatEngine().check(network, Sorts(), Budget())
            ours = time.perf_counter() - started
            assert verdict.status.value == "proved", verdict.scope
            figures = verdict.figures
            how = (f"{figures['decided']}: {figures['parts_proved']} parts, {figures['vectors_enumerated']:,} "
                   f"vectors, {figures['sat_calls']} SAT calls, {figures['sub_networks_proved']} sub-networks")
            started = time.perf_counter()
            before = SatEngine(blocks=False).check(network, Sorts(), Budget.of(args.before_cap))
            before_seconds = time.perf_counter() - started
            assert before.status.value in ("proved", "unknown"), before.scope
            before_shown = (f"{before_seconds:.2f} s" if before.status.value == "proved"
                            else f"> {args.before_cap:.0f} s")
            if n > args.baseline_up_to:
                theirs, shown, ratio = None, "skipped", "-"
            else:
                theirs = baseline(family, n, args.cap)
                shown = f"{theirs:.2f} s" if theirs is not None else f"> {args.cap:.0f} s"
                ratio = f"{theirs / ours:.0f}x" if theirs is not None else f"> {args.cap / ours:.0f}x"
            print(f"{family + '-' + str(n):<22}{ours:>12.2f} s{before_shown:>12}{shown:>12}{ratio:>9}   {how}",
                  flush=True)


if __name__ == "__main__":
    main()
