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
64 inputs share a machine word); one that fails a bank input is dropped.  A
candidate that passes the bank is checked with :func:`sortcheck.engines.check`,
and is offered only when that check proves it; when the check refutes it,
its counterexample joins the bank.

The order is fixed, so the same input gives the same repair: the first
candidate, in this order, whose property holds.

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
decides only how many full checks it takes.
"""

from __future__ import annotations

import time
from bisect import bisect_right
from dataclasses import dataclass, field
from functools import lru_cache
from itertools import combinations
from typing import Any, Sequence

import numpy as np

from sortcheck.engines import Budget, Status, StopReason, Verdict, check
from sortcheck.engines.bitslice import failure_mask
from sortcheck.explain.diagnose import diagnose_network, permutation_of
from sortcheck.explain.repair_bank import Bank, failing, pack, seed_bank
from sortcheck.model import DEFAULT_PROPERTY, ComparatorNetwork, Property, Sorts, check_fits
from sortcheck.model.semantics import violation

#: Kinds of change, in the order the search tries them.
KINDS = ("reverse", "insert", "move", "delete")
_RANK = {kind: rank for rank, kind in enumerate(KINDS)}

#: Outcome statuses: a proved repair; the property already holds; no repair
#: within the search; the budget ran out; no engine could decide the property.
STATUSES = ("repaired", "holds", "none", "budget", "unknown")

Comparator = tuple[int, int]


@dataclass(frozen=True)
class Change:
    """One edit of a network.

    ``index`` is a position in the network as changed by the changes before
    this one.  ``comparator`` is the comparator at ``index`` after the change
    (for ``delete``: the comparator removed); ``replaced`` the one that stood
    there before (None for ``insert``).

    >>> Change("reverse", 2, (3, 1), (1, 3)).to_json()
    {'kind': 'reverse', 'index': 2, 'comparator': [3, 1], 'replaced': [1, 3]}
    """

    kind: str
    index: int
    comparator: Comparator
    replaced: Comparator | None = None

    def apply(self, comparators: tuple[Comparator, ...]) -> tuple[Comparator, ...]:
        """The comparators after this change."""
        head, tail = comparators[:self.index], comparators[self.index:]
        if self.kind == "insert":
            return head + (self.comparator,) + tail
        if self.kind == "delete":
            return head + tail[1:]
        return head + (self.comparator,) + tail[1:]

    def describe(self) -> str:
        """One phrase for people."""
        new = list(self.comparator)
        if self.kind == "insert":
            return f"insert {new} at position {self.index}"
        if self.kind == "delete":
            return f"delete {new} at position {self.index}"
        return f"{self.kind} {list(self.replaced)} at position {self.index} to {new}"

    def to_json(self) -> dict[str, Any]:
        return {"kind": self.kind, "index": self.index, "comparator": list(self.comparator),
                "replaced": None if self.replaced is None else list(self.replaced)}


def apply_changes(network: ComparatorNetwork, changes: Sequence[Change]) -> ComparatorNetwork:
    """The network after the changes, applied in order (name, description and claim kept).

    >>> net = ComparatorNetwork(3, ((0, 1), (1, 2)))
    >>> apply_changes(net, [Change("insert", 2, (0, 1))]).comparators
    ((0, 1), (1, 2), (0, 1))
    """
    comparators = network.comparators
    for change in changes:
        comparators = change.apply(comparators)
    return ComparatorNetwork(network.channels, comparators, network.name, network.description, network.claim)


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
        Most candidates of one change per level; beyond it, only positions
        around the sealing comparator (and, if still too many, inserts touching
        a witness channel) are searched, and the outcome says so.
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

    def to_json(self) -> dict[str, Any]:
        proof = self.verdict if self.verified else None
        return {"status": self.status, "changes": [change.to_json() for change in self.changes],
                "verified": self.verified, "reason": self.reason, "searched": self.searched,
                "engine": None if proof is None else proof.engine,
                "scope": None if proof is None else proof.scope,
                "stats": None if self.network is None else self.network.stats(),
                "candidates_tried": self.candidates_tried, "verifications": self.verifications,
                "bank_inputs": self.bank_inputs, "counterexamples_added": self.counterexamples_added,
                "undecided": self.undecided, "seconds": round(self.seconds, 3)}


# ----------------------------------------------------------------------------- candidates and their order


@dataclass(frozen=True)
class _Guide:
    """Where a network goes wrong: the sealing comparator and the witness values' channels before each position."""

    seal: int | None
    witness: tuple[tuple[int, int], ...] = ()

    def key(self, kind: str, index: int, comparator: Comparator) -> tuple:
        where = set(self.witness[index]) if index < len(self.witness) else set()
        touched = len(where & set(comparator))
        score = 0 if touched == 2 else 1 if touched else 2
        if self.seal is None:
            distance = 0
        else:
            distance = abs(index - (self.seal + 1 if kind == "insert" else self.seal))
        return (_RANK[kind], score, distance, index, comparator)


