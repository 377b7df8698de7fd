"""The two-change stage of a network repair as pieces, for worker processes or a Dask cluster.

The stage tries, for every first change in search order, every second change
after it (:meth:`~sortcheck.explain.repair_search.CandidateSearch.two_changes`);
the first pair a full check proves is the repair.  A *piece* is a range of
first changes in that order, with what a worker needs to rebuild the search
exactly as plain data::

    {"kind": "repair-two-changes", "first": [start, stop], "of": firsts,
     "counterexample": [...], "bank": ["0110...", ...], "initial": k,
     "engine": "auto", "max_candidates": 1000000}

(the first check's counterexample, which orders the candidates; the bank of
inputs when the stage began, one string of 0s and 1s an input, of which the
first ``initial`` were gathered before the search).  Each piece returns the first proved pair of its
range, or none.  The repair is the one of the first piece in order that has
one, so it is the pair the search in one process finds: that search returns
the first proved pair in the same order, and a bank only rules out
candidates that really fail, so each piece's own bank changes how many
checks it makes, never which pair is first.  A piece that finds a repair
ends the pieces after it (see :mod:`sortcheck.engines.runners.distribute`).
"""

from __future__ import annotations

import functools
import time
from dataclasses import dataclass
from typing import Any

from sortcheck.engines import Budget, Options, Verdict
from sortcheck.engines.runners.pieces import job_data
from sortcheck.explain.repair_bank import Bank
from sortcheck.explain.repair_candidates import Change, _Counts, _Guide, _Space, all_candidates, guide_for, search_space
from sortcheck.explain.repair_search import CandidateSearch
from sortcheck.model import ComparatorNetwork, Property

#: The most pieces of one two-change stage.
PIECES = 256
#: Candidates a piece should try, about (0.07 s at the 1.4 million a second measured on merge exchange 16).
#: A piece on Dask costs about 7 ms; finer pieces let a repair found early end the search sooner.
CANDIDATES_PER_PIECE = 100_000


def piece_count(firsts: int, one_change_candidates: int) -> int:
    """How many pieces for ``firsts`` first changes, when the one-change stage tried ``one_change_candidates``.

    Each first change is followed by a scan of the changes after it, about
    half of one one-change stage, so the stage tries about
    ``firsts * one_change_candidates / 2`` candidates.

    >>> piece_count(1000, 20_000), piece_count(10, 20_000), piece_count(10 ** 5, 10 ** 6)
    (100, 2, 256)
    """
    estimate = firsts * one_change_candidates / 2
    return max(2, min(PIECES, firsts, round(estimate / CANDIDATES_PER_PIECE)))


@dataclass(frozen=True)
class PieceOutcome:
    """What one piece did: the proved pair it found (changes, network, verdict) or None, and its counts."""

    found: tuple[tuple[Change, ...], ComparatorNetwork, Verdict] | None
    tried: int
    verifications: int
    added: int
    undecided: int
    timed_out: bool

    @property
    def decisive(self) -> bool:
        """A piece that found a repair makes the pieces after it unneeded."""
        return self.found is not None


class TwoChangePieces:
    """The pieces of a repair's two-change stage, behind the piece interface of :mod:`sortcheck.engines.runners.pieces`."""

    name = "repair"
    cooperative = True

    def check_piece(self, netlist: ComparatorNetwork, prop: Property, piece: dict, budget: Budget,
                    options: Options = Options()) -> PieceOutcome:
        """The two-change search over the piece's range of first changes, rebuilt from the piece."""
        if piece.get("kind") != "repair-two-changes":
            raise ValueError(f"not a piece of a repair: {piece!r}")
        guide = guide_for(netlist.comparators, netlist.channels, prop, tuple(piece["counterexample"]))
        space, _ = search_space(netlist, prop, guide, int(piece["max_candidates"]))
        firsts = _first_changes(netlist.comparators, space, guide)
        start, stop = (int(bound) for bound in piece["first"])
        if len(firsts) != int(piece["of"]) or not 0 <= start < stop <= len(firsts):
            raise ValueError(f"a repair piece of first changes {start}..{stop} of {piece['of']} does not fit this "
                             f"network's {len(firsts)} first changes")
        bank = Bank(netlist.channels)
        for vector in piece["bank"]:
            bank.add([int(bit) for bit in vector])
        bank.initial = int(piece["initial"])
        counts = _Counts()
        search = CandidateSearch(netlist, prop, budget, piece["engine"], bank, counts)
        found = search.two_changes(space, guide, (start, stop), firsts)
        return PieceOutcome(found, counts.tried, counts.verifications, counts.added, counts.undecided,
                            search.timed_out)


