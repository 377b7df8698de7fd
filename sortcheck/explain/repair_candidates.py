"""The candidates of a network repair: changes and the order they are tried in.

:class:`Change` is one edit of a comparator network (:func:`apply_changes`
applies several).  :func:`guide_for` turns the diagnosis of a failing input
into the search order, :func:`replacements`, :func:`search_space` and
:func:`all_candidates` list the one-change candidates in that order
(:mod:`sortcheck.explain.repair_scan` runs them on the bank of 0-1 inputs, and
:mod:`sortcheck.explain.repair_search` verifies the survivors).

>>> space, guide = _Space(channels=2, descending=False, first=0, last=1), _Guide(seal=None)
>>> [(change.kind, change.index) for _, change in all_candidates(((0, 1),), space, guide)]
[('reverse', 0), ('insert', 0), ('insert', 1), ('delete', 0)]
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from itertools import combinations
from typing import Any, Sequence

import numpy as np

from sortcheck.explain.diagnose import diagnose_network, permutation_of
from sortcheck.model import ComparatorNetwork, Property, Sorts

#: Kinds of change, in the order the search tries them.
KINDS = ("reverse", "insert", "move", "delete")
_RANK = {kind: rank for rank, kind in enumerate(KINDS)}

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


# ----------------------------------------------------------------------------- the lanes of candidates


def _ends(alternatives: Sequence[Comparator | None]) -> tuple[np.ndarray, np.ndarray]:
    low = np.array([0 if c is None else c[0] for c in alternatives], dtype=np.intp)
    high = np.array([0 if c is None else c[1] for c in alternatives], dtype=np.intp)
    return low, high


_NO_LANES = ((), np.empty(0, dtype=np.intp), np.empty(0, dtype=np.intp))


def _replacement_ends(comparator: Comparator, channels: int) -> tuple[np.ndarray, np.ndarray]:
    """The two ends of each of :func:`replacements` of ``comparator``, in its order (a delete: ``(0, 0)``).

    >>> [pair.tolist() for pair in _replacement_ends((0, 2), 3)]
    [[2, 1, 0, 0], [0, 2, 1, 0]]
    """
    a, b = comparator
    others = np.delete(np.arange(channels, dtype=np.intp), sorted((a, b)))
    low, high = [np.array([b], dtype=np.intp)], [np.array([a], dtype=np.intp)]
    for kept in (b, a):
        ends = np.minimum(others, kept), np.maximum(others, kept)
        low.append(ends[0] if a < b else ends[1])
        high.append(ends[1] if a < b else ends[0])
    low.append(np.zeros(1, dtype=np.intp))
    high.append(np.zeros(1, dtype=np.intp))
    return np.concatenate(low), np.concatenate(high)


def replacement_option(lane: int, lanes: int, low: np.ndarray, high: np.ndarray) -> tuple[str, Comparator | None]:
    """Replacement ``lane`` of ``lanes`` as :func:`replacements` lists it, from :func:`_replacement_ends`."""
    if lane == lanes - 1:
        return "delete", None
    return ("reverse" if lane == 0 else "move"), (int(low[lane]), int(high[lane]))


class _Options:
    """The replacements of one comparator as a sequence, named only when asked for."""

    def __init__(self, low: np.ndarray, high: np.ndarray):
        self.low, self.high = low, high

    def __len__(self) -> int:
        return len(self.low)

    def __getitem__(self, lane: int) -> tuple[str, Comparator | None]:
        if not 0 <= lane < len(self.low):
            raise IndexError(lane)
        return replacement_option(lane, len(self.low), self.low, self.high)


@lru_cache(maxsize=1 << 16)
def _replacement_lanes(comparator: Comparator, channels: int):
    """The replacements of ``comparator`` as ``(options, low, high)``, in the order of :func:`replacements`.

    >>> options, low, high = _replacement_lanes((0, 2), 3)
    >>> [options[i] for i in range(len(options))] == replacements((0, 2), 3)
    True
    """
    low, high = _replacement_ends(comparator, channels)
    return _Options(low, high), low, high


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
