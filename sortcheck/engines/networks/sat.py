"""The ``sat`` engine: comparator networks of thousands of channels, by the 0-1 principle.

A check runs in three steps, each sound on its own:

1. **Random simulation.**  Bit-parallel runs of random 0-1 inputs (weights
   spread over ``0..n`` and bunched near ``n/2``) refute most broken networks
   in milliseconds.
2. **Split along the network's structure** (:mod:`sortcheck.engines.networks.split`).
   Groups of channels that the network sorts on their own (Batcher's
   networks sort halves, quarters, residue classes, ...) are proved one at a
   time, each only on the 0-1 vectors its sorted sub-groups can produce.  A
   part whose vectors are few (at most :data:`ENUMERATION_LIMIT`) is
   checked on all of them, bit-parallel; a larger one by a SAT solver.
3. **The property**, on the whole network, from the proved parts: again by
   enumeration when the vectors are few, else by SAT.  A network with no such
   structure comes down to one SAT call on the whole CNF
   (:mod:`sortcheck.engines.networks.cnf`).

Before any question goes to the solver, independent sub-networks on disjoint
channel sets at its start are looked for (:mod:`sortcheck.engines.networks.sat_blocks`):
when each sorts on its own (proved by this same engine), only the vectors they
can hand on are enumerated after them.  That proves Parberry's pairwise network.

The solver is glucose 4 through python-sat: it can be interrupted at the
deadline (``cooperative``), and on our networks it was as fast as the CaDiCaL
and Kissat builds overall (``encodings/comparator-network-cnf.md`` has the
measurements).

>>> from sortcheck.model import ComparatorNetwork, Sorts
>>> from sortcheck.model.families import bitonic
>>> verdict = SatEngine().check(bitonic(64), Sorts(), Budget())
>>> verdict.status.value, verdict.figures["parts_proved"]
('proved', 62)
>>> verdict = SatEngine().check(ComparatorNetwork(3, ((0, 1), (1, 2))), Sorts(), Budget())
>>> verdict.status.value, verdict.counterexample.input
('refuted', (1, 1, 0))
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass, field

import numpy as np
from pysat.formula import IDPool

from sortcheck.engines.solving import Interrupted, solve_within
from sortcheck.engines.base import (Budget, CertificateMaterial, Counterexample, Enumerated, Options, Status,
                                    StopReason, UnsatCall, Verdict, refused_verdict)
from sortcheck.engines.networks.certificates import canonical, claim_digest, claim_label, network_digest, part_claim
from sortcheck.engines.networks.bitslice import _descents, apply_network, failure_mask, first_failing_lane
from sortcheck.engines.networks.cnf import dimacs, part_clauses
from sortcheck.engines.networks.order import relations_prove_sorted
from sortcheck.engines.networks.profiles import apply_layers, layers_of
from sortcheck.engines.networks.split import SortedParts, frontier, join_delayed_order, split_tree
from sortcheck.engines.networks.sat_blocks import BlockSteps, BlockTally
from sortcheck.engines.networks.sat_profiles import ProfileSteps, question_key
from sortcheck.model import ComparatorNetwork, Merges, Netlist, PartialSort, Property, Sorts
from sortcheck.model.semantics import violation

#: The SAT solver (python-sat name).
SOLVER = "glucose4"

#: The solver used when certificates are asked for and ``solver`` cannot log proofs: glucose 4 logs DRUP
#: proofs and can be interrupted (proof logging measured at about 1.3x its time on the plain CNFs of
#: bitonic and pairwise networks of 64 channels).
PROOF_SOLVER = "glucose4"
PROOF_SOLVERS = ("glucose3", "glucose4", "glucose42", "gluecard3", "gluecard4", "lingeling", "maplechrono",
                 "maplecm", "cadical103", "cadical153", "cadical195")

#: Parts with at most this many 0-1 vectors are checked by enumerating them.
ENUMERATION_LIMIT = 1 << 22

#: Random 0-1 inputs tried before anything else (in rounds of 4096).
SIMULATION_ROUNDS = 4

#: A part is checked only if the comparators of parts below it that did not
#: sort are at most this many times its own; otherwise it is dissolved unchecked.
DISSOLVED_RATIO = 3


class _Interrupted(Exception):
    """The deadline passed inside a check."""


class _ProvedByRelations(Exception):
    """Order relations showed that the checked network sorts (see :mod:`sortcheck.engines.networks.order`)."""


@dataclass
class _Tally:
    """Figures gathered over one check."""

    variables: int = 0
    clauses: int = 0
    sat_calls: int = 0
    solver_seconds: float = 0.0
    vectors: int = 0
    parts_proved: int = 0
    parts_dissolved: int = 0
    parts_enumerated: int = 0
    blocks: BlockTally = field(default_factory=BlockTally)
    notes: list[str] = field(default_factory=list)
    #: Certificate material, gathered only when asked for (``Options(certify=True)``).
    certify: bool = False
    network: str = ""
    calls: list = field(default_factory=list)
    enumerated: list = field(default_factory=list)
    #: Order relations are still to be tried on the checked network (a sort, not yet tried).
    relations_pending: bool = False
    #: Parts checked on profiles, the profiles evaluated and the 0-1 vectors they stand for.
    parts_profiled: int = 0
    profiles: int = 0
    profiled_vectors: int = 0
    #: Parts whose question (relabelled to channels 0..k-1) was decided before -> the order found.
    decided_parts: dict = field(default_factory=dict)
    parts_reused: int = 0



def _apply_within(rows: list, pairs: list, scratch: np.ndarray, budget: Budget, chunk: int = 20000) -> np.ndarray:
    """``apply_network`` in chunks of comparators, stopping at the deadline."""
    for start in range(0, len(pairs), chunk):
        if budget.expired():
            raise _Interrupted
        scratch = apply_network(rows, pairs[start:start + chunk], scratch)
    return scratch


#: Above this many channels, random simulation uses fewer lanes and random inputs of about the drawn weight
#: (each channel 1 with probability weight/n) instead of exactly it, which needs a sort of n keys per lane.
LARGE_SIMULATION = 4096


def _simulate(network: ComparatorNetwork, prop: Property, rounds: int, budget: Budget, seed: int = 2024
              ) -> tuple[int, ...] | None:
    """A failing 0-1 input among random ones, or None.  Merges get random pairs of ascending runs."""
    n = network.channels
    lanes = 4096 if n <= LARGE_SIMULATION else max(256, (1 << 24) // n // 64 * 64)
    rng = np.random.default_rng(seed)
    layers = layers_of(network.comparators, range(n))
    for _ in range(rounds):
        if isinstance(prop, Merges):
            source = SortedParts([(tuple(range(prop.split)), "ascending"), (tuple(range(prop.split, n)), "ascending")])
            ones = source.random_ones(rng, lanes)
            bits = np.array([source.vector_of_ones([int(g[i]) for g in ones], n) for i in range(lanes)],
                            dtype=bool).T
        else:
            spread = rng.integers(0, n + 1, size=lanes // 2)
            middle = np.clip(np.rint(rng.normal(n / 2, max(1.0, np.sqrt(n) / 2), size=lanes - lanes // 2)), 0, n)
            weights = np.concatenate([spread, middle.astype(np.int64)])
            if n <= LARGE_SIMULATION:
                # lane i: ones on the weights[i] channels of smallest random key (a uniformly random set of that
                # size), found with one sort: those keys are at most the weights[i]-th smallest
                keys = rng.random((lanes, n))
                cut = np.sort(keys, axis=1)[np.arange(lanes), np.clip(weights - 1, 0, n - 1)]
                bits = ((keys <= cut[:, None]) & (weights[:, None] > 0)).T
            else:
                bits = (rng.random((n, lanes), dtype=np.float32) < (weights / n).astype(np.float32)[None, :])
        packed = np.ascontiguousarray(np.packbits(bits, axis=1, bitorder="little")).view("<u8")
        try:
            apply_layers(packed, layers, np.bitwise_and, np.bitwise_or, budget.expired)
        except TimeoutError:
            raise _Interrupted from None
        lane = first_failing_lane(failure_mask(prop, list(packed)), lanes)
        if lane is not None:
            return tuple(int(b) for b in bits[:, lane])
    return None


def proved_frontier(network: ComparatorNetwork, budget: Budget) -> tuple[list[tuple[tuple[int, ...], str]],
                                                                         list[int]]:
    """The proved parts just below the root of ``network``'s split, and the comparators after them.

    Each part ``(channels, order)`` was proved, with everything below it, to sort its channels (so
    in that order) from any input; the comparators (indices, in a valid order) are the rest of the
    network.  Hence the network maps an input ``x`` to the comparators applied to ``x`` with each
    part's channels sorted.  Raises :class:`sortcheck.engines.solving.Interrupted` at the deadline.

    >>> from sortcheck.model.families import bitonic
    >>> groups, comparators = proved_frontier(bitonic(8), Budget())
    >>> groups, len(comparators)
    ([((0, 1, 2, 3), 'ascending'), ((4, 5, 6, 7), 'ascending')], 12)
    """
    engine, tally = SatEngine(simulation_rounds=0), _Tally()
    parts = split_tree(network, join_delayed_order(network))
    root = len(parts) - 1
    try:
        for index in range(network.channels, root):
            engine._settle(network, parts, index, budget, tally)
    except _Interrupted:
        raise Interrupted from None
    below, comparators = frontier(parts, root)
    return [(parts[i].channels, parts[i].order) for i in below], comparators


class SatEngine(BlockSteps, ProfileSteps):
    """Random simulation, then the network split along its structure, then SAT (glucose 4).

    Parameters
    ----------
    solver : str
        python-sat solver name.  Only solvers that python-sat can interrupt
        (glucose, minisat) keep ``cooperative`` true.
    enumeration_limit : int
        Parts with at most this many 0-1 vectors are enumerated instead of
        sent to the solver; 0 sends every part to the solver.
    split : bool
        Split along the network's structure (False: one SAT call on the
        whole network).
    blocks : bool
        Before the solver, look for independent sub-networks that sort on
        their own (:mod:`sortcheck.engines.networks.sat_blocks`).
    block_limit : int
        The most vectors one check after such sub-networks may enumerate.
    profiles : bool
        Check parts on two proved runs on profiles (:mod:`sortcheck.engines.networks.profiles`)
        when they have more than :data:`~sortcheck.engines.networks.sat_profiles.PROFILE_LIMIT` vectors
        (False: enumeration or SAT).
    """

    name = "sat"
    cooperative = True
    #: Building and loading a CNF of hundreds of thousands of clauses cannot be interrupted, so with a
    #: deadline the check runs in a process that can be ended (the solver itself is interrupted in time).
    isolate = True

    def __init__(self, solver: str = SOLVER, enumeration_limit: int = ENUMERATION_LIMIT, split: bool = True,
                 simulation_rounds: int = SIMULATION_ROUNDS, blocks: bool = True,
                 block_limit: int = ENUMERATION_LIMIT, profiles: bool = True):
        self.solver = solver
        self.profiles = profiles
        self.enumeration_limit = enumeration_limit
        self.split = split
        self.blocks = blocks
        self.block_limit = block_limit
        self.simulation_rounds = simulation_rounds
        self.cooperative = solver.startswith(("glucose", "minisat", "maple", "gluecard", "minicard"))

    def refusal(self, netlist: Netlist, prop: Property, options: Options = Options()
                ) -> tuple[StopReason, str] | None:
        if not isinstance(netlist, ComparatorNetwork):
            return StopReason.UNSUPPORTED, "sat checks comparator networks only (gate circuits need another engine)"
        if isinstance(prop, PartialSort):
            return StopReason.UNSUPPORTED, "partial-sort applies to gate circuits only"
        return None

    # -- the check -------------------------------------------------------------------------------------------

    def check(self, netlist: Netlist, prop: Property, budget: Budget, options: Options = Options()) -> Verdict:
        started = time.perf_counter()
        refused = refused_verdict(self, netlist, prop, options, started)
        if refused is not None:
            return refused
        network: ComparatorNetwork = netlist  # type: ignore[assignment]
        tally = _Tally(certify=options.certify, network=network_digest(network) if options.certify else "")
        try:
            failing = _simulate(network, prop, self.simulation_rounds, budget) if self.simulation_rounds else None
            if failing is not None:
                return self._refuted(network, prop, failing, tally, "random simulation", started)
            tally.relations_pending = isinstance(prop, Sorts)
            if network.depth > math.ceil(math.log2(max(2, network.channels))) ** 2:
                self._try_relations(network, prop, budget, tally)
            failing, decided = self._prove(network, prop, budget, tally)
        except _ProvedByRelations:
            figures = self._figures(tally, "order relations", started)
            scope = (f"every input on {network.channels} channels, of any values: order relations that hold "
                     f"for every input, propagated through all {network.size} comparators, put every "
                     f"adjacent pair of outputs in order (a direct argument on values; the 0-1 principle "
                     f"is not needed)")
            material = (CertificateMaterial("order-relations", relations={
                "channels": network.channels, "descending": prop.order == "descending"})
                if options.certify else None)
            return Verdict(Status.PROVED, self.name, prop, StopReason.COVERED, scope, figures["seconds"], None,
                           figures, certificate=material)
        except _Interrupted:
            return self._unknown(network, prop, tally, started)
        if failing is not None:
            return self._refuted(network, prop, failing, tally, decided, started)
        figures = self._figures(tally, decided, started)
        return Verdict(Status.PROVED, self.name, prop, StopReason.COVERED, self._proved_scope(network, prop, tally),
                       figures["seconds"], None, figures, certificate=self._material(tally))

    def _material(self, tally: _Tally) -> CertificateMaterial | None:
        """The SAT calls and enumerations the proof rests on (None unless certificates were asked for)."""
        if not tally.certify:
            return None
        method = "+".join(name for name, used in (("drup", tally.calls), ("enumeration", tally.enumerated)) if used)
        return CertificateMaterial(method or "none", tuple(tally.calls), tuple(tally.enumerated))

    def _prove(self, network: ComparatorNetwork, prop: Property, budget: Budget, tally: _Tally
               ) -> tuple[tuple[int, ...] | None, str]:
        n = network.channels
        if isinstance(prop, Merges) or not self.split:
            groups = ([(tuple(range(prop.split)), "ascending"), (tuple(range(prop.split, n)), "ascending")]
                      if isinstance(prop, Merges) else [((c,), "ascending") for c in range(n)])
            comparators = list(range(network.size))
            return self._decide(network, groups, comparators, prop, budget, tally)
        parts = split_tree(network, join_delayed_order(network))
        root = len(parts) - 1
        for index in range(n, root):
            if budget.expired():
                raise _Interrupted
            if tally.blocks.depth == 0:  # not from inside a sub-network's proof
                budget.report(index - n, root - n, "proving parts")
            self._settle(network, parts, index, budget, tally)
        below, comparators = frontier(parts, root)
        groups = [(parts[i].channels, parts[i].order) for i in below]
        return self._decide(network, groups, comparators, prop, budget, tally)

    def _settle(self, network: ComparatorNetwork, parts: list, index: int, budget: Budget, tally: _Tally) -> None:
        """Prove part ``index`` sorts (ascending, else descending) or dissolve it.

        A part whose question, relabelled to channels ``0..k-1`` in ascending order, was decided
        before (the translated merges of Batcher's networks) takes the same answer: order-keeping
        relabelling maps the one question onto the other exactly.  Not with certificates, which
        record a claim per part.
        """
        part = parts[index]
        below, comparators = frontier(parts, index)
        if len(comparators) > (DISSOLVED_RATIO + 1) * max(1, len(part.segment)):
            part.order = "dissolved"
            tally.parts_dissolved += 1
            return
        groups = [(parts[i].channels, parts[i].order) for i in below]
        key = None if tally.certify else question_key(network, part.channels, groups, comparators)
        if key is not None and key in tally.decided_parts:
            part.order = tally.decided_parts[key]
            tally.parts_reused += 1
        else:
            part.order = self._part_order(network, part, groups, comparators, budget, tally)
            if key is not None:
                tally.decided_parts[key] = part.order
        if part.order == "dissolved":
            tally.parts_dissolved += 1
        else:
            tally.parts_proved += 1

    @staticmethod
    def _interrupted() -> Exception:
        """The exception that ends a check at the deadline (raised by the steps of other modules too)."""
        return _Interrupted()

    def _decide(self, network: ComparatorNetwork, groups: list, comparators: list[int], target, budget: Budget,
                tally: _Tally) -> tuple[tuple[int, ...] | None, str]:
        """A vector sorted on the groups that breaks ``target`` after ``comparators``, or None; and the method."""
        if self._profiled(groups, tally) and self._sorted_target(network, target) is not None:
            return (self._by_profiles(network, groups, comparators, [self._sorted_target(network, target)], budget,
                                      tally)[0], "split")
        source = SortedParts(groups)
        if source.total <= self.enumeration_limit:
            tally.parts_enumerated += 1
            return self._enumerate(network, source, comparators, target, budget, tally), "split"
        failing = self._sample(network, source, comparators, target, budget)
        if failing is not None:
            return failing, "random simulation"
        # The block step is a split too (none with split=False).  Certificates record claims about every vector
        # sorted on the groups, while the block step checks only the vectors its sub-networks hand on, so it is
        # left out when certificates are asked for.
        if self.blocks and self.split and not tally.certify:
            decided = self._by_blocks(network, groups, comparators, target, budget, tally)
            if decided is not None:
                return decided
        if not isinstance(target, tuple):  # the property itself, before the largest SAT question
            self._try_relations(network, target, budget, tally)
        return self._solve(network, groups, comparators, target, budget, tally), "sat"

    def _try_relations(self, network: ComparatorNetwork, prop: Property, budget: Budget, tally: _Tally) -> None:
        """Raise :class:`_ProvedByRelations` when propagated order relations show the whole network sorts.

        Tried once per check, and only on the checked network itself (not on
        the sub-networks of :mod:`sortcheck.engines.networks.sat_blocks`): first, when
        the network is deeper than ``ceil(log2 n)^2`` (odd-even transposition
        and insertion networks, depth about n, which relations prove at any
        size and the split does not), else only before the SAT call on the
        property.  Batcher's and the pairwise networks are shallower (depth
        ``k(k+1)/2`` for ``n = 2^k``); relations fail on them, and at 2048
        channels took 3.5 s of a 9 s check when they came first.
        """
        if not tally.relations_pending or tally.blocks.depth:
            return
        tally.relations_pending = False
        if relations_prove_sorted(network.channels, network.comparators, prop.order == "descending", budget):
            raise _ProvedByRelations

    # -- the two ways to check a part -------------------------------------------------------------------------

    def _mask(self, target, rows: list) -> np.ndarray:
        if isinstance(target, tuple):
            _, channels, order = target
            return _descents([rows[c] for c in channels], len(channels), order == "descending")
        return failure_mask(target, rows)

    def _channels(self, network: ComparatorNetwork, target) -> tuple[int, ...]:
        return target[1] if isinstance(target, tuple) else tuple(range(network.channels))

    def _enumerate(self, network, source: SortedParts, comparators: list[int], target, budget: Budget,
                   tally: _Tally) -> tuple[int, ...] | None:
        channels = self._channels(network, target)
        words = max(1, min(4096, (1 << 21) // max(1, len(channels)), -(-source.total // 64)))
        rows = [None] * network.channels
        for channel in channels:
            rows[channel] = np.zeros(words, dtype=np.uint64)
        pairs = [network.comparators[i] for i in comparators]
        scratch = np.empty(words, dtype=np.uint64)
        for start in range(0, source.total, words * 64):
            if budget.expired():
                raise _Interrupted
            valid = source.fill(start, words * 64, rows)
            scratch = _apply_within(rows, pairs, scratch, budget)
            lane = first_failing_lane(self._mask(target, rows), valid)
            tally.vectors += valid
            if lane is not None:
                return source.vector(start + lane, network.channels)
        if tally.certify:
            claim = part_claim(source.groups, comparators, target)
            tally.enumerated.append(Enumerated(claim_label(claim), source.total,
                                               claim_digest(tally.network, claim, source.total), claim))
        return None

    def _sample(self, network, source: SortedParts, comparators: list[int], target, budget: Budget
                ) -> tuple[int, ...] | None:
        """Random vectors of a part too large to enumerate: a cheap refutation before SAT."""
        channels = self._channels(network, target)
        rows = [None] * network.channels
        for channel in channels:
            rows[channel] = np.zeros(64, dtype=np.uint64)
        ones = source.random_ones(np.random.default_rng(7), 64 * 64)
        source.fill_ones(ones, rows)
        _apply_within(rows, [network.comparators[i] for i in comparators], np.empty(64, dtype=np.uint64), budget)
        lane = first_failing_lane(self._mask(target, rows), 64 * 64)
        if lane is None:
            return None
        return source.vector_of_ones([int(group[lane]) for group in ones], network.channels)

    def _solve(self, network, groups: list, comparators: list[int], target, budget: Budget, tally: _Tally
               ) -> tuple[int, ...] | None:
        pool = IDPool()
        # When no 0-1 input can break the target, a contradiction keeps the certificate uniform.
        clauses, inputs = part_clauses(network, groups, comparators, target, pool, contradiction=tally.certify)
        if clauses is None:
            return None
        tally.variables += pool.top
        tally.clauses += len(clauses)
        if budget.expired():
            raise _Interrupted
        proof: list[str] | None = [] if tally.certify else None
        model = self._run_solver(clauses, budget, tally, proof)
        if model is None:
            if proof is not None:
                claim = part_claim(groups, comparators, target)
                comments = [f"sortcheck: unsatisfiable exactly when {claim_label(claim)} holds",
                            "claim " + canonical(claim).decode()]
                tally.calls.append(UnsatCall(claim_label(claim), dimacs(clauses, pool, comments),
                                             "\n".join(proof) + "\n", self._proof_solver(), claim))
            return None
        true = {literal for literal in model if literal > 0}
        return tuple(int(inputs[c] in true) if inputs[c] else 0 for c in range(network.channels))

    def _proof_solver(self) -> str:
        return self.solver if self.solver in PROOF_SOLVERS else PROOF_SOLVER

    def _run_solver(self, clauses: list, budget: Budget, tally: _Tally, proof: list[str] | None = None
                    ) -> list[int] | None:
        """The model, or None when unsatisfiable (with a ``proof`` list: its DRUP steps appended);
        raises :class:`_Interrupted` at the deadline."""
        started = time.perf_counter()
        tally.sat_calls += 1
        solver = self.solver if proof is None else self._proof_solver()
        try:
            return solve_within(clauses, budget if self.cooperative else Budget(), solver, proof=proof)
        except Interrupted:
            raise _Interrupted from None
        finally:
            tally.solver_seconds += time.perf_counter() - started

    # -- verdicts --------------------------------------------------------------------------------------------

    def _figures(self, tally: _Tally, decided: str, started: float) -> dict:
        return {"decided": decided, "solver": self.solver, "variables": tally.variables, "clauses": tally.clauses,
                "sat_calls": tally.sat_calls, "solver_seconds": round(tally.solver_seconds, 4),
                "parts_proved": tally.parts_proved, "parts_dissolved": tally.parts_dissolved,
                "parts_enumerated": tally.parts_enumerated, "vectors_enumerated": tally.vectors,
                "sub_networks_proved": tally.blocks.used, "sub_networks_distinct": tally.blocks.distinct,
                "parts_profiled": tally.parts_profiled, "profiles_evaluated": tally.profiles,
                "vectors_profiled": tally.profiled_vectors, "parts_reused": tally.parts_reused,
                "seconds": time.perf_counter() - started}

    def _proved_scope(self, network: ComparatorNetwork, prop: Property, tally: _Tally) -> str:
        n = network.channels
        inputs = (f"every input on {n} channels whose positions 0..{prop.split - 1} and {prop.split}..{n - 1} are "
                  f"each ascending" if isinstance(prop, Merges) else f"every input on {n} channels")
        if tally.vectors == 0 and tally.parts_proved == 0 and tally.parts_profiled == 0:
            how = f"through a SAT proof of unsatisfiability ({self.solver})"
        else:
            how = (f"the network was split along its structure into {tally.parts_proved} proved sorting parts and "
                   f"the property, each checked on every 0-1 vector the parts before it can produce: "
                   f"{tally.vectors:,} vectors enumerated bit-parallel and {tally.sat_calls} SAT proofs of "
                   f"unsatisfiability ({self.solver})")
            if tally.parts_profiled:
                how += (f"; {tally.parts_profiled} questions on two proved sorted runs were decided exactly on "
                        f"{tally.profiles:,} monotone profiles standing for {tally.profiled_vectors:,} 0-1 vectors "
                        f"(encodings/two-run-profiles.md)")
            if tally.parts_reused:
                how += (f"; {tally.parts_reused} parts asked the same question as a part decided before, on "
                        f"other channels in the same order, and took its answer")
            if tally.blocks.used:
                how += (f"; {tally.blocks.used} independent sub-networks on disjoint channel sets "
                        f"({tally.blocks.distinct} distinct) were proved, each as a network of its own by the same "
                        f"method, to sort every input, and the comparators after them were checked on every "
                        f"vector they can hand on")
        return f"{inputs}, of any values, by the 0-1 principle: {how}"

    def _refuted(self, network: ComparatorNetwork, prop: Property, failing: tuple[int, ...], tally: _Tally,
                 decided: str, started: float) -> Verdict:
        output = tuple(network.apply(list(failing)))
        reason = violation(prop, failing, output)
        if reason is None:
            raise AssertionError(f"internal error: input {failing} was found failing but meets {prop.describe()}")
        figures = self._figures(tally, decided, started)
        scope = ("this 0-1 input breaks the property, and so does every input of any values with the same "
                 "order pattern")
        return Verdict(Status.REFUTED, self.name, prop, StopReason.COUNTEREXAMPLE, scope, figures["seconds"],
                       Counterexample(failing, output, "0-1", reason), figures)

    def _unknown(self, network: ComparatorNetwork, prop: Property, tally: _Tally, started: float) -> Verdict:
        figures = self._figures(tally, "time budget", started)
        scope = (f"the time budget ran out after {tally.parts_proved} parts were proved to sort and "
                 f"{tally.sat_calls} SAT calls; random inputs found no failure; nothing is proved")
        return Verdict(Status.UNKNOWN, self.name, prop, StopReason.TIMEOUT, scope, figures["seconds"], None, figures)

