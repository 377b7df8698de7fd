"""Pieces of an ``enumerate`` check: blocks of the evaluation order of the reduced vectors.

After the reduction (:mod:`sortcheck.engines.networks.reduction`) the vectors to
evaluate are laid out as tiles times combinations
(:class:`~sortcheck.engines.networks.product.Layout`) and evaluated tile by tile,
combination by combination, lane by lane.  A *unit* is one (tile,
combination) pair, numbered ``tile * combinations + combination``; a
combination fixes the vectors of the outer groups, so a run of units fixes
the leading (slowest-varying) digits of the reduced vector set.  A piece is a
run of consecutive units::

    {"kind": "block", "units": [first, stop], "of": units, "vectors": vectors}

(``of`` and ``vectors`` describe the whole layout, so a worker whose
reduction differs, say another version of sortcheck, refuses the piece
instead of covering something else).  The pieces partition the units, so
they partition the vectors evaluated: counts of failing inputs add up
exactly, and the first failing vector of the first piece that has one is the
first failing vector of the whole check -- the counterexample a single run
reports.

Checks whose evaluation is estimated below :data:`SPLIT_SECONDS` are not
split (process start-up and the repeated reduction would cost more).
"""

from __future__ import annotations

import time

from sortcheck.engines.networks import compiled
from sortcheck.engines.base import Budget, Counterexample, Options, Status, StopReason, Verdict
from sortcheck.engines.networks.product import Layout, NumpyEvaluator, Outcome
from sortcheck.engines.networks.reduction import MAX_CHANNELS, ReducedSpace, merge_groups, reduce_prefix, singleton_groups
from sortcheck.model import ComparatorNetwork, Merges, Property
from sortcheck.model.semantics import violation

#: Estimated evaluation seconds below which a check is run whole, in one process.  Measured with
#: ``tests/benchmarks/bench_distribute.py`` (processor time, so load does not hide it): merge exchange
#: without the reduction splits into 8 pieces on 2 processes at a projected 0.96x at an estimate of 0.24 s
#: (25 channels), 1.24x at 0.51 s (26) and 1.53x at 1.08 s (27); forking the workers and handing out
#: pieces costs about 0.05 s, and each piece about 2 ms.
SPLIT_SECONDS = 0.5
#: Estimated seconds of evaluation per piece, and the most pieces of one check.
PIECE_SECONDS = 0.25
MAX_PIECES = 256
#: Word operations (one comparator on 64 vectors) per second of the numpy evaluator over a whole check, in
#: wall time on this project's machine under its usual load (merge exchange 28 without the reduction, a
#: random 40-channel network counted: 3e8 to 3.5e8; about 1e9 in processor time); compiled kernels are
#: about 10x faster.
NUMPY_WORD_OPERATIONS = 3e8
COMPILED_SPEEDUP = 10.0
#: Work per word of 64 vectors besides the comparators, in word operations: setting up each channel's row
#: and the property's failure mask (about 2.5 per channel), and counting the inputs behind the failing lanes
#: with ``--count`` (about 64).  Measured on random 40- to 44-channel networks with suffixes of 14 to 137
#: comparators: 380-650 ns a word whole, 510-790 ns counted; a suffix of 14 comparators alone predicts 47 ns,
#: which left a 6.8 s count estimated at 0.27 s and run in one process.
ROW_OPERATIONS_PER_CHANNEL = 2.5
COUNT_OPERATIONS = 64

#: Figures that describe the whole layout, the same in every piece (not summed).
SHARED_FIGURES = ["kernel", "vectors_after_reduction", "prefix_comparators", "suffix_comparators", "largest_set"]

_LAYOUTS_KEPT = 2
_layouts: dict[tuple, tuple[ReducedSpace, Layout]] = {}


