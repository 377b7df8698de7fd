"""The ``enumerate`` engine: comparator networks proved by the 0-1 principle.

A comparator network sorts (merges, selects, takes the median) every input of
any ordered values exactly when it does so for every 0-1 input, because
comparators commute with every monotone map of the values (Knuth, TAOCP
vol. 3, 5.3.4).  This engine covers the 0-1 inputs in two steps:

1. *reduction* (:mod:`sortcheck.engines.networks.reduction`, networks of at most 64
   channels): the distinct 0-1 vectors a prefix of the network can produce,
   as a product of small sets, each vector with the number of inputs behind it
   and the smallest of them;
2. *bit-sliced evaluation* of the rest of the network on that product
   (:mod:`sortcheck.engines.networks.product`), with numpy or, when numba is installed
   and the work is large, with a compiled per-network kernel
   (:mod:`sortcheck.engines.networks.compiled`).

Networks of more than 64 channels (merges only, in practice) are evaluated on
all their inputs as before (:mod:`sortcheck.engines.networks.bitslice`).

The counterexample is deterministic: with the reduction, the first failing
vector in the evaluation order of :mod:`sortcheck.engines.networks.product`, reported
as the smallest input (read as a binary number, channel ``c`` being bit
``c``) that the prefix maps onto it; without it, the failing input of
smallest index.  Either way it is a real input of the whole network,
re-checked with :func:`sortcheck.model.semantics.violation`.
"""

from __future__ import annotations

import hashlib
import time
from dataclasses import dataclass, replace

import numpy as np

from sortcheck.engines.networks import compiled
from sortcheck.engines.base import (Budget, CertificateMaterial, Counterexample, Enumerated, Options, Status,
                                    StopReason, Verdict, refused_verdict)
from sortcheck.engines.networks.certificates import canonical, network_digest
from sortcheck.engines.networks.bitslice import AllVectors, MergeInputs, apply_network, failure_mask, first_failing_lane
from sortcheck.engines.networks.enumeration_pieces import check_block, estimated_seconds, fits_blocks, piece_list, reduced_layout
from sortcheck.engines.networks.product import Layout, NumpyEvaluator, evaluate, lanes_of
from sortcheck.engines.networks.reduction import MAX_CHANNELS, ReducedSpace, first_layer_bound, reduce_prefix, singleton_groups
from sortcheck.model import ComparatorNetwork, Merges, Netlist, PartialSort, Property
from sortcheck.model.semantics import violation

#: Default limit on the number of 0-1 vectors to evaluate (after the first
#: layer's reduction): 2**34 takes a few seconds compiled, a minute with numpy.
MAX_VECTORS = 1 << 34

#: Word operations per second of the numpy evaluator, and the least numpy time
#: (seconds) worth compiling a kernel for (measured on the benchmark machine).
NUMPY_WORD_OPERATIONS = 1.5e9
COMPILE_WORTH = 1.0

BACKENDS = ("auto", "numba", "numpy", "plain")


def vectors_needed(channels: int, prop: Property) -> int:
    """How many 0-1 inputs a complete check of ``prop`` on ``channels`` channels covers.

    >>> vectors_needed(8, Merges(split=4)), vectors_needed(8, Property())
    (25, 256)
    """
    if isinstance(prop, Merges):
        return (prop.split + 1) * (channels - prop.split + 1)
    return 1 << channels


def vectors_bound(network: ComparatorNetwork, prop: Property, reduction: bool = True) -> int:
    """A cheap upper bound on the vectors the engine evaluates for ``prop``.

    >>> from sortcheck.model import Sorts
    >>> vectors_bound(ComparatorNetwork(4, ((0, 1), (2, 3), (0, 2))), Sorts())
    9
    """
    needed = vectors_needed(network.channels, prop)
    if not reduction or isinstance(prop, Merges) or network.channels > MAX_CHANNELS:
        return needed
    return min(needed, first_layer_bound(network.channels, network.comparators))


def _scope_of_inputs(network: ComparatorNetwork, prop: Property) -> str:
    n = network.channels
    if isinstance(prop, Merges):
        m = prop.split
        return f"every input on {n} channels whose positions 0..{m - 1} and {m}..{n - 1} are each ascending"
    return f"every input on {n} channels"