def guide_for(comparators: tuple[Comparator, ...], channels: int, prop: Property,
              vector: Sequence[int] | None) -> _Guide:
    """The diagnosis of ``vector`` on the comparators, as an order of candidates.

    >>> guide_for(((0, 1), (1, 2)), 3, Sorts(), (1, 1, 0))
    _Guide(seal=1, witness=((0, 2), (0, 2), (0, 1)))
    """
    if vector is None:
        return _Guide(None)
    diagnosis = diagnose_network(ComparatorNetwork(channels, comparators), prop, vector)
    if diagnosis is None:
        return _Guide(None)
    values = permutation_of(list(vector))
    first, second = values[diagnosis.inputs[0]], values[diagnosis.inputs[1]]
    where = {first: diagnosis.inputs[0], second: diagnosis.inputs[1]}
    witness = []
    for a, b in comparators:
        witness.append((where[first], where[second]))
        if values[a] > values[b]:
            values[a], values[b] = values[b], values[a]
            for token, channel in ((values[a], a), (values[b], b)):
                if token in where:
                    where[token] = channel
    witness.append((where[first], where[second]))
    seal = diagnosis.sealed_at if diagnosis.sealed_at is not None else diagnosis.last_meeting
    return _Guide(seal, tuple(witness))


def replacements(comparator: Comparator, channels: int) -> list[tuple[str, Comparator | None]]:
    """The reverse, moves and delete of one comparator, in order (None: deleted).

    >>> replacements((0, 2), 3)
    [('reverse', (2, 0)), ('move', (1, 2)), ('move', (0, 1)), ('delete', None)]
    """
    a, b = comparator
    standard = a < b
    options: list[tuple[str, Comparator | None]] = [("reverse", (b, a))]
    for kept in (b, a):
        for channel in range(channels):
            if channel not in (a, b):
                low, high = min(channel, kept), max(channel, kept)
                options.append(("move", (low, high) if standard else (high, low)))
    options.append(("delete", None))
    return options


@dataclass(frozen=True)
class _Space:
    """Which one-change candidates are searched: anchors ``first..last`` and which inserts."""

    channels: int
    descending: bool
    first: int
    last: int
    witness_inserts_only: bool = False

    def inserts(self, index: int, guide: _Guide) -> list[Comparator]:
        pairs = combinations(range(self.channels), 2)
        if self.witness_inserts_only and index < len(guide.witness):
            where = set(guide.witness[index])
            pairs = (pair for pair in pairs if where & set(pair))
        return [(j, i) for i, j in pairs] if self.descending else list(pairs)

    def insert_lanes(self, index: int, guide: _Guide) -> tuple[tuple[Comparator, ...], np.ndarray, np.ndarray]:
        """The inserts at ``index`` with the arrays of their two ends."""
        if not self.witness_inserts_only:
            return _insert_lanes(self.channels, self.descending)
        pairs = tuple(self.inserts(index, guide))
        return (pairs, *_ends(pairs))


