"""Benchmark: checks split into pieces on 2 worker processes (and on Dask) against one process, in one run.

Run from the repository root (best on a quiet machine; the load is printed)::

    python tests/benchmarks/bench_distribute.py          # everything (about two minutes)
    python tests/benchmarks/bench_distribute.py --quick  # smaller checks
    python tests/benchmarks/bench_distribute.py --dask   # the Dask rows alone

Rows:

* enumeration, proved: merge exchange without the reduction (every 0-1
  input evaluated), one process against 2 local worker processes;
* enumeration, counted: a random 40-channel network (first layer a perfect
  matching, then 4n random comparators; seed 1), ``--count`` with the
  reduction, as ``sortcheck check --count`` runs it;
* per-threshold SAT on a gate circuit (``--engine sat``): its pieces one
  after another in this process (how ``--jobs 1`` runs them) against 2 local
  worker processes;
* ``auto`` on counting sorters, which only threshold SAT decides: the
  pipeline's steps run here, then the threshold pieces (``--jobs 1`` against
  ``--jobs 2``);
* ``repair`` of merge exchange networks with two (or four) comparators
  removed: the two-change search in one process against its pieces of first
  changes on 2 worker processes;
* the cut-off: merge exchange without the reduction on 22..27 channels, the
  engine's estimate against the measured times whole and split;
* Dask: a ``LocalCluster`` of 2 worker processes on loopback, the overhead per
  piece (64 tiny pieces) and the speed-up on the proved row;
* ``sortcheck check corpus/merge-exchange-24.json`` as a new process with the
  default ``--jobs`` (start-up included).
"""

from __future__ import annotations

import os
import random
import resource
import subprocess
import sys
import time
from pathlib import Path

from sortcheck.engines.networks import enumeration_pieces
from sortcheck.engines.base import Budget, Options
from sortcheck.engines.runners.distribute import InProcess, LocalProcesses, run_pieces
from sortcheck.engines.networks.enumeration import EnumerateEngine
from sortcheck.model import ComparatorNetwork, Sorts
from sortcheck.model.families import build_family

ROOT = Path(__file__).resolve().parents[2]
UNREDUCED = EnumerateEngine(reduction=False)


def load() -> str:
    one, five, _ = os.getloadavg()
    return f"load average {one:.2f} (1 min), {five:.2f} (5 min) on {os.cpu_count()} cores"


def _busy(_=None) -> float:
    started, total = time.perf_counter(), 0
    for number in range(5_000_000):
        total += number
    return time.perf_counter() - started


def capacity() -> float:
    """How much more two independent busy loops get done than one, right now (2.0 on an idle 2-core machine)."""
    import multiprocessing

    alone = _busy()
    with multiprocessing.get_context("fork").Pool(2) as pool:
        pool.map(_busy, [0, 0])  # start-up
        started = time.perf_counter()
        pool.map(_busy, [0, 1])
        both = time.perf_counter() - started
    return 2 * alone / both


def random_network(n: int, per_channel: int, seed: int) -> ComparatorNetwork:
    rng = random.Random(seed)
    comparators = [(i, i + 1) for i in range(0, n - 1, 2)]
    for _ in range(per_channel * n):
        comparators.append(tuple(sorted(rng.sample(range(n), 2))))
    return ComparatorNetwork(n, tuple(comparators), name=f"random-{n}")


def timed(function):
    started = time.perf_counter()
    result = function()
    return result, time.perf_counter() - started


def cpu_seconds() -> tuple[float, float]:
    """Processor time of this process, and of its ended children (local workers are ended after each check)."""
    own, children = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
    return own.ru_utime + own.ru_stime, children.ru_utime + children.ru_stime


def whole_and_split(engine, network, options, runner, pieces=None):
    """(seconds whole in this process, seconds split on ``runner`` (finding the pieces included), pieces).

    The two verdicts must agree.
    For local processes it also notes the processor time of both runs (the
    work splitting adds, which load does not hide) and the speed-up they
    project for 2 idle cores: whole / (here + workers / 2).
    """
    enumeration_pieces._layouts.clear()  # each run does its own reduction
    before = cpu_seconds()
    whole, whole_seconds = timed(lambda: engine.check(network, Sorts(), Budget(), options))
    whole_cpu = cpu_seconds()[0] - before[0]
    enumeration_pieces._layouts.clear()
    before = cpu_seconds()

    def split_run():
        found = pieces or engine.pieces(network, Sorts(), options)
        return found, found and run_pieces(engine, network, Sorts(), found, Budget(), options, runner)

    (pieces, split), split_seconds = timed(split_run)
    if not pieces:
        return whole_seconds, None, 0
    if isinstance(runner, LocalProcesses):
        runner.close()
        after = cpu_seconds()
        parent, workers = after[0] - before[0], after[1] - before[1]
        CPU_NOTES.append(f"{network.name}: processor time {whole_cpu:.2f} s whole; split {parent:.2f} s here "
                         f"(finding the pieces, waiting) + {workers:.2f} s in the workers = "
                         f"{(parent + workers) / whole_cpu:.2f}x the work; on 2 idle cores about "
                         f"{whole_cpu / (parent + workers / 2):.2f}x faster")
    assert split.status == whole.status and split.counterexample == whole.counterexample
    assert split.figures.get("failing_inputs") == whole.figures.get("failing_inputs")
    return whole_seconds, split_seconds, len(pieces)


