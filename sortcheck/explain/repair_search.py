"""The verification of repair candidates in search order (:mod:`sortcheck.explain.repair`).

A candidate that passes the bank of failing inputs is checked in full; a
refuted one gives its counterexample to the bank, which then rules out
later candidates that fail it.  The two-change stage can run on a range of
first changes only, which is what a piece of it is
(:mod:`sortcheck.explain.repair_pieces`).
"""

from __future__ import annotations

import numpy as np

from sortcheck.engines import Budget, Status, StopReason, Verdict, check
from sortcheck.explain.repair_bank import Bank, failing, pack
from sortcheck.explain.repair_candidates import (Change, Comparator, _Counts, _Guide, _Space, advance,
                                                 all_candidates, apply_changes, guide_for, scan)
from sortcheck.model import ComparatorNetwork, Property
from sortcheck.model.semantics import violation


class CandidateSearch:
    """Verification of candidates in order, with counterexamples fed back to the bank.

    ``engine`` is the engine of the full checks; ``counts`` gathers what the
    search did; ``timed_out`` turns true when the budget ran out.
    """

    def __init__(self, network: ComparatorNetwork, prop: Property, budget: Budget, engine: str, bank: Bank,
                 counts: _Counts):
        self.network, self.prop, self.budget, self.engine = network, prop, budget, engine
        self.bank, self.counts = bank, counts
        self.checked: set[tuple[Comparator, ...]] = set()
        self.timed_out = False

    def check(self, network: ComparatorNetwork) -> Verdict:
        return check(network, self.prop, engine=self.engine, timeout=self.budget.remaining())

    def still_passes(self, network: ComparatorNetwork, since: int) -> bool:
        """Whether the network gets right every bank input added since position ``since``."""
        return all(violation(self.prop, vector, network.apply(list(vector))) is None
                   for vector in self.bank.vectors[since:])

    def verify(self, candidates: list[tuple[Change, ...]], since: int) -> tuple[tuple[Change, ...], ComparatorNetwork,
                                                                                  Verdict] | None:
        """The first candidate (a sequence of changes) that a full check proves; None if none."""
        for changes in candidates:
            if self.budget.expired():
                self.timed_out = True
                return None
            repaired = apply_changes(self.network, changes)
            if repaired.comparators in self.checked or not self.still_passes(repaired, since):
                continue
            self.checked.add(repaired.comparators)
            verdict = self.check(repaired)
            self.counts.verifications += 1
            if verdict.status == Status.PROVED:
                return changes, repaired, verdict
            if verdict.status == Status.REFUTED:
                self.counts.added += self.bank.add(verdict.counterexample.input)
            elif verdict.stop == StopReason.TIMEOUT:
                self.timed_out = True
                return None
            else:
                self.counts.undecided += 1
        return None

    def state_at(self, index: int) -> np.ndarray:
        state = self.bank.rows().copy()
        for comparator in self.network.comparators[:index]:
            advance(state, comparator)
        return state

    def one_change(self, space: _Space, guide: _Guide):
        since = len(self.bank.vectors)
        survivors = scan(self.network.comparators, self.prop, self.state_at(0), 0, space, guide, self.counts,
                         self.budget)
        if survivors is None:
            self.timed_out = True
            return None
        return self.verify([(change,) for _, change in survivors], since)

    def two_changes(self, space: _Space, guide: _Guide, span: tuple[int, int] | None = None,
                    firsts: list | None = None):
        """The first proved pair of changes, by the first change in search order (only the first changes
        ``span[0] <= i < span[1]`` of that order when ``span`` is given); None if none.

        ``firsts`` is that order when the caller has it already (``all_candidates`` of the network).
        """
        initial = pack(self.bank.vectors[:self.bank.initial], self.network.channels)
        firsts = all_candidates(self.network.comparators, space, guide) if firsts is None else firsts
        for _, first in firsts if span is None else firsts[span[0]:span[1]]:
            if self.budget.expired():
                self.timed_out = True
                return None
            changed = first.apply(self.network.comparators)
            flags = failing(changed, self.prop, initial, self.bank.initial)
            witness = self.bank.vectors[int(np.argmax(flags))] if flags.any() else None
            second_guide = guide_for(changed, self.network.channels, self.prop, witness)
            start = first.index if first.kind == "delete" else first.index + 1
            inner = _Space(space.channels, space.descending, start, space.last + len(changed) - self.network.size,
                           space.witness_inserts_only)
            since = len(self.bank.vectors)
            survivors = scan(changed, self.prop, self.state_at(first.index), first.index, inner, second_guide,
                             self.counts, self.budget)
            if survivors is None:
                self.timed_out = True
                return None
            found = self.verify([(first, second) for _, second in survivors], since)
            if found is not None or self.timed_out:
                return found
        return None