def search_space(network: ComparatorNetwork, prop: Property, guide: _Guide, limit: int) -> tuple[_Space, str]:
    """The candidates searched for ``network``, and a phrase saying which."""
    n, size = network.channels, network.size
    descending = isinstance(prop, Sorts) and prop.order == "descending"
    per_anchor = n * (n - 1) // 2 + 2 * (n - 1)
    if per_anchor * (size + 1) <= limit:
        return _Space(n, descending, 0, size), "every network within the changes"
    centre = guide.seal if guide.seal is not None else 0
    restricted = per_anchor > limit
    if restricted:
        per_anchor = 2 * n + 2 * (n - 1)
    half = max(0, limit // per_anchor // 2)
    # The fault lies at or before the sealing comparator, so the window reaches back further than forward.
    first, last = max(0, centre - (3 * half) // 2), min(size, centre + half // 2)
    inserts = " (inserts touching a witness channel only)" if restricted else ""
    return (_Space(n, descending, first, last, restricted),
            f"changes at positions {first}..{last} of {size}{inserts}, around the sealing comparator")


def all_candidates(comparators: tuple[Comparator, ...], space: _Space, guide: _Guide) -> list[tuple[tuple, Change]]:
    """Every one-change candidate in the space, in the search order."""
    found = []
    for index in range(space.first, space.last + 1):
        for pair in space.inserts(index, guide):
            found.append((guide.key("insert", index, pair), Change("insert", index, pair)))
        if index < len(comparators):
            old = comparators[index]
            for kind, new in replacements(old, space.channels):
                new = old if new is None else new
                found.append((guide.key(kind, index, new), Change(kind, index, new, old)))
    found.sort(key=lambda item: item[0])
    return found


# ----------------------------------------------------------------------------- bank evaluation of candidates

_CHUNK_WORDS = 1 << 22


def advance(state: np.ndarray, comparator: Comparator) -> None:
    """Apply one comparator to a bank state ``(channels, ...)`` in place."""
    a, b = comparator
    low = state[a] & state[b]
    state[b] |= state[a]
    state[a] = low


def place(block: np.ndarray, base: np.ndarray, low: np.ndarray, high: np.ndarray) -> None:
    """Fill the lanes of ``block`` ``(channels, lanes, words)`` with ``base``; apply ``(low[i], high[i])`` to lane ``i``.

    ``low[i] == high[i]`` applies nothing (a delete).

    >>> block = np.empty((2, 2, 1), dtype=np.uint64)
    >>> place(block, pack([(1, 0)], 2), np.array([0, 0]), np.array([1, 0]))
    >>> block[:, :, 0].tolist()
    [[0, 1], [1, 0]]
    """
    block[:] = base[:, None, :]
    lanes = np.arange(len(low))
    first, second = block[low, lanes], block[high, lanes]
    block[low, lanes] = first & second
    block[high, lanes] = first | second


def _ends(alternatives: Sequence[Comparator | None]) -> tuple[np.ndarray, np.ndarray]:
    low = np.array([0 if c is None else c[0] for c in alternatives], dtype=np.intp)
    high = np.array([0 if c is None else c[1] for c in alternatives], dtype=np.intp)
    return low, high


_NO_LANES = ((), np.empty(0, dtype=np.intp), np.empty(0, dtype=np.intp))


@lru_cache(maxsize=1 << 16)
def _replacement_lanes(comparator: Comparator, channels: int):
    options = tuple(replacements(comparator, channels))
    return (options, *_ends([new for _, new in options]))


@lru_cache(maxsize=64)
def _insert_lanes(channels: int, descending: bool):
    pairs = tuple((j, i) if descending else (i, j) for i, j in combinations(range(channels), 2))
    return (pairs, *_ends(pairs))


@dataclass
class _Counts:
    tried: int = 0
    verifications: int = 0
    added: int = 0
    undecided: int = 0


def scan(comparators: tuple[Comparator, ...], prop: Property, state: np.ndarray, start: int, space: _Space,
         guide: _Guide, counts: _Counts, budget: Budget) -> list[tuple[tuple, Change]] | None:
    """The one-change candidates at anchors ``space.first..space.last`` that pass the bank, in search order.

    ``state`` is the bank after ``comparators[:start]``; None when the budget
    ran out.  All candidates of a group of anchors are lanes of one array,
    ordered by the step at which they join: the inserts at an anchor join
    before its comparator, the replacements of that comparator after it, so
    each comparator is applied once, to a prefix of the lanes.
    """
    state, size = state.copy(), len(comparators)
    n, words = state.shape
    capacity = max(1, _CHUNK_WORDS // (n * words))
    for index in range(start, space.first):
        advance(state, comparators[index])
    survivors, anchor, last = [], max(start, space.first), min(space.last, size)
    while anchor <= last:
        if budget.expired():
            return None
        blocks, lanes, group = [], 0, anchor  # blocks: (anchor, first lane, insert pairs, replacement options)
        while anchor <= last and (not blocks or lanes < capacity):
            inserts = space.insert_lanes(anchor, guide)
            repl = _replacement_lanes(comparators[anchor], n) if anchor < size else _NO_LANES
            blocks.append((anchor, lanes, inserts, repl))
            lanes += len(inserts[0]) + len(repl[0])
            anchor += 1
        cube, base, active = np.empty((n, lanes, words), dtype=np.uint64), state.copy(), 0
        joins = {block[0]: block for block in blocks}
        for index in range(group, size + 1):
            inserted = replacing = 0
            if index in joins:
                _, _, inserts, repl = joins[index]
                inserted, replacing = len(inserts[0]), len(repl[0])
                place(cube[:, active:active + inserted + replacing], base,
                      np.concatenate([inserts[1], repl[1]]), np.concatenate([inserts[2], repl[2]]))
            if index < size:
                advance(cube[:, :active + inserted], comparators[index])
                advance(base, comparators[index])
                if index < anchor:
                    advance(state, comparators[index])
            active += inserted + replacing
        counts.tried += lanes
        ok = np.flatnonzero(~failure_mask(prop, list(cube)).any(axis=1)).tolist()
        starts = [block[1] for block in blocks]
        for lane in ok:
            index, first_lane, inserts, repl = blocks[bisect_right(starts, lane) - 1]
            offset = lane - first_lane
            if offset < len(inserts[0]):
                pair = inserts[0][offset]
                survivors.append((guide.key("insert", index, pair), Change("insert", index, pair)))
            else:
                kind, new = repl[0][offset - len(inserts[0])]
                old = comparators[index]
                new = old if new is None else new
                survivors.append((guide.key(kind, index, new), Change(kind, index, new, old)))
    survivors.sort(key=lambda item: item[0])
    return survivors


# ----------------------------------------------------------------------------- the search


class _Search:
    """Verification of candidates in order, with counterexamples fed back to the bank."""

    def __init__(self, network: ComparatorNetwork, prop: Property, budget: Budget, options: RepairOptions,
                 bank: Bank, counts: _Counts):
        self.network, self.prop, self.budget, self.options = network, prop, budget, options
        self.bank, self.counts = bank, counts
        self.checked: set[tuple[Comparator, ...]] = set()
        self.timed_out = False

    def check(self, network: ComparatorNetwork) -> Verdict:
        return check(network, self.prop, engine=self.options.engine, timeout=self.budget.remaining())

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

    def two_changes(self, space: _Space, guide: _Guide):
        initial = pack(self.bank.vectors[:self.bank.initial], self.network.channels)
        for _, first in all_candidates(self.network.comparators, space, guide):
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


def repair_network(network: ComparatorNetwork, prop: Property | None = None, budget: Budget = Budget(),
                   max_changes: int = 2, options: RepairOptions = RepairOptions()) -> RepairOutcome:
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

    def outcome(status, reason, searched="", found=None, bank=None):
        changes, repaired, verdict = found or ((), None, None)
        return RepairOutcome(status, tuple(changes), repaired, verdict is not None and verdict.status == Status.PROVED,
                             counts.tried, counts.verifications, time.perf_counter() - started, reason, searched,
                             0 if bank is None else len(bank.vectors), counts.added, counts.undecided, verdict)

    first = check(network, prop, engine=options.engine, timeout=budget.remaining())
    counts.verifications += 1
    if first.status == Status.PROVED:
        return outcome("holds", f"the network already {prop.describe()}; nothing to repair", "nothing",
                       ((), network, first))
    if first.status == Status.UNKNOWN:
        status = "budget" if first.stop == StopReason.TIMEOUT else "unknown"
        return outcome(status, f"the network itself could not be checked: {first.scope}")
    bank = seed_bank(network, prop, first.counterexample.input, options.bank_limit, options.random_inputs,
                     options.complete_bank, options.seed)
    guide = guide_for(network.comparators, network.channels, prop, first.counterexample.input)
    space, searched = search_space(network, prop, guide, options.max_candidates)
    search = _Search(network, prop, budget, options, bank, counts)
    for changes in range(1, max_changes + 1):
        found = search.one_change(space, guide) if changes == 1 else search.two_changes(space, guide)
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
