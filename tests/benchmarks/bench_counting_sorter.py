"""Gate circuits that sort short words: the counting sorter against lowered sorting networks.

Prints gates, depth and 2-input costs (``cost_counts``) of the counting
sorter and of merge exchange lowered in every style, then runs the counting
sorter on every input of 8 words of 3 bits (2^24 inputs; too slow for the
unit tests), 64 inputs per machine word, against numpy's sort.  Exits 1 if
any output is wrong.

    python tests/benchmarks/bench_counting_sorter.py
"""

from __future__ import annotations

import sys
import time
from functools import reduce
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[2]))

from sortcheck.model.cost import cost_counts  # noqa: E402
from sortcheck.model.counting import counting_sorter  # noqa: E402
from sortcheck.model.families import merge_exchange  # noqa: E402
from sortcheck.model.lowering import STYLES, lower_network  # noqa: E402

ALL_ONES = np.uint64(0xFFFF_FFFF_FFFF_FFFF)
LOW_PATTERNS = [0xAAAAAAAAAAAAAAAA, 0xCCCCCCCCCCCCCCCC, 0xF0F0F0F0F0F0F0F0,
                0xFF00FF00FF00FF00, 0xFFFF0000FFFF0000, 0xFFFFFFFF00000000]
OPS = {
    "and": lambda xs: reduce(np.bitwise_and, xs), "or": lambda xs: reduce(np.bitwise_or, xs),
    "xor": lambda xs: reduce(np.bitwise_xor, xs), "not": lambda xs: ~xs[0],
    "nand": lambda xs: ~reduce(np.bitwise_and, xs), "nor": lambda xs: ~reduce(np.bitwise_or, xs),
    "xnor": lambda xs: ~reduce(np.bitwise_xor, xs), "mux": lambda xs: (xs[0] & xs[2]) | (~xs[0] & xs[1]),
}


def run_every_input(circuit, width: int) -> list[list[np.ndarray]]:
    """Output bit planes over all inputs: bit x of a plane belongs to input number x."""
    total = circuit.words * width
    index = np.arange(1 << max(total - 6, 0), dtype=np.uint64)
    signals = {0: np.zeros(len(index), np.uint64), 1: np.full(len(index), ALL_ONES)}
    for i, word in enumerate(circuit.inputs):
        for j in range(width):
            k = i * width + j
            signals[f"{word.name}[{j}]"] = (np.full(len(index), np.uint64(LOW_PATTERNS[k])) if k < 6 else
                                           np.where((index >> np.uint64(k - 6)) & np.uint64(1), ALL_ONES, np.uint64(0)))
    order = circuit.gate_order
    last_use = {signal: k for k, gate in enumerate(order) for signal in gate.inputs}
    kept = {bit for word in circuit.outputs for bit in word.bits}
    for k, gate in enumerate(order):
        signals[gate.out] = OPS[gate.op]([signals[s] for s in gate.inputs])
        for signal in set(gate.inputs):
            if isinstance(signal, str) and last_use[signal] == k and signal not in kept:
                del signals[signal]  # keeps memory to the live signals
    return [[signals[bit] for bit in word.bits] for word in circuit.outputs]


def check_every_input(words: int, width: int, signed: bool) -> bool:
    circuit = counting_sorter(words, width, signed=signed)
    planes = run_every_input(circuit, width)
    rows = 1 << (words * width)
    chunk = 1 << 20
    values = 1 << width
    for start in range(0, rows, chunk):
        index = np.arange(start, min(start + chunk, rows), dtype=np.int64)
        inputs = np.stack([(index >> (width * i)) & (values - 1) for i in range(words)], axis=1)
        ranks = np.where(inputs >= values // 2, inputs - values, inputs) if signed else inputs
        expected = np.take_along_axis(inputs, np.argsort(ranks, axis=1, kind="stable"), axis=1)
        for p in range(words):
            for j in range(width):
                packed = np.packbits(((expected[:, p] >> j) & 1).astype(bool), bitorder="little").view(np.uint64)
                if not np.array_equal(packed, planes[p][j][start // 64:(start + len(index)) // 64]):
                    return False
    return True


def main() -> int:
    print(f"{'circuit':34} {'gates':>6} {'depth':>5}  2-input cost (and, or, xor, not)")
    for words, width in ((16, 2), (8, 3), (32, 2), (16, 3)):
        circuits = [counting_sorter(words, width)] + [lower_network(merge_exchange(words), width, style=s)
                                                      for s in STYLES]
        for circuit in circuits:
            cost = cost_counts(circuit)
            print(f"{circuit.name:34} {len(circuit.gates):6} {circuit.depth:5}  "
                  f"{cost['and']}, {cost['or']}, {cost['xor']}, {cost['not']}")
    failed = False
    for signed in (False, True):
        began = time.perf_counter()
        ok = check_every_input(8, 3, signed)
        failed |= not ok
        print(f"counting-8-w3{'-signed' if signed else ''}: all 2^24 inputs "
              f"{'sorted' if ok else 'NOT SORTED'} in {time.perf_counter() - began:.1f} s")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
