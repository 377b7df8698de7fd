"""Repair a comparator network with the fewest changes, every repair proved.

A *change* edits one comparator: ``insert`` a comparator before position
``index``; ``reverse`` the comparator at ``index``; ``move`` one end of it to
another channel (keeping its orientation: a standard comparator stays
standard); ``delete`` it.  :func:`repair_network` looks for the smallest set
of changes after which the property holds, one change first, then two.

The search is guided by counterexamples (:mod:`sortcheck.explain.repair_bank`).  A *bank* of 0-1 inputs in the
property's scope is kept: the counterexample of the first check, the failing
inputs found by a bit-parallel search around it (every input at Hamming
distance 1 and 2 of a known failing one, random inputs of the same number of
ones), random inputs, and every counterexample a later check returns.  When
the property speaks about few inputs (``RepairOptions.complete_bank``) the
bank holds all of them.  Every candidate network is evaluated on the whole
bank at once (all candidates at one position share the network's prefix, and
64 inputs share a machine word); one that fails a bank input is dropped.
Before that, a candidate that leaves some failing bank input unchanged at its
position is dropped without being run, since it fails that input too
(:mod:`sortcheck.explain.repair_scan`): that keeps the one-change stage of a
network of 256 channels and 3,840 comparators, 127 million candidates, to
seconds, so it always covers every network within one change.  A
candidate that passes the bank is checked with :func:`sortcheck.engines.check`,
and is offered only when that check proves it; when the check refutes it,
its counterexample joins the bank.

The order is fixed, so the same input gives the same repair: the first
candidate, in this order, whose property holds (the changes, their order and
the bank run are in :mod:`sortcheck.explain.repair_candidates` and
:mod:`sortcheck.explain.repair_scan`).

1. Fewer changes first.
2. One change: by kind, ``reverse``, ``insert``, ``move``, ``delete`` (the
   most local edit first; inserting keeps everything the designer wrote;
   deleting removes it); within a kind, changes on the two channels that hold
   the witness pair of the first counterexample (:mod:`sortcheck.explain.diagnose`)
   first, then those touching one of them, then the rest; then by distance
   from the comparator that sealed the witness pair's order; then by position;
   then by comparator.
3. Two changes: ordered by the first change (the one at the earlier position,
   in the order of 2), then by the second change, ordered as in 2 with the
   diagnosis of the once-changed network on the first initial bank input it
   fails.  The second change comes after the first in the network.

The bank only removes candidates that really fail (each bank input is an
input in scope), so the repair found does not depend on the bank; the bank
decides only how many full checks it takes.  That is also why the
two-change stage can run as pieces of first changes on worker processes or
a Dask cluster (``runner``; :mod:`sortcheck.explain.repair_pieces`), each
with a bank of its own, and find the same repair.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field
from typing import Any

from sortcheck.engines import Budget, Status, StopReason, Verdict, check
from sortcheck.explain.repair_bank import seed_bank
from sortcheck.explain.repair_candidates import (  # noqa: F401  (KINDS, replacements...: re-exported)
    KINDS, Change, _Counts, all_candidates, apply_changes, guide_for, replacements, search_space)
from sortcheck.explain.repair_pieces import split_two_changes, two_change_pieces
from sortcheck.explain.repair_search import CandidateSearch
from sortcheck.model import DEFAULT_PROPERTY, ComparatorNetwork, Property, Sorts, check_fits

#: Outcome statuses: a proved repair; the property already holds; no repair
#: within the search; the budget ran out; no engine could decide the property;
#: the run was interrupted (set by the command line, which knows of signals).
STATUSES = ("repaired", "holds", "none", "budget", "unknown", "interrupted")


@dataclass(frozen=True)
class RepairOptions:
    """Tuning of the search; none of it changes which repair is found.

    Parameters
    ----------
    bank_limit : int
        Most failing inputs gathered around the first counterexample.
    random_inputs : int
        Random inputs in scope added to the bank (they catch candidates that
        break what the network did right).
    complete_bank : int
        When the property speaks about at most this many 0-1 inputs, the bank
        holds all of them.
    max_candidates : int
        The one-change stage searches every network within one change unless
        more than this many candidates change every failing bank input (see
        :mod:`sortcheck.explain.repair_scan`); the two-change stage searches
        every pair unless the one-change candidates are more than this many.
        Beyond it, only positions around the sealing comparator (and, if still
        too many, inserts touching a witness channel) are searched, and the
        outcome says so.
    seed : int
        Seed of the random inputs.
    engine : str
        Engine for the full checks (``"auto"``).
    """

    bank_limit: int = 512
    random_inputs: int = 256
    complete_bank: int = 1024
    max_candidates: int = 1_000_000
    seed: int = 0
    engine: str = "auto"


@dataclass(frozen=True)
class RepairOutcome:
    """What :func:`repair_network` found, as data.

    ``status`` is one of :data:`STATUSES`; ``network`` is the repaired network
    (the original one for ``holds``), None otherwise; ``verified`` is True
    exactly when ``verdict`` (the check of ``network``) proved the property.
    """

    status: str
    changes: tuple[Change, ...]
    network: ComparatorNetwork | None
    verified: bool
    candidates_tried: int
    verifications: int
    seconds: float
    reason: str
    searched: str
    bank_inputs: int = 0
    counterexamples_added: int = 0
    undecided: int = 0
    verdict: Verdict | None = field(default=None, compare=False)
    ran_on: str = "this process"
    pieces: int = 1

    def to_json(self) -> dict[str, Any]:
        proof = self.verdict if self.verified else None
        return {"status": self.status, "changes": [change.to_json() for change in self.changes],
                "verified": self.verified, "reason": self.reason, "searched": self.searched,
                "engine": None if proof is None else proof.engine,
                "scope": None if proof is None else proof.scope,
                "stats": None if self.network is None else self.network.stats(),
                "candidates_tried": self.candidates_tried, "verifications": self.verifications,
                "bank_inputs": self.bank_inputs, "counterexamples_added": self.counterexamples_added,
                "undecided": self.undecided, "ran_on": self.ran_on, "pieces": self.pieces,
                "seconds": round(self.seconds, 3)}


def _searched(one_everywhere: bool, narrowed: str, two_changes: bool) -> str:
    """What the search covered, in words: ``narrowed`` is the phrase of the two-change stage's space.

    >>> _searched(True, "every network within the changes", True)
    'every network within the changes'
    >>> _searched(True, "changes at positions 3..9 of 20", True)
    'every network within one change; two changes: changes at positions 3..9 of 20'
    """
    everything = narrowed == "every network within the changes"
    if not one_everywhere or (everything and two_changes):
        return narrowed
    if not two_changes:
        return "every network within one change"
    return f"every network within one change; two changes: {narrowed}"


def repair_network(network: ComparatorNetwork, prop: Property | None = None, budget: Budget = Budget(),
                   max_changes: int = 2, options: RepairOptions = RepairOptions(), runner=None) -> RepairOutcome:
    """Find the fewest changes (at most ``max_changes``) after which ``network`` has ``prop``, proved.

    Parameters
    ----------
    network : ComparatorNetwork
    prop : Property or None
        Default: what the network claims, else ``sorts``.
    budget : Budget
        Deadline for the whole search; every check gets what remains of it.
    max_changes : int
        1 or 2 (more is allowed but grows as the number of candidates to that power).
    options : RepairOptions
    runner : optional
        A runner of :mod:`sortcheck.engines.runners.distribute` (local worker
        processes, a Dask cluster): the two-change stage runs on it as pieces
        of first changes (:mod:`sortcheck.explain.repair_pieces`), with the
        same outcome.  None, or a runner that does not split, searches here.

    Returns
    -------
    RepairOutcome
        ``repaired`` with the changes and the proved network; ``holds`` when the
        property already holds (no changes); ``none`` when no network within
        the search has it; ``budget`` when the budget ran out; ``unknown`` when
        no engine could decide the property on the network or on some candidate.

    Raises
    ------
    PropertyError
        When the property does not fit the network.

    Examples
    --------
    >>> net = ComparatorNetwork(3, ((0, 1), (1, 2)))
    >>> outcome = repair_network(net, Sorts())
    >>> outcome.status, [change.describe() for change in outcome.changes], outcome.verified
    ('repaired', ['insert [0, 1] at position 2'], True)
    """
    started = time.perf_counter()
    prop = prop or network.claim or DEFAULT_PROPERTY
    check_fits(prop, network, None)
    counts = _Counts()

    where = {"ran_on": "this process", "pieces": 1}

    def outcome(status, reason, searched="", found=None, bank=None):
        changes, repaired, verdict = found or ((), None, None)
        return RepairOutcome(status, tuple(changes), repaired, verdict is not None and verdict.status == Status.PROVED,
                             counts.tried, counts.verifications, time.perf_counter() - started, reason, searched,
                             0 if bank is None else len(bank.vectors), counts.added, counts.undecided, verdict,
                             where["ran_on"], where["pieces"])

    first = check(network, prop, engine=options.engine, timeout=budget.remaining())
    counts.verifications += 1
    if first.status == Status.PROVED:
        return outcome("holds", f"the network already {prop.describe()}; nothing to repair", "nothing",
                       ((), network, first))
    if first.status == Status.UNKNOWN:
        status = "budget" if first.stop == StopReason.TIMEOUT else "unknown"
        return outcome(status, f"the network itself could not be checked: {first.scope}")
    bank = seed_bank(network, prop, first.counterexample.input, options.bank_limit, options.random_inputs,
                     options.complete_bank, options.seed, budget)
    guide = guide_for(network.comparators, network.channels, prop, first.counterexample.input)
    space, narrowed = search_space(network, prop, guide, options.max_candidates)
    everywhere, searched = search_space(network, prop, guide, float("inf"))
    search = CandidateSearch(network, prop, budget, options.engine, bank, counts)
    for changes in range(1, max_changes + 1):
        if changes == 1:
            found, used = search.one_change([everywhere, space], guide, options.max_candidates)
            one_change_candidates = counts.tried
            searched = _searched(used is everywhere, narrowed, found is None and max_changes > 1)
        elif getattr(runner, "splits", runner is not None):
            pieces = two_change_pieces(search, space, guide, first.counterexample.input, options.engine,
                                       options.max_candidates, one_change_candidates)
            found, where["pieces"] = split_two_changes(search, pieces, runner)
            where["ran_on"] = runner.ran_on
        else:
            found = search.two_changes(space, guide)
        if found is not None:
            done = len(found[0])
            return outcome("repaired", f"{done} change{'s' * (done > 1)} make the network {prop.describe()}, proved "
                           f"by {found[2].engine}", searched, found, bank)
        if search.timed_out:
            return outcome("budget", f"the time budget ran out while searching {changes} change(s)", searched,
                           bank=bank)
        if changes == 2:
            break  # more changes would enumerate pairs of pairs; not offered
    if counts.undecided:
        return outcome("unknown", f"no candidate within {max_changes} change(s) was proved, and {counts.undecided} "
                       "could not be decided", searched, bank=bank)
    return outcome("none", f"no network within {max_changes} change(s) {prop.describe()} (searched: {searched}): "
                   f"{counts.tried:,} candidates were ruled out by the bank of failing inputs or by a full check",
                   searched, bank=bank)
