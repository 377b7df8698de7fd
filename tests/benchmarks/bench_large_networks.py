"""Growth of the default check with the channel count: 1,024 to 65,536 channels, through the CLI.

For merge exchange, bitonic, pairwise and odd-even merge sorters of 2^10 .. 2^16 channels (``--largest``
stops earlier), writes the network with ``sortcheck build`` (not timed) and runs ``sortcheck check FILE.json``
(default engine, ``auto``) in a fresh process, measuring its wall-clock seconds and peak resident memory
(``os.wait4`` on that very process).  Prints one row per size and, per family, the exponent ``k`` of
``seconds ~ n^k`` fitted by least squares on log-log.  The baseline, the same engine with parts on two runs
enumerated or sent to SAT instead of checked on profiles (``SatEngine(profiles=False)``, through the Python
API in a fresh process), runs up to ``--baseline-largest`` channels and its ratio is printed beside.

    python tests/benchmarks/bench_large_networks.py                 # everything (the lead's run: a quiet machine)
    python tests/benchmarks/bench_large_networks.py --largest 4096  # a quick look
"""

from __future__ import annotations

import argparse
import json
import math
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

FAMILIES = ("merge-exchange", "bitonic", "pairwise", "odd-even-merge")
SIZES = tuple(1 << k for k in range(10, 17))

BASELINE = """
import sys
from sortcheck.engines.base import Budget
from sortcheck.engines.networks.sat import SatEngine
from sortcheck.load import read_netlist
from sortcheck.model import Sorts
verdict = SatEngine(profiles=False).check(read_netlist(sys.argv[1]), Sorts(), Budget.of(float(sys.argv[2])))
print(verdict.status.value)
"""


def measured(command: list[str]) -> tuple[float, float, str]:
    """Seconds, peak resident megabytes and standard output of ``command`` run to its end."""
    started = time.perf_counter()
    process = subprocess.Popen(command, stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, text=True)
    output = process.stdout.read()
    _, _, usage = os.wait4(process.pid, 0)
    process.returncode = 0
    return time.perf_counter() - started, usage.ru_maxrss / 1024, output


def verdict_of(report: str) -> str:
    try:
        return json.loads(report)["results"][0]["verdict"]
    except (ValueError, KeyError, IndexError):
        return "no report"


def fitted_exponent(points: list[tuple[int, float]]) -> float | None:
    """Least-squares slope of log(seconds) against log(n)."""
    if len(points) < 2:
        return None
    xs = [math.log(n) for n, _ in points]
    ys = [math.log(max(seconds, 1e-6)) for _, seconds in points]
    mean_x, mean_y = sum(xs) / len(xs), sum(ys) / len(ys)
    return (sum((x - mean_x) * (y - mean_y) for x, y in zip(xs, ys))
            / sum((x - mean_x) ** 2 for x in xs))


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--largest", type=int, default=SIZES[-1], help="largest channel count (a power of two)")
    parser.add_argument("--families", nargs="+", default=list(FAMILIES), choices=FAMILIES)
    parser.add_argument("--timeout", type=float, default=None,
                        help="seconds per check (default none: the plain `sortcheck check FILE.json`)")
    parser.add_argument("--baseline-largest", type=int, default=2048, help="largest size the baseline runs at")
    parser.add_argument("--baseline-timeout", type=float, default=300.0)
    arguments = parser.parse_args()
    sortcheck = [sys.executable, "-m", "sortcheck"]
    print(f"{os.cpu_count()} cores; sortcheck check FILE.json (auto), fresh process per check")
    print(f"{'family':<16}{'n':>7}{'comparators':>13}{'JSON MB':>9}{'verdict':>9}{'seconds':>10}{'peak MB':>9}"
          f"{'baseline s':>12}{'ratio':>8}")
    with tempfile.TemporaryDirectory() as directory:
        for family in arguments.families:
            points = []
            for n in (size for size in SIZES if size <= arguments.largest):
                path = Path(directory) / f"{family}-{n}.json"
                subprocess.run([*sortcheck, "build", family, str(n), "--output", str(path)], check=True,
                               stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
                written = json.loads(path.read_text())
                comparators = sum(map(len, written["layers"])) if "layers" in written else len(written["comparators"])
                del written
                limit = [] if arguments.timeout is None else ["--timeout", str(arguments.timeout)]
                seconds, peak, report = measured([*sortcheck, "check", str(path), "--format", "json", *limit])
                verdict = verdict_of(report)
                if verdict == "proved":
                    points.append((n, seconds))
                baseline, ratio = "", ""
                if n <= arguments.baseline_largest:
                    base_seconds, _, base_out = measured([sys.executable, "-c", BASELINE, str(path),
                                                          str(arguments.baseline_timeout)])
                    baseline = f"{base_seconds:.1f}" + ("" if base_out.strip() == "proved" else f" ({base_out.strip()})")
                    ratio = ("" if base_out.strip() == "proved" else ">") + f"{base_seconds / seconds:.1f}x"
                print(f"{family:<16}{n:>7}{comparators:>13,}{path.stat().st_size / 1e6:>9.1f}{verdict:>9}"
                      f"{seconds:>10.1f}{peak:>9.0f}{baseline:>12}{ratio:>8}", flush=True)
                path.unlink()
            for fitted in (points, points[-3:]):
                exponent = fitted_exponent(fitted)
                if exponent is not None:
                    print(f"{family}: seconds ~ n^{exponent:.2f} (least squares on log-log over "
                          f"{fitted[0][0]}..{fitted[-1][0]} channels)", flush=True)


if __name__ == "__main__":
    main()