def _limit_text(count: int) -> str:
    exponent = count.bit_length() - 1
    return f"2^{exponent}" if count == 1 << exponent else f"{count:,}"


@dataclass
class _Run:
    """What one evaluation found, whatever the path."""

    finished: bool
    evaluated: int
    reduced: int  # vectors to evaluate after the reduction
    blocks: int
    failing: tuple[int, ...] | None = None
    failing_inputs: int | None = None
    kernel: str = "plain"
    prefix: int = 0
    suffix: int = 0
    largest_set: int = 0
    digest: str | None = None  # of the evaluated vectors, with Options(certify=True)


class EnumerateEngine:
    """The 0-1 principle by reduction and bit-parallel evaluation, with early exit.

    Parameters
    ----------
    max_vectors : int
        Checks that need more 0-1 vectors than this, after the first layer's
        reduction (:func:`vectors_bound`), are refused (``unknown`` with
        :attr:`StopReason.SIZE_LIMIT`) instead of running for hours.
    backend : str
        ``"auto"`` (numba for large work when installed, else numpy),
        ``"numba"`` (numba whenever installed), ``"numpy"``, or ``"plain"``
        (no reduction, the original numpy loop over all inputs).
    reduction : bool
        Whether to take a prefix of the network into sets of distinct vectors.

    Examples
    --------
    >>> from sortcheck.model import Sorts
    >>> net = ComparatorNetwork(3, ((0, 1), (1, 2)))
    >>> verdict = EnumerateEngine().check(net, Sorts(), Budget())
    >>> verdict.status.value, verdict.counterexample.input, verdict.counterexample.output
    ('refuted', (1, 1, 0), (1, 0, 1))
    >>> EnumerateEngine().check(net, Sorts(), Budget(), Options(count=True)).figures["failing_inputs"]
    1
    """

    name = "enumerate"
    cooperative = True

    def __init__(self, max_vectors: int = MAX_VECTORS, backend: str = "auto", reduction: bool = True):
        if backend not in BACKENDS:
            raise ValueError(f"unknown backend {backend!r} (one of {', '.join(BACKENDS)})")
        self.max_vectors = max_vectors
        self.backend = backend
        self.reduction = reduction

    def refusal(self, netlist: Netlist, prop: Property, options: Options = Options()
                ) -> tuple[StopReason, str] | None:
        if not isinstance(netlist, ComparatorNetwork):
            return StopReason.UNSUPPORTED, "enumerate checks comparator networks only"
        if isinstance(prop, PartialSort):
            return StopReason.UNSUPPORTED, "partial-sort applies to gate circuits only"
        needed = vectors_needed(netlist.channels, prop)
        reduces = self.reduction and self.backend != "plain"
        bound = vectors_bound(netlist, prop, reduces)
        after = "" if bound == needed else f" (up to {bound:,} vectors after the first layer's reduction)"
        if bound > self.max_vectors and reduces and not isinstance(prop, Merges) and netlist.channels <= MAX_CHANNELS:
            # The first layer's bound is loose: the reduction itself (its sets are capped in size, so this is
            # quick) says how many vectors are really left.
            bound = reduced_layout(netlist, prop, True)[1].vectors
            after = f" ({bound:,} vectors left after the reduction)"
        if bound > self.max_vectors:
            return StopReason.SIZE_LIMIT, (
                f"{netlist.channels} channels need {_limit_text(needed)} 0-1 inputs{after}, beyond enumerate's "
                f"limit of {_limit_text(self.max_vectors)}; networks this large need the SAT engine (--engine sat)")
        return None

    def check(self, netlist: Netlist, prop: Property, budget: Budget, options: Options = Options()) -> Verdict:
        started = time.perf_counter()
        refused = refused_verdict(self, netlist, prop, options, started)
        if refused is not None:
            return refused
        network: ComparatorNetwork = netlist  # type: ignore[assignment]
        if self.backend != "plain" and network.channels <= MAX_CHANNELS:
            run = self._reduced(network, prop, budget, options.count, options.certify)
        else:
            run = _plain(network, prop, budget, options.count)
            if options.certify:
                run.digest = _digest(network, prop, {"inputs": "every 0-1 input in index order"}, [])
        verdict = self._verdict(network, prop, run, options.count, started)
        if options.certify and verdict.status == Status.PROVED:
            claim = {"target": {"property": prop.to_json()},
                     "inputs": {"merge": prop.split} if isinstance(prop, Merges) else "all",
                     "evaluated": run.reduced, "prefix_comparators": run.prefix}
            record = Enumerated(f"{prop.short()} on every 0-1 input the property speaks about", run.reduced,
                                run.digest, claim)
            verdict = replace(verdict, certificate=CertificateMaterial("enumeration", enumerated=(record,)))
        return verdict

    def pieces(self, netlist: Netlist, prop: Property, options: Options = Options()) -> list[dict] | None:
        """Blocks of the evaluation order of the reduced vectors (:mod:`sortcheck.engines.networks.enumeration_pieces`).

        None when the check is refused, does not go through the reduction,
        gathers certificate material, or is too small to be worth splitting.

        >>> from sortcheck.model import Sorts
        >>> EnumerateEngine().pieces(ComparatorNetwork(3, ((0, 1), (1, 2))), Sorts()) is None
        True
        """
        if (self.refusal(netlist, prop, options) is not None or options.certify
                or not fits_blocks(netlist, prop, self.backend)):
            return None
        space, layout = reduced_layout(netlist, prop, self.reduction)
        kernel = self._compiled_kernel(layout, len(space.suffix))
        return piece_list(layout, estimated_seconds(layout, len(space.suffix), kernel, options.count))

    def check_piece(self, netlist: Netlist, prop: Property, piece: dict, budget: Budget,
                    options: Options = Options()) -> Verdict:
        """The check restricted to one piece of :meth:`pieces`."""
        started = time.perf_counter()
        refused = refused_verdict(self, netlist, prop, options, started)
        if refused is not None:
            return refused
        return check_block(netlist, prop, piece, budget, options, self.reduction, self._compiled_kernel, self.name)

    def _compiled_kernel(self, layout: Layout, suffix: int) -> bool:
        return use_compiled(self.backend, layout, suffix, Budget())

    def whole_verdict(self, netlist: Netlist, prop: Property, verdict: Verdict, options: Options = Options()
                      ) -> Verdict:
        """The combined verdict of the pieces, in the words and figures of a single check."""
        figures = verdict.figures
        if "vectors_after_reduction" not in figures or verdict.stop == StopReason.UNSUPPORTED:
            return verdict  # no piece got as far as its layout, or a worker's layout differed
        count = options.count and "failing_inputs" in figures and "pieces_unfinished" not in figures
        run = _Run(verdict.status != Status.UNKNOWN, figures.get("vectors_evaluated", 0),
                   figures["vectors_after_reduction"], figures.get("blocks", 0),
                   verdict.counterexample.input if verdict.counterexample else None,
                   figures.get("failing_inputs") if count else None, figures.get("kernel", "numpy"),
                   figures.get("prefix_comparators", 0), figures.get("suffix_comparators", 0),
                   figures.get("largest_set", 0))
        whole = self._verdict(netlist, prop, run, count, time.perf_counter() - verdict.seconds)
        extra = {key: figures[key] for key in ("pieces", "ran_on", "piece_seconds", "pieces_unfinished")
                 if key in figures}
        scope = f"{whole.scope}; checked in {figures.get('pieces')} pieces on {figures.get('ran_on')}"
        if options.count and not count:
            scope += "; the count of failing inputs is incomplete, since not every piece finished"
        return Verdict(whole.status, whole.engine, prop, whole.stop, scope, verdict.seconds, whole.counterexample,
                       {**whole.figures, "seconds": verdict.seconds, **extra})

    def _reduced(self, network: ComparatorNetwork, prop: Property, budget: Budget, count: bool,
                 certify: bool = False) -> _Run:
        space, layout = reduced_layout(network, prop, self.reduction, budget)
        evaluator = self._evaluator(network, space, layout, prop, budget)
        run = _Run(False, 0, layout.vectors, 0, kernel=evaluator.name, prefix=len(space.prefix_swaps),
                   suffix=len(space.suffix), largest_set=space.largest_set)
        if certify:
            run.digest = _digest(network, prop, {"suffix": list(space.suffix)}, space.groups)
        first = evaluate(layout, evaluator, "count" if count else "first", budget)
        run.blocks, run.evaluated, run.finished = first.calls, first.evaluated, first.finished
        if count and first.finished:
            run.failing_inputs = first.failing_inputs
            if first.failing_inputs:  # a second, early-exit pass for the example
                first = evaluate(layout, evaluator, "first", Budget())
        if first.failing_origin is not None:
            run.failing = tuple((first.failing_origin >> c) & 1 for c in range(network.channels))
        return run

    def _evaluator(self, network: ComparatorNetwork, space: ReducedSpace, layout: Layout, prop: Property | None,
                   budget: Budget):
        suffix = [network.comparators[i] for i in space.suffix]
        if use_compiled(self.backend, layout, len(suffix), budget):
            return compiled.CompiledEvaluator(layout, suffix, prop)
        return NumpyEvaluator(layout, suffix, prop)

    def _verdict(self, network: ComparatorNetwork, prop: Property, run: _Run, count: bool,
                 started: float) -> Verdict:
        total = vectors_needed(network.channels, prop)
        figures = _figures(run, total, started)
        if not run.finished:
            scope = (f"{run.evaluated:,} of {run.reduced:,} 0-1 vectors standing for the {total:,} inputs were "
                     f"checked without a failure before the time budget ran out; nothing is proved")
            return Verdict(Status.UNKNOWN, self.name, prop, StopReason.TIMEOUT, scope, figures["seconds"], None,
                           figures)
        if run.failing is not None:
            return self._refuted(network, prop, run.failing, figures, count)
        covered = f"all {total:,} such 0-1 inputs were covered (0-1 principle)"
        if run.kernel != "plain":
            covered += (f", by {run.reduced:,} distinct 0-1 vectors left after a prefix of {run.prefix} "
                        f"comparators")
        scope = f"{_scope_of_inputs(network, prop)}, of any values: {covered}"
        if count:
            scope += "; no input fails"
        return Verdict(Status.PROVED, self.name, prop, StopReason.COVERED, scope, figures["seconds"], None, figures)

    def _refuted(self, network: ComparatorNetwork, prop: Property, failing: tuple[int, ...], figures: dict,
                 count: bool) -> Verdict:
        output = tuple(network.apply(list(failing)))
        reason = violation(prop, failing, output)
        if reason is None:  # the bit-sliced condition and the reference semantics disagree
            raise AssertionError(f"internal error: input {failing} was flagged but meets {prop.describe()}")
        scope = ("this 0-1 input breaks the property, and so does every input of any values with the same "
                 "order pattern")
        if count:
            scope += f"; {figures['failing_inputs']:,} of the {figures['vectors_total']:,} 0-1 inputs fail"
        return Verdict(Status.REFUTED, self.name, prop, StopReason.COUNTEREXAMPLE, scope, figures["seconds"],
                       Counterexample(failing, output, "0-1", reason), figures)