def reduced_layout(network: ComparatorNetwork, prop: Property, reduction: bool,
                   budget: Budget = Budget()) -> tuple[ReducedSpace, Layout]:
    """The reduced space and layout of a check, computed once per process for complete reductions.

    >>> from sortcheck.model import Sorts
    >>> space, layout = reduced_layout(ComparatorNetwork(4, ((0, 1), (2, 3), (0, 2))), Sorts(), True)
    >>> layout.vectors, space.suffix
    (8, ())
    """
    key = (network, prop, reduction)
    if key in _layouts:
        return _layouts[key]
    groups = (merge_groups(network.channels, prop.split) if isinstance(prop, Merges)
              else singleton_groups(network.channels))
    if reduction:
        space = reduce_prefix(network.channels, network.comparators, groups, budget)
    else:
        space = ReducedSpace(network.channels, tuple(groups), tuple(range(network.size)), {}, 2, True)
    layout = Layout(space)
    if space.complete:
        if len(_layouts) >= _LAYOUTS_KEPT:
            _layouts.pop(next(iter(_layouts)))
        _layouts[key] = (space, layout)
    return space, layout


def estimated_seconds(layout: Layout, suffix: int, compiled_kernel: bool, count: bool = False) -> float:
    """Seconds the whole evaluation of ``layout`` through ``suffix`` comparators should take on one core.

    >>> from sortcheck.engines.networks.reduction import singleton_groups
    >>> layout = Layout(ReducedSpace(28, tuple(singleton_groups(28)), (), {}, 2, True))
    >>> round(estimated_seconds(layout, 160, False), 1), round(estimated_seconds(layout, 160, False, count=True), 1)
    (3.2, 4.1)
    """
    per_word = max(1, suffix) + ROW_OPERATIONS_PER_CHANNEL * layout.channels + (COUNT_OPERATIONS if count else 0)
    seconds = layout.vectors * per_word / 64 / NUMPY_WORD_OPERATIONS
    return seconds / COMPILED_SPEEDUP if compiled_kernel else seconds