CPU_NOTES: list[str] = []


def row(label: str, whole: float, split: float | None, pieces: int, where: str = "2 processes") -> None:
    if split is None:
        print(f"| {label} | {whole:.2f} s | not split | |")
    elif pieces < 2:
        print(f"| {label} | {whole:.2f} s | {split:.2f} s (run whole: below the split size) | |")
    else:
        print(f"| {label} | {whole:.2f} s | {split:.2f} s ({pieces} pieces) | {whole / split:.2f}x on {where} |")


def enumeration_rows(quick: bool, runner) -> None:
    print("\n| check | 1 process | split | speed-up |\n| --- | --- | --- | --- |")
    for n in (27,) if quick else (29, 31):
        row(f"merge exchange {n}, no reduction (2^{n} vectors), proved",
            *whole_and_split(UNREDUCED, build_family("merge-exchange", n), Options(), runner))
    network = random_network(38 if quick else 40, 4, 1)
    row(f"random {network.channels} channels, --count, with the reduction",
        *whole_and_split(EnumerateEngine(), network, Options(count=True), runner))


def gate_rows(quick: bool, runner) -> None:
    try:
        from sortcheck.engines.gates.threshold.sat import GateSatEngine
        from sortcheck.model.circuit_builds import build_circuit
    except ImportError:
        print("\nper-threshold SAT: the gate-circuit SAT engine is not in this tree; not measured")
        return
    engine = GateSatEngine(samples=0)
    print("\n| gate circuit, threshold SAT | 1 process | split | speed-up |\n| --- | --- | --- | --- |")
    for family, words, width in ((("bitonic", 8, 4),) if quick else (("bitonic", 8, 5), ("merge-exchange", 12, 4))):
        circuit = build_circuit(family, words, width)
        if not hasattr(engine, "pieces") or engine.pieces(circuit, Sorts()) is None:
            print(f"| {family} {words} x {width} | not split by the engine | | |")
            continue
        row(f"{family} {words} words x {width} bits", *whole_and_split(engine, circuit, Options(), runner))


def pipeline_rows(quick: bool, runner) -> None:
    """``sortcheck check`` on gate circuits that only threshold SAT decides: ``--jobs 1`` against ``--jobs 2``."""
    from sortcheck.engines.runners.distribute import check_split
    from sortcheck.model.counting import counting_sorter

    print("\n| gate circuit, auto (simulation, lifting, threshold SAT) | --jobs 1 | --jobs 2 | speed-up |\n"
          "| --- | --- | --- | --- |")
    for words, width in ((10, 3),) if quick else ((16, 2), (10, 3)):
        circuit = counting_sorter(words, width)
        single, one = timed(lambda: check_split(circuit, Sorts(), runner=InProcess(splits=False)))
        split, two = timed(lambda: check_split(circuit, Sorts(), runner=runner))
        assert split.status == single.status and split.counterexample == single.counterexample
        row(f"counting sorter {words} words x {width} bits ({len(circuit.gates)} gates), {single.status.value}", one,
            two, split.figures["pieces"])


def repair_rows(quick: bool, runner, where: str = "2 processes") -> None:
    """``sortcheck repair`` of networks that need two changes (or have no repair within two): one process
    against the two-change stage's pieces on 2 worker processes; both must find the same repair."""
    from sortcheck.explain.repair import repair_network
    from sortcheck.model.families import merge_exchange

    print("\n| repair, two changes | 1 process | split | speed-up |\n| --- | --- | --- | --- |")
    cases = [(16, (10, 40))] if quick else [(16, (10, 40)), (20, (15, 70)), (12, (3, 10, 20, 30))]
    for n, removed in cases:
        network = merge_exchange(n)
        broken = ComparatorNetwork(n, tuple(c for i, c in enumerate(network.comparators) if i not in removed))
        single, one = timed(lambda: repair_network(broken, Sorts(), Budget.of(600), max_changes=2))
        split, two = timed(lambda: repair_network(broken, Sorts(), Budget.of(600), max_changes=2, runner=runner))
        assert split.changes == single.changes and split.status == single.status
        label = f"merge exchange {n} without comparators {', '.join(map(str, removed))}: {single.status}"
        row(f"{label} ({single.candidates_tried:,} candidates)", one, two, split.pieces, where)