def _digest(network: ComparatorNetwork, prop: Property, description: dict, groups) -> str:
    """SHA-256 over the network, the property and the vectors evaluated: each group's channels and its
    distinct vectors in ascending order (their product is the list evaluated, in a fixed order)."""
    digest = hashlib.sha256(canonical({"network": network_digest(network), "property": prop.to_json(),
                                       **description}))
    for group in groups:
        digest.update(canonical(list(group.channels)))
        digest.update(np.sort(group.vectors).astype("<u8").tobytes())
    return digest.hexdigest()


def use_compiled(backend: str, layout: Layout, suffix: int, budget: Budget) -> bool:
    """Whether to evaluate with a compiled kernel (see :class:`EnumerateEngine`'s ``backend``)."""
    if backend == "numpy" or (backend == "numba" and not compiled.available()):
        return False
    if backend == "auto":
        numpy_seconds = layout.vectors * max(1, suffix) / 64 / NUMPY_WORD_OPERATIONS
        remaining = budget.remaining()
        compile_seconds = 1.0 + 0.01 * suffix
        if numpy_seconds < COMPILE_WORTH or (remaining is not None and remaining < 2 * compile_seconds):
            return False
        return compiled.available()
    return True


def _figures(run: _Run, total: int, started: float) -> dict:
    seconds = time.perf_counter() - started
    figures = {"vectors_total": total, "vectors_evaluated": run.evaluated, "blocks": run.blocks, "seconds": seconds,
               "vectors_per_second": run.evaluated / seconds if seconds > 0 else None, "kernel": run.kernel}
    if run.kernel != "plain":
        figures.update({"vectors_after_reduction": run.reduced, "prefix_comparators": run.prefix,
                        "suffix_comparators": run.suffix, "largest_set": run.largest_set})
    if run.failing_inputs is not None:
        figures["failing_inputs"] = run.failing_inputs
    return figures


