"""Optional compiled kernels: per-network straight-line code, compiled with numba.

numba is an optional accelerator: without it :func:`available` is False and
the engine uses :class:`~sortcheck.engines.networks.product.NumpyEvaluator`.  With it,
every (network suffix, channel layout, property, mode) gets a kernel whose
source is generated here: one loop over combinations, one loop over the words
of the tile, and in that loop every comparator as two machine instructions on
local variables (``t = x & y; u = x | y``), the failure condition at the end.
Tile rows that repeat one word (lane patterns) are literal constants, so the
comparators among them fold away at compile time; channels of the outer groups
are computed once per combination.  The word loop has no exit, so LLVM
vectorises it (several words per instruction); the combination loop exits at
the first combination with a failing lane.  Kernels are cached by their key
for the life of the process.
"""

from __future__ import annotations

import functools
from typing import Sequence

import numpy as np

from sortcheck.engines.networks.bitslice import LANES
from sortcheck.engines.networks.product import Layout, Tile
from sortcheck.model import Median, Merges, Property, Selects, Sorts

MODES = ("first", "count", "swaps")
_CACHE_LIMIT = 32
_kernels: dict[tuple, object] = {}


@functools.cache
def numba_module():
    """The numba module, or None when it is not installed."""
    try:
        import numba
    except ImportError:
        return None
    return numba


def available() -> bool:
    """Whether compiled kernels can be used (numba is importable)."""
    return numba_module() is not None


def is_cached(key: tuple) -> bool:
    return key in _kernels


def _failure_lines(prop: Property, y: Sequence[str]) -> list[str]:
    """Source lines that leave the failure word of the outputs ``y`` in ``f``."""
    n = len(y)

    def descents(upto: int, descending: bool = False) -> list[str]:
        terms = [f"(~{y[i]} & {y[i + 1]})" if descending else f"({y[i]} & ~{y[i + 1]})" for i in range(upto - 1)]
        return terms or ["Z"]

    if isinstance(prop, Sorts):
        return ["f = " + " | ".join(descents(n, prop.order == "descending"))]
    if isinstance(prop, Merges):
        return ["f = " + " | ".join(descents(n))]
    if isinstance(prop, Selects):
        t = prop.count
        lines = ["f = Z"] if t == n else [f"f = ({' | '.join(y[:t])}) & ~({' & '.join(y[t:])})"]
        if prop.sorted:
            lines.append("f = f | " + " | ".join(descents(t)))
        return lines
    if isinstance(prop, Median):
        return _median_lines(y)
    raise TypeError(f"no 0-1 condition for {prop.name}")


def _median_lines(y: Sequence[str]) -> list[str]:
    """Output ``m`` against "at least m+1 ones" (a bit-sliced ripple counter, as ``bitslice.at_least``)."""
    n, threshold = len(y), (len(y) - 1) // 2 + 1
    levels = max(1, n.bit_length())
    lines = [f"c{level} = Z" for level in range(levels)]
    for row in y:
        lines.append(f"k = {row}")
        for level in range(levels):
            lines += [f"s = c{level} ^ k", f"k = c{level} & k", f"c{level} = s"]
    lines += ["e = ALL", "g = Z"]
    for level in reversed(range(levels)):
        if (threshold >> level) & 1:
            lines.append(f"e = e & c{level}")
        else:
            lines += [f"g = g | (e & c{level})", f"e = e & ~c{level}"]
    lines.append(f"f = {y[(n - 1) // 2]} ^ (g | e)")
    return lines


def kernel_source(channels: int, comparators: Sequence[tuple[int, int]], constants: dict[int, int],
                  outer: Sequence[int], prop: Property | None, mode: str) -> str:
    """The Python source of one kernel (compiled with numba, or run as it is in tests).

    >>> print(kernel_source(2, [(0, 1)], {0: 0xAAAAAAAAAAAAAAAA}, [], None, "swaps"))  # doctest: +ELLIPSIS
    def kernel(rows, values, swapped):
    ...
                s0 |= x0 & ~x1
                t0 = x0 & x1
    ...
    """
    head = {"first": "def kernel(rows, values, fail):",
            "count": "def kernel(rows, values, counts, tile_counts, unit, last, fail):",
            "swaps": "def kernel(rows, values, swapped):"}[mode]
    lines = [head, "    words = rows.shape[1]", "    total = Z", "    for ci in range(values.shape[0]):",
             "        v = values[ci]"]
    outer_set = set(outer)
    lines += [f"        o{c} = Z - ((v >> S{c}) & ONE)" for c in outer]
    lines += ["        acc = Z"]
    if mode == "swaps":
        lines += [f"        s{k} = Z" for k in range(len(comparators))]
    lines.append("        for w in range(words):")
    body = []
    for c in range(channels):
        if c in outer_set:
            body.append(f"x{c} = o{c}")
        elif c in constants:
            body.append(f"x{c} = C{c}")
        else:
            body.append(f"x{c} = rows[{c}, w]")
    current = [f"x{c}" for c in range(channels)]
    for k, (a, b) in enumerate(comparators):
        if mode == "swaps":
            body.append(f"s{k} |= {current[a]} & ~{current[b]}")
        body += [f"t{k} = {current[a]} & {current[b]}", f"u{k} = {current[a]} | {current[b]}"]
        current[a], current[b] = f"t{k}", f"u{k}"
    if mode != "swaps":
        body += _failure_lines(prop, current)
        body += ["fail[w] = f", "acc |= f"]
    lines += ["            " + line for line in body]
    if mode == "first":
        lines += ["        if acc != Z:", "            return ci", "    return -1"]
    elif mode == "count":
        lines += ["        if acc != Z:",
                  "            fail[words - 1] &= last",
                  "            sub = Z",
                  "            for w in range(words):",
                  "                f = fail[w]",
                  "                if unit:",
                  "                    sub += popcount(f)",
                  "                elif f != Z:",
                  "                    for lane in range(64):",
                  "                        if (f >> np.uint64(lane)) & ONE:",
                  "                            sub += tile_counts[w * 64 + lane]",
                  "            total += sub * counts[ci]",
                  "    return total"]
    else:
        lines += [f"        swapped[{k}] |= s{k}" for k in range(len(comparators))]
        lines += ["    return total"]
    return "\n".join(lines)