def split_units(units: int, count: int) -> list[tuple[int, int]]:
    """``count`` runs of consecutive units covering ``0..units-1``, as even as possible.

    >>> split_units(10, 3)
    [(0, 3), (3, 6), (6, 10)]
    """
    bounds = [units * k // count for k in range(count + 1)]
    return [(bounds[k], bounds[k + 1]) for k in range(count) if bounds[k] < bounds[k + 1]]


def piece_list(layout: Layout, seconds: float, split_seconds: float | None = None) -> list[dict] | None:
    """The pieces of a layout whose evaluation takes about ``seconds``; None when not worth splitting.

    >>> from sortcheck.engines.networks.reduction import singleton_groups
    >>> layout = Layout(ReducedSpace(20, tuple(singleton_groups(20)), (), {}, 2, True))
    >>> [piece["units"] for piece in piece_list(layout, 0.8, split_seconds=0.5)]
    [[0, 5], [5, 10], [10, 16]]
    """
    units = len(layout.tiles) * layout.combinations
    if seconds < (SPLIT_SECONDS if split_seconds is None else split_seconds) or units < 2:
        return None
    count = min(MAX_PIECES, units, max(2, round(seconds / PIECE_SECONDS)))
    return [{"kind": "block", "units": [first, stop], "of": units, "vectors": layout.vectors}
            for first, stop in split_units(units, count)]


def evaluate_units(layout: Layout, evaluator, mode: str, budget: Budget, first: int, stop: int) -> Outcome:
    """:func:`sortcheck.engines.networks.product.evaluate` restricted to units ``first..stop-1``, in the same order.

    ``mode`` is ``"first"`` or ``"count"``; ``evaluated`` counts the vectors of
    this range only.
    """
    outcome = Outcome(False, 0)
    combinations = layout.combinations
    for number in range(first // combinations, -(-stop // combinations)):
        tile = layout.tiles[number]
        low = max(first - number * combinations, 0)
        high = min(stop - number * combinations, combinations)
        step = evaluator.per_call(tile)
        for start in range(low, high, step):
            end = min(high, start + step)
            if budget.expired():
                return outcome
            values, origins, counts = layout.combination_values(start, end)
            outcome.calls += 1
            if mode == "first":
                found = evaluator.first(tile, values)
                if found is not None:
                    offset, lane = found
                    outcome.evaluated += offset * tile.vectors + lane + 1
                    outcome.failing_origin = int(tile.origins[lane]) | int(origins[offset])
                    outcome.finished = True
                    return outcome
            else:
                outcome.failing_inputs += evaluator.count(tile, values, counts)
            outcome.evaluated += (end - start) * tile.vectors
    outcome.finished = True
    return outcome


def make_evaluator(network: ComparatorNetwork, space: ReducedSpace, layout: Layout, prop: Property,
                   compiled_kernel: bool):
    suffix = [network.comparators[i] for i in space.suffix]
    if compiled_kernel:
        return compiled.CompiledEvaluator(layout, suffix, prop)
    return NumpyEvaluator(layout, suffix, prop)


def _piece_figures(space: ReducedSpace, layout: Layout, kernel: str, outcome: Outcome, seconds: float,
                   failing_inputs: int | None) -> dict:
    figures = {"vectors_evaluated": outcome.evaluated, "blocks": outcome.calls, "seconds": seconds, "kernel": kernel,
               "vectors_after_reduction": layout.vectors, "prefix_comparators": len(space.prefix_swaps),
               "suffix_comparators": len(space.suffix), "largest_set": space.largest_set,
               "shared": SHARED_FIGURES}
    if failing_inputs is not None:
        figures["failing_inputs"] = failing_inputs
    return figures


def check_block(network: ComparatorNetwork, prop: Property, piece: dict, budget: Budget, options: Options,
                reduction: bool, compiled_kernel, name: str = "enumerate") -> Verdict:
    """The check restricted to one block piece (see the module text).

    ``compiled_kernel(layout, suffix) -> bool`` says whether to evaluate with
    a compiled kernel (the same choice as for the whole check).
    """
    started = time.perf_counter()
    space, layout = reduced_layout(network, prop, reduction)
    units = len(layout.tiles) * layout.combinations
    first, stop = piece["units"]
    if piece.get("of") != units or piece.get("vectors") != layout.vectors or not 0 <= first < stop <= units:
        scope = (f"nothing was checked: this piece describes a layout of {piece.get('of')} units and "
                 f"{piece.get('vectors')} vectors, but this process reduces the check to {units} units and "
                 f"{layout.vectors} vectors (a different version of sortcheck?)")
        return Verdict(Status.UNKNOWN, name, prop, StopReason.UNSUPPORTED, scope, time.perf_counter() - started)
    kernel = compiled_kernel(layout, len(space.suffix))
    evaluator = make_evaluator(network, space, layout, prop, kernel)
    outcome = evaluate_units(layout, evaluator, "count" if options.count else "first", budget, first, stop)
    failing_inputs = outcome.failing_inputs if options.count and outcome.finished else None
    if options.count and outcome.finished and outcome.failing_inputs:
        outcome_first = evaluate_units(layout, evaluator, "first", Budget(), first, stop)
        outcome.failing_origin = outcome_first.failing_origin
    figures = _piece_figures(space, layout, evaluator.name, outcome, time.perf_counter() - started, failing_inputs)
    where = f"units {first}..{stop - 1} of {units} of the reduced 0-1 vectors of {network.channels} channels"
    if not outcome.finished:
        scope = (f"{outcome.evaluated:,} 0-1 vectors of {where} were checked without a failure before the budget "
                 f"ran out; nothing is proved")
        return Verdict(Status.UNKNOWN, name, prop, StopReason.TIMEOUT, scope, figures["seconds"], None, figures)
    if outcome.failing_origin is None:
        return Verdict(Status.PROVED, name, prop, StopReason.COVERED, f"every 0-1 vector of {where} meets "
                       f"{prop.describe()}", figures["seconds"], None, figures)
    failing = tuple((outcome.failing_origin >> c) & 1 for c in range(network.channels))
    output = tuple(network.apply(list(failing)))
    reason = violation(prop, failing, output)
    if reason is None:
        raise AssertionError(f"internal error: input {failing} was flagged but meets {prop.describe()}")
    scope = ("this 0-1 input breaks the property, and so does every input of any values with the same "
             "order pattern")
    return Verdict(Status.REFUTED, name, prop, StopReason.COUNTEREXAMPLE, scope, figures["seconds"],
                   Counterexample(failing, output, "0-1", reason), figures)


def fits_blocks(network, prop: Property, backend: str) -> bool:
    """Whether the check goes through the reduction and layout (the only path that splits)."""
    return isinstance(network, ComparatorNetwork) and backend != "plain" and network.channels <= MAX_CHANNELS