def _plain(network: ComparatorNetwork, prop: Property, budget: Budget, count: bool) -> _Run:
    """Every 0-1 input in index order (merges: every merge input), numpy, no reduction."""
    source = MergeInputs(network.channels, prop.split) if isinstance(prop, Merges) else AllVectors(network.channels)
    rows = [np.empty(source.words, dtype=np.uint64) for _ in range(network.channels)]
    scratch = np.empty(source.words, dtype=np.uint64)
    run = _Run(False, 0, source.total, 0, failing_inputs=0 if count else None)
    for number in range(source.blocks):
        if budget.expired():
            return run
        budget.report(run.evaluated, source.total, "enumerate")
        block = source.fill(number, rows)
        scratch = apply_network(rows, network.comparators, scratch)
        mask = failure_mask(prop, rows)
        run.blocks = number + 1
        position = first_failing_lane(mask, block.vectors)
        if count:
            run.failing_inputs += int(lanes_of(mask)[:block.vectors].sum())
            if run.failing is None and position is not None:
                run.failing = source.vector(block.start + position)
        elif position is not None:
            run.evaluated += position + 1
            run.failing, run.finished = source.vector(block.start + position), True
            return run
        run.evaluated += block.vectors
    run.finished = True
    return run


def redundant_comparators_by_enumeration(network: ComparatorNetwork, budget: Budget = Budget(),
                                         backend: str = "auto") -> list[int] | None:
    """Indices of the comparators that never exchange their values, proved exhaustively.

    A comparator ``(a, b)`` exchanges values on an input exactly when channel
    ``a`` holds a larger value than channel ``b`` just before it; by the 0-1
    principle (threshold at the larger value) that happens on some input of
    any values exactly when it happens on some 0-1 input.  Comparators taken
    into the reduction's prefix are decided on their sets; the others by
    OR-accumulating, over every remaining vector, the lanes where the min side
    holds 1 and the max side 0.  Removing all the comparators returned leaves
    a network that computes the same function.

    Returns None when the budget runs out, or for more than 64 channels
    (beyond exhaustive evaluation).

    Examples
    --------
    >>> redundant_comparators_by_enumeration(ComparatorNetwork(3, ((0, 1), (1, 2), (0, 1), (0, 2))))
    [3]
    """
    if network.channels > MAX_CHANNELS:
        return None
    space = reduce_prefix(network.channels, network.comparators, singleton_groups(network.channels), budget)
    layout = Layout(space)
    suffix = [network.comparators[i] for i in space.suffix]
    if use_compiled(backend, layout, len(suffix), budget):
        evaluator = compiled.CompiledEvaluator(layout, suffix, None)
    else:
        evaluator = NumpyEvaluator(layout, suffix, None)
    outcome = evaluate(layout, evaluator, "swaps", budget)
    if not outcome.finished:
        return None
    swaps = dict(space.prefix_swaps)
    swaps.update(zip(space.suffix, outcome.swapped.tolist()))
    return [index for index in range(network.size) if not swaps[index]]
