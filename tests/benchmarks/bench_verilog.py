"""Verilog designs through ``sortcheck check design.v``: synthesis, cache and check, against threshold SAT, in one run.

Usage::

    python tests/benchmarks/bench_verilog.py [--cap SECONDS] [--only NAME ...]

Each design of :data:`DESIGNS` (Verilog of our own in ``corpus/rtl/src`` and
``tests/verilog``: combinational RTL in several styles, pipelines, broken
variants) is checked through the command line in a fresh process, as a user
runs it: once with an empty synthesis cache (Yosys elaborates and
synthesizes it: ``cold``) and once more with the cache filled (``warm``: what a
CI re-run of unchanged files costs).  The baseline is the threshold SAT engine
(``--engine sat``) on the same design, warm cache, stopped at the cap: the
engine ``auto`` fell through to before lifting.  Ratios are the baseline's
seconds over the warm run's; ``>`` marks a baseline stopped at the cap.
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
SOURCES, OURS = ROOT / "corpus" / "rtl" / "src", ROOT / "tests" / "verilog"

#: name -> (files, command-line options, the verdict the design must get).
DESIGNS = {
    "merge exchange 16x8": ([SOURCES / "merge_exchange_sort16x8.v"], ["--words", "16", "--width", "8"], "proved"),
    "merge exchange 16x8, one missing": ([SOURCES / "merge_exchange_sort16x8_missing.v"],
                                         ["--words", "16", "--width", "8"], "refuted"),
    "transposition 8x8 (always @*)": ([SOURCES / "transposition_sort8x8.v"], ["--words", "8", "--width", "8"],
                                      "proved"),
    "median of 9x8": ([SOURCES / "median3x3_filter.v"], ["--words", "9", "--width", "8", "--property", "median"],
                      "proved"),
    "bitonic 32x16 (generate)": ([SOURCES / "bitonic_sort.v", SOURCES / "minmax_unit.v"],
                                 ["--top", "bitonic_sort", "--param", "N=32", "--param", "W=16", "--words", "32",
                                  "--width", "16"], "proved"),
    "counting 16x2": ([SOURCES / "counting_sort.v"], ["--top", "counting_sort16x2", "--words", "16", "--width", "2"],
                      "proved"),
    "pipeline 4x8, 3 stages": ([OURS / "telemetry_pipe.v", OURS / "cas_unit.v"], [], "proved"),
    "odd-even transposition 16x8, packed": ([OURS / "ladder_sort.v"], ["--param", "N=16", "--words", "16",
                                                                        "--width", "8"], "proved"),
}


def through_cli(files: list[Path], options: list[str], cache: str, cap: float,
                engine: str | None = None) -> tuple[str, float]:
    """(verdict, seconds) of ``sortcheck check`` in a fresh process with the given synthesis cache."""
    argv = [sys.executable, "-m", "sortcheck", "check", *map(str, files), *options, "--format", "json", "--quiet"]
    if engine:
        argv += ["--engine", engine, "--timeout", str(cap)]
    started = time.perf_counter()
    try:
        done = subprocess.run(argv, capture_output=True, text=True, timeout=cap + 30,
                              env={**os.environ, "SORTCHECK_CACHE_DIR": cache})
    except subprocess.TimeoutExpired:
        return "unknown", time.perf_counter() - started
    seconds = time.perf_counter() - started
    try:
        return json.loads(done.stdout)["results"][0]["verdict"] or "error", seconds
    except (ValueError, KeyError, IndexError):
        return f"exit {done.returncode}", seconds


def main(argv: list[str] | None = None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--cap", type=float, default=60.0, help="seconds for the baseline")
    parser.add_argument("--only", nargs="*", help="designs to run (default: all)")
    args = parser.parse_args(argv)
    print(f"machine: {platform.machine()}, {os.cpu_count()} cores, python {platform.python_version()}; "
          f"load average {os.getloadavg()[0]:.2f} at the start")
    print(f"{'design':38} {'verdict':>8} {'cold':>8} {'warm':>8} {'sat':>9} {'sat/warm':>9}  (cap {args.cap:.0f} s)")
    for name in args.only or DESIGNS:
        files, options, expected = DESIGNS[name]
        with tempfile.TemporaryDirectory(prefix="bench-verilog-") as cache:
            verdict, cold = through_cli(files, options, cache, args.cap * 10)
            again, warm = through_cli(files, options, cache, args.cap * 10)
            sat, sat_seconds = through_cli(files, options, cache, args.cap, engine="sat")
        stopped = sat == "unknown"
        shown = f"> {args.cap:.0f} s" if stopped else f"{sat_seconds:.1f} s"
        ratio = f"{'>' if stopped else ''}{sat_seconds / warm:.1f}x"
        flag = "" if verdict == again == expected else f"  EXPECTED {expected}, GOT {verdict}/{again}"
        print(f"{name:38} {verdict:>8} {cold:7.1f}s {warm:7.1f}s {shown:>9} {ratio:>9}{flag}", flush=True)
    print(f"load average {os.getloadavg()[0]:.2f} at the end")


if __name__ == "__main__":
    main()
