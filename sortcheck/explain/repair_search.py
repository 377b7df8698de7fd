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
from sortcheck.explain.repair_candidates import (Change, Comparator, _Counts, _Guide, _Space, all_candidates,
                                                 apply_changes, guide_for)
from sortcheck.explain.repair_scan import TooManyCandidates, advance, refilter, scan
from sortcheck.model import ComparatorNetwork, Property


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

    def verify(self, prefix: tuple[Change, ...], comparators: tuple[Comparator, ...],
               survivors: list[tuple[tuple, Change]], since: int
               ) -> tuple[tuple[Change, ...], ComparatorNetwork, Verdict] | None:
        """The first of ``survivors`` that a full check proves, as the changes ``prefix`` and it; None if none.

        ``survivors`` are changes of ``comparators`` (the network after
        ``prefix``) that passed the bank as it was up to input ``since``;
        every input the bank gains from then on rules out the survivors left
        that fail it, all at once.
        """
        remaining = self._passing(comparators, survivors, since)
        while remaining is None or remaining:
            if remaining is None or self.budget.expired():
                self.timed_out = True
                return None
            (_, change), remaining = remaining[0], remaining[1:]
            changed = change.apply(comparators)
            if changed in self.checked:
                continue
            self.checked.add(changed)
            repaired = apply_changes(self.network, prefix + (change,))
            verdict = self.check(repaired)
            self.counts.verifications += 1
            if verdict.status == Status.PROVED:
                return prefix + (change,), repaired, verdict
            if verdict.status == Status.REFUTED:
                since = len(self.bank.vectors)
                if self.bank.add(verdict.counterexample.input):
                    self.counts.added += 1
                    remaining = self._passing(comparators, remaining, since)
            elif verdict.stop == StopReason.TIMEOUT:
                self.timed_out = True
                return None
            else:
                self.counts.undecided += 1
        return None

    def _passing(self, comparators: tuple[Comparator, ...], survivors: list, since: int) -> list | None:
        """The survivors that get the bank inputs from ``since`` on right."""
        if since >= len(self.bank.vectors) or not survivors:
            return survivors
        return refilter(comparators, self.prop, pack(self.bank.vectors[since:], self.network.channels), 0,
                        survivors, _Guide(None), self.budget)

    def state_at(self, index: int) -> np.ndarray:
        state = self.bank.rows().copy()
        for comparator in self.network.comparators[:index]:
            advance(state, comparator)
        return state

    def one_change(self, spaces: list[_Space], guide: _Guide, limit: int | None = None):
        """The first proved one-change candidate of the first space in ``spaces`` whose candidates left after
        the bank's first pass are at most ``limit`` (the last space: however many); and that space."""
        since = len(self.bank.vectors)
        for number, space in enumerate(spaces):
            tried = self.counts.tried
            try:
                survivors = scan(self.network.comparators, self.prop, self.state_at(0), 0, space, guide,
                                 self.counts, self.budget, None if number == len(spaces) - 1 else limit)
            except TooManyCandidates:
                self.counts.tried = tried
                continue
            if survivors is None:
                self.timed_out = True
                return None, space
            return self.verify((), self.network.comparators, survivors, since), space
        raise ValueError("no space to search")

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
            found = self.verify((first,), changed, survivors, since)
            if found is not None or self.timed_out:
                return found
        return None
