"""The ``enumerate`` engine: comparator networks proved by the 0-1 principle.

A comparator network sorts (merges, selects, takes the median) every input of
any ordered values exactly when it does so for every 0-1 input, because
comparators commute with every monotone map of the values (Knuth, TAOCP
vol. 3, 5.3.4).  This engine evaluates the 0-1 inputs in bit-sliced blocks
(:mod:`sortcheck.engines.bitslice`) and stops at the first failing one.
"""

from __future__ import annotations

import time

import numpy as np

from sortcheck.engines.base import Budget, Counterexample, Options, Status, StopReason, Verdict
from sortcheck.engines.bitslice import AllVectors, MergeInputs, apply_network, failure_mask, first_failing_lane
from sortcheck.model import ComparatorNetwork, Merges, Netlist, PartialSort, Property
from sortcheck.model.semantics import violation

#: Default limit on the number of 0-1 inputs (2**34: about a minute for a
#: 34-channel network of ~250 comparators on one core).
MAX_VECTORS = 1 << 34


def vectors_needed(channels: int, prop: Property) -> int:
    """How many 0-1 inputs a complete check of ``prop`` on ``channels`` channels evaluates.

    >>> vectors_needed(8, Merges(split=4)), vectors_needed(8, Property())
    (25, 256)
    """
    if isinstance(prop, Merges):
        return (prop.split + 1) * (channels - prop.split + 1)
    return 1 << channels


def _scope_of_inputs(network: ComparatorNetwork, prop: Property) -> str:
    n = network.channels
    if isinstance(prop, Merges):
        m = prop.split
        return f"every input on {n} channels whose positions 0..{m - 1} and {m}..{n - 1} are each ascending"
    return f"every input on {n} channels"


def _limit_text(count: int) -> str:
    exponent = count.bit_length() - 1
    return f"2^{exponent}" if count == 1 << exponent else f"{count:,}"


class EnumerateEngine:
    """Bit-parallel enumeration of 0-1 inputs (numpy), with early exit.

    Parameters
    ----------
    max_vectors : int
        Checks that need more 0-1 inputs than this are refused (``unknown``
        with :attr:`StopReason.SIZE_LIMIT`) instead of running for hours.

    Examples
    --------
    >>> from sortcheck.model import Sorts
    >>> net = ComparatorNetwork(3, ((0, 1), (1, 2)))
    >>> verdict = EnumerateEngine().check(net, Sorts(), Budget())
    >>> verdict.status.value, verdict.counterexample.input, verdict.counterexample.output
    ('refuted', (1, 1, 0), (1, 0, 1))
    """

    name = "enumerate"
    cooperative = True

    def __init__(self, max_vectors: int = MAX_VECTORS):
        self.max_vectors = max_vectors

    def refusal(self, netlist: Netlist, prop: Property, options: Options = Options()
                ) -> tuple[StopReason, str] | None:
        if not isinstance(netlist, ComparatorNetwork):
            return StopReason.UNSUPPORTED, "enumerate checks comparator networks only"
        if isinstance(prop, PartialSort):
            return StopReason.UNSUPPORTED, "partial-sort applies to gate circuits only"
        needed = vectors_needed(netlist.channels, prop)
        if needed > self.max_vectors:
            return StopReason.SIZE_LIMIT, (
                f"{netlist.channels} channels need {_limit_text(needed)} 0-1 inputs, beyond enumerate's limit of "
                f"{_limit_text(self.max_vectors)}; networks this large need the SAT engine (--engine sat)")
        return None

    def check(self, netlist: Netlist, prop: Property, budget: Budget, options: Options = Options()) -> Verdict:
        started = time.perf_counter()
        refused = self.refusal(netlist, prop, options)
        if refused is not None:
            return Verdict(Status.UNKNOWN, self.name, prop, refused[0], f"nothing was checked: {refused[1]}",
                           time.perf_counter() - started)
        network: ComparatorNetwork = netlist  # type: ignore[assignment]
        source = MergeInputs(network.channels, prop.split) if isinstance(prop, Merges) else AllVectors(network.channels)
        rows = [np.empty(source.words, dtype=np.uint64) for _ in range(network.channels)]
        scratch = np.empty(source.words, dtype=np.uint64)
        evaluated = 0
        for number in range(source.blocks):
            if budget.expired():
                return self._unknown(network, prop, source.total, evaluated, number, started)
            block = source.fill(number, rows)
            scratch = apply_network(rows, network.comparators, scratch)
            position = first_failing_lane(failure_mask(prop, rows), block.vectors)
            if position is not None:
                evaluated += position + 1
                failing = source.vector(block.start + position)
                return self._refuted(network, prop, failing, source.total, evaluated, number + 1, started)
            evaluated += block.vectors
        figures = self._figures(source.total, evaluated, source.blocks, started)
        scope = (f"{_scope_of_inputs(network, prop)}, of any values: all {source.total:,} such 0-1 inputs were "
                 f"checked (0-1 principle)")
        return Verdict(Status.PROVED, self.name, prop, StopReason.COVERED, scope, figures["seconds"], None, figures)

    def _figures(self, total: int, evaluated: int, blocks: int, started: float) -> dict:
        seconds = time.perf_counter() - started
        return {"vectors_total": total, "vectors_evaluated": evaluated, "blocks": blocks, "seconds": seconds,
                "vectors_per_second": evaluated / seconds if seconds > 0 else None}

    def _refuted(self, network: ComparatorNetwork, prop: Property, failing: tuple[int, ...], total: int,
                 evaluated: int, blocks: int, started: float) -> Verdict:
        output = tuple(network.apply(list(failing)))
        reason = violation(prop, failing, output)
        if reason is None:  # the bit-sliced condition and the reference semantics disagree
            raise AssertionError(f"internal error: input {failing} was flagged but meets {prop.describe()}")
        figures = self._figures(total, evaluated, blocks, started)
        scope = ("this 0-1 input breaks the property, and so does every input of any values with the same "
                 "order pattern")
        return Verdict(Status.REFUTED, self.name, prop, StopReason.COUNTEREXAMPLE, scope, figures["seconds"],
                       Counterexample(failing, output, "0-1", reason), figures)

    def _unknown(self, network: ComparatorNetwork, prop: Property, total: int, evaluated: int, blocks: int,
                 started: float) -> Verdict:
        figures = self._figures(total, evaluated, blocks, started)
        scope = (f"{evaluated:,} of {total:,} 0-1 inputs were checked without a failure before the time budget "
                 f"ran out; nothing is proved")
        return Verdict(Status.UNKNOWN, self.name, prop, StopReason.TIMEOUT, scope, figures["seconds"], None, figures)