def cutoff_rows(runner) -> None:
    print("\n| merge exchange, no reduction | estimate | 1 process | 2 processes, 8 pieces | ratio |\n"
          "| --- | --- | --- | --- | --- |")
    saved = enumeration_pieces.SPLIT_SECONDS, enumeration_pieces.PIECE_SECONDS, enumeration_pieces.MAX_PIECES
    enumeration_pieces.SPLIT_SECONDS, enumeration_pieces.PIECE_SECONDS, enumeration_pieces.MAX_PIECES = 0, 1e-9, 8
    try:
        for n in range(22, 28):
            network = build_family("merge-exchange", n)
            space, layout = enumeration_pieces.reduced_layout(network, Sorts(), False)
            estimate = enumeration_pieces.estimated_seconds(layout, len(space.suffix), False)
            whole, split, pieces = whole_and_split(UNREDUCED, network, Options(), runner)
            print(f"| {n} channels | {estimate:.2f} s | {whole:.3f} s | {split:.3f} s | {whole / split:.2f}x |")
    finally:
        enumeration_pieces.SPLIT_SECONDS, enumeration_pieces.PIECE_SECONDS, enumeration_pieces.MAX_PIECES = saved


def overhead_per_piece(runner, pieces: int = 64) -> float:
    """Seconds per piece that ``runner`` adds to 64 tiny pieces run in this process."""
    saved = enumeration_pieces.SPLIT_SECONDS, enumeration_pieces.PIECE_SECONDS, enumeration_pieces.MAX_PIECES
    enumeration_pieces.SPLIT_SECONDS, enumeration_pieces.PIECE_SECONDS, enumeration_pieces.MAX_PIECES = 0, 1e-9, pieces
    try:
        network = build_family("merge-exchange", 22)
        piece_list = UNREDUCED.pieces(network, Sorts())
        run_pieces(UNREDUCED, network, Sorts(), piece_list, Budget(), Options(), runner)  # warm up the workers
        _, here = timed(lambda: run_pieces(UNREDUCED, network, Sorts(), piece_list, Budget(), Options(), InProcess()))
        _, there = timed(lambda: run_pieces(UNREDUCED, network, Sorts(), piece_list, Budget(), Options(), runner))
        return (there * getattr(runner, "jobs", 2) - here) / len(piece_list)
    finally:
        enumeration_pieces.SPLIT_SECONDS, enumeration_pieces.PIECE_SECONDS, enumeration_pieces.MAX_PIECES = saved


def dask_rows(quick: bool) -> None:
    try:
        from distributed import LocalCluster
    except ImportError:
        print("\nDask: not installed (pip install 'sortcheck[cluster]'); not measured")
        return
    from sortcheck.engines.runners.distribute import DaskCluster

    with LocalCluster(processes=True, n_workers=2, threads_per_worker=1, host="127.0.0.1",
                      dashboard_address=None) as cluster, DaskCluster(cluster.scheduler_address) as runner:
        print(f"\nDask overhead per piece (64 tiny pieces, 2 workers): {overhead_per_piece(runner) * 1000:.1f} ms")
        n = 27 if quick else 29
        print("\n| check | 1 process | split | speed-up |\n| --- | --- | --- | --- |")
        row(f"merge exchange {n}, no reduction, proved",
            *whole_and_split(UNREDUCED, build_family("merge-exchange", n), Options(), runner), where="Dask")
        repair_rows(True, runner, where="Dask")


def cli_start() -> float:
    command = [sys.executable, "-m", "sortcheck", "check", str(ROOT / "corpus" / "merge-exchange-24.json")]
    best = min(timed(lambda: subprocess.run(command, capture_output=True, check=True))[1] for _ in range(3))
    return best


def main() -> None:
    quick = "--quick" in sys.argv
    if "--dask" in sys.argv:  # the Dask rows alone
        dask_rows(quick)
        return
    print(f"{load()}; python {sys.version.split()[0]}")
    print(f"two independent busy processes do {capacity():.2f}x the work of one right now (2.00x when idle): "
          f"the most any split can gain")
    with LocalProcesses(2) as runner:
        enumeration_rows(quick, runner)
        gate_rows(quick, runner)
        pipeline_rows(quick, runner)
        repair_rows(quick, runner)
        cutoff_rows(runner)
        print(f"\nlocal processes: overhead per piece {overhead_per_piece(runner) * 1000:.1f} ms")
    print("\n" + "\n".join(CPU_NOTES))
    dask_rows(quick)
    print(f"\nsortcheck check corpus/merge-exchange-24.json, new process, default --jobs: {cli_start():.2f} s")
    print(f"\n{load()}; two busy processes: {capacity():.2f}x of one")


if __name__ == "__main__":
    main()