def _namespace(constants: dict[int, int]) -> dict:
    names = {"np": np, "Z": np.uint64(0), "ONE": np.uint64(1), "ALL": np.uint64(0xFFFFFFFFFFFFFFFF)}
    names.update({f"S{c}": np.uint64(c) for c in range(64)})
    names.update({f"C{c}": np.uint64(word) for c, word in constants.items()})
    return names


def _popcount(x):
    x = x - ((x >> np.uint64(1)) & np.uint64(0x5555555555555555))
    x = (x & np.uint64(0x3333333333333333)) + ((x >> np.uint64(2)) & np.uint64(0x3333333333333333))
    x = (x + (x >> np.uint64(4))) & np.uint64(0x0F0F0F0F0F0F0F0F)
    return (x * np.uint64(0x0101010101010101)) >> np.uint64(56)


def interpreted_kernel(source: str, constants: dict[int, int]):
    """The kernel as a plain Python function (slow; for tests of the generated source without numba)."""
    names = _namespace(constants)
    names["popcount"] = _popcount
    exec(compile(source, "<sortcheck kernel>", "exec"), names)  # generated above from integers only
    kernel = names["kernel"]

    def quiet(*arguments):
        with np.errstate(over="ignore"):  # uint64 arithmetic wraps, as in the compiled kernel
            return kernel(*arguments)
    return quiet


def get_kernel(key: tuple, source: str, constants: dict[int, int]):
    """Compile (or fetch from the cache) the kernel with this key and source."""
    if key in _kernels:
        return _kernels[key]
    numba = numba_module()
    names = _namespace(constants)
    names["popcount"] = numba.njit(inline="always")(_popcount)
    exec(compile(source, "<sortcheck kernel>", "exec"), names)  # generated above from integers only
    kernel = numba.njit(nogil=True, boundscheck=False)(names["kernel"])
    if len(_kernels) >= _CACHE_LIMIT:
        _kernels.pop(next(iter(_kernels)))
    _kernels[key] = kernel
    return kernel


class CompiledEvaluator:
    """The interface of :class:`~sortcheck.engines.networks.product.NumpyEvaluator`, run by compiled kernels.

    Parameters
    ----------
    layout : Layout
    comparators : sequence of (int, int)
        The suffix to apply.
    prop : Property or None
        None for the ``swaps`` mode only.
    lanes_per_call : int
        About how many vectors one kernel call evaluates (between budget checks).
    interpreted : bool
        Run the generated source as plain Python instead of compiling it
        (tests of the generator on many networks, without numba).
    """

    name = "numba"

    def __init__(self, layout: Layout, comparators: Sequence[tuple[int, int]], prop: Property | None,
                 lanes_per_call: int = 1 << 25, interpreted: bool = False):
        self.interpreted = interpreted
        self.layout = layout
        self.comparators = list(comparators)
        self.prop = prop
        self.lanes_per_call = lanes_per_call
        self._compiled: dict[str, object] = {}

    def key(self, mode: str) -> tuple:
        prop_key = None if mode == "swaps" or self.prop is None else (type(self.prop).__name__, self.prop.short())
        return (mode, self.layout.channels, tuple(self.comparators), tuple(sorted(self.layout.constant_rows.items())),
                self.layout.outer_channels, prop_key)

    def kernel(self, mode: str):
        if mode not in self._compiled:
            constants = self.layout.constant_rows
            source = kernel_source(self.layout.channels, self.comparators, constants, self.layout.outer_channels,
                                   self.prop, mode)
            self._compiled[mode] = (interpreted_kernel(source, constants) if self.interpreted
                                    else get_kernel(self.key(mode), source, constants))
        return self._compiled[mode]

    def per_call(self, tile: Tile) -> int:
        return max(1, self.lanes_per_call // (tile.words * LANES))

    def first(self, tile: Tile, values: np.ndarray) -> tuple[int, int] | None:
        fail = np.empty(tile.words, dtype=np.uint64)
        found = self.kernel("first")(tile.rows, values, fail)
        if found < 0:
            return None
        word = int(np.flatnonzero(fail)[0])
        bits = int(fail[word])
        return int(found), word * LANES + (bits & -bits).bit_length() - 1

    def count(self, tile: Tile, values: np.ndarray, counts: np.ndarray) -> int:
        fail = np.empty(tile.words, dtype=np.uint64)
        spare = tile.words * LANES - tile.vectors
        last = np.uint64((1 << (LANES - spare)) - 1)
        unit = bool(self.layout.unit_counts)
        return int(self.kernel("count")(tile.rows, values, counts, tile.counts, unit, last, fail))

    def swaps(self, tile: Tile, values: np.ndarray, swapped: np.ndarray) -> None:
        words = np.zeros(len(self.comparators), dtype=np.uint64)
        self.kernel("swaps")(tile.rows, values, words)
        swapped |= words != 0