@functools.lru_cache(maxsize=2)
def _first_changes(comparators: tuple, space: _Space, guide: _Guide) -> list:
    """The first changes in search order, kept for the next piece of the same search in this process."""
    return all_candidates(comparators, space, guide)


def two_change_pieces(search: CandidateSearch, space: _Space, guide: _Guide, counterexample: tuple[int, ...],
                      engine: str, max_candidates: int, one_change_candidates: int, pieces: int | None = None
                      ) -> list[dict]:
    """The pieces of the two-change stage of ``search``, in search order.

    ``pieces`` pieces, or as many as :func:`piece_count` gives for the
    candidates the one-change stage tried.

    >>> from sortcheck.explain.repair_bank import seed_bank
    >>> from sortcheck.model import Sorts
    >>> net = ComparatorNetwork(4, ((0, 1), (2, 3), (1, 2)))
    >>> example = (0, 1, 0, 1)
    >>> guide = guide_for(net.comparators, 4, Sorts(), example)
    >>> space, _ = search_space(net, Sorts(), guide, 10 ** 6)
    >>> search = CandidateSearch(net, Sorts(), Budget(), "auto", seed_bank(net, Sorts(), example), _Counts())
    >>> cut = two_change_pieces(search, space, guide, example, "auto", 10 ** 6, 0, pieces=4)
    >>> [piece["first"] for piece in cut], cut[0]["of"]
    ([[0, 10], [10, 21], [21, 31], [31, 42]], 42)
    """
    firsts = len(_first_changes(search.network.comparators, space, guide))  # kept for the pieces run here
    count = max(1, min(pieces or piece_count(firsts, one_change_candidates), firsts))
    bounds = [firsts * i // count for i in range(count + 1)]
    bank = ["".join(map(str, vector)) for vector in search.bank.vectors]
    return [{"kind": "repair-two-changes", "first": [bounds[i], bounds[i + 1]], "of": firsts,
             "counterexample": list(counterexample), "bank": bank, "initial": search.bank.initial,
             "engine": engine, "max_candidates": max_candidates}
            for i in range(count) if bounds[i] < bounds[i + 1]]


def split_two_changes(search: CandidateSearch, pieces: list[dict], runner) -> tuple[Any, int]:
    """Run the pieces with ``runner`` (see :mod:`sortcheck.engines.runners.distribute`); the first found pair or None.

    The counts of the pieces up to the deciding one are added to
    ``search.counts``; ``search.timed_out`` is set when a piece before any
    repair did not finish.  Also returns how many pieces there were.
    """
    engine = TwoChangePieces()
    remaining = search.budget.remaining()
    deadline = None if remaining is None else time.time() + remaining
    jobs = [job_data(engine.name, search.network, search.prop, piece, Options(), deadline) for piece in pieces]
    outcomes = runner.run(engine, jobs, search.budget, complete=False)
    for outcome in outcomes:
        if outcome is None:
            search.timed_out = True
            return None, len(pieces)
        search.counts.tried += outcome.tried
        search.counts.verifications += outcome.verifications
        search.counts.added += outcome.added
        search.counts.undecided += outcome.undecided
        if outcome.found is not None:
            return outcome.found, len(pieces)
        if outcome.timed_out:
            search.timed_out = True
            return None, len(pieces)
    return None, len(pieces)
