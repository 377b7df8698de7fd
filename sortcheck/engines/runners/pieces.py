"""Checks split into pieces: piece jobs as plain data, and piece verdicts combined.

An engine that can split a check offers, beside ``check``:

``pieces(netlist, prop, options) -> list[dict] | None``
    independent pieces in a fixed, deterministic order, each a small
    JSON-ready dict; together they cover exactly what ``check`` covers.
    None when the check does not split (or is too small to be worth it).
``check_piece(netlist, prop, piece, budget, options) -> Verdict``
    the check restricted to one piece: proved (the piece is covered),
    refuted (with a counterexample re-checked against the reference
    semantics) or unknown (with a stop reason).

It may also offer ``whole_verdict(netlist, prop, verdict, options) ->
Verdict``, which rewrites the combined verdict (scope, figures) in the words
of a single check.

An engine whose check runs steps of its own before the part that splits
(``auto`` for gate circuits: simulation and lifting, then threshold SAT)
offers instead ``staged(netlist, prop, budget, options) -> Verdict |
Staged``: it runs those steps in the calling process and returns their
verdict when they decide (or when the rest does not split, after running it
whole), else a :class:`Staged` with the pieces of the rest, or a
:class:`Race` of whole strategies to run side by side (the first to decide
ends the others); the ``finish`` of either may return the next of them.

A *job* is what a worker needs to run one piece, as plain data: the engine's
name, the netlist as format v1 text (:func:`sortcheck.load.write.dump_netlist`),
the property's JSON, the piece, the options and the wall-clock deadline
(``time.time()``, so it holds on every host of a cluster with synchronised
clocks).  :func:`combine` turns the piece verdicts into one verdict whatever
order the pieces finished in.
"""

from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Any, Callable, Sequence

from sortcheck.engines.base import Budget, Options, Status, StopReason, Verdict
from sortcheck.load import dump_netlist, parse_netlist
from sortcheck.model import Netlist, Property, property_from_json

#: Parsed netlists kept per process (workers receive the same netlist for every piece).
_PARSED_LIMIT = 4
_parsed: dict[str, Netlist] = {}


@dataclass(frozen=True)
class Staged:
    """The rest of a staged check as pieces: the engine whose pieces they are, and how to finish.

    ``finish`` turns the combined verdict of the pieces into the check's
    verdict (with what the steps before them did), or into what to run next.
    """

    engine: Any
    pieces: list[dict]
    finish: Callable[[Verdict], "Verdict | Staged | Race"]


@dataclass(frozen=True)
class Race:
    """Strategies of a staged check run side by side: the first to decide (proved or refuted) ends the others.

    Each piece is one whole strategy for the same check (not a part of it),
    so any piece's decisive verdict is the check's.  ``finish`` gets every
    piece's verdict (None: stopped or not started) and returns the check's
    verdict, or what to run next.
    """

    engine: Any
    pieces: list[dict]
    finish: Callable[[list["Verdict | None"]], "Verdict | Staged | Race"]


def job_data(engine: str, netlist: Netlist, prop: Property, piece: dict, options: Options,
             deadline: float | None) -> dict[str, Any]:
    """One piece job as plain data.

    >>> from sortcheck.model import ComparatorNetwork, Sorts
    >>> job = job_data("enumerate", ComparatorNetwork(2, ((0, 1),)), Sorts(), {"kind": "block"}, Options(), None)
    >>> sorted(job), job["property"]["name"]
    (['deadline', 'engine', 'netlist', 'options', 'piece', 'property'], 'sorts')
    """
    return {"engine": engine, "netlist": dump_netlist(netlist), "property": prop.to_json(), "piece": dict(piece),
            "options": {"width": options.width, "count": options.count, "certify": options.certify}, "deadline": deadline}


def remember_netlist(text: str, netlist: Netlist) -> None:
    """Let :func:`netlist_of` answer ``text`` with ``netlist`` in this process and in workers forked after it.

    Parsing a large gate circuit's text costs seconds; the process that wrote
    the text already holds the netlist.
    """
    if text not in _parsed and len(_parsed) >= _PARSED_LIMIT:
        _parsed.pop(next(iter(_parsed)))
    _parsed[text] = netlist


def netlist_of(text: str) -> Netlist:
    """The netlist of a job's text, parsed once per process."""
    netlist = _parsed.get(text)
    if netlist is None:
        netlist = parse_netlist(text, source="<piece job>")
        if len(_parsed) >= _PARSED_LIMIT:
            _parsed.pop(next(iter(_parsed)))
        _parsed[text] = netlist
    return netlist


def job_from_data(data: dict[str, Any]) -> tuple[str, Netlist, Property, dict, Options, float | None]:
    """The inverse of :func:`job_data`: engine name, netlist, property, piece, options, deadline.

    >>> from sortcheck.model import ComparatorNetwork, Sorts
    >>> net = ComparatorNetwork(2, ((0, 1),))
    >>> job_from_data(job_data("enumerate", net, Sorts(), {"kind": "block"}, Options(count=True), None))[1:5] == (
    ...     net, Sorts(), {"kind": "block"}, Options(count=True))
    True
    """
    settings = data["options"]
    options = Options(width=settings["width"], count=settings["count"], certify=settings.get("certify", False))
    return (data["engine"], netlist_of(data["netlist"]), property_from_json(data["property"]), data["piece"], options,
            data["deadline"])


def run_job(engine, data: dict[str, Any], stopped=None) -> Verdict:
    """Run one piece job with ``engine`` (an engine object with ``check_piece``) in this process.

    ``stopped`` is an extra stop condition for the piece's budget (see
    :class:`~sortcheck.engines.base.Budget`).
    """
    _, netlist, prop, piece, options, deadline = job_from_data(data)
    timeout = None if deadline is None else max(0.0, deadline - time.time())
    return engine.check_piece(netlist, prop, piece, Budget.of(timeout, stopped=stopped), options)


def decisive(result: Any, race: bool) -> bool:
    """Whether a piece's result ends the run: :func:`decides`, or in a race any proved or refuted verdict."""
    if race and isinstance(result, Verdict):
        return result.status in (Status.PROVED, Status.REFUTED)
    return decides(result)


def decides(result: Any) -> bool:
    """Whether a piece's result makes the pieces after it unneeded: a refuted verdict, or a result that says so.

    Runners run any object with ``name`` and ``check_piece``; a result that
    is not a :class:`Verdict` (a piece of a repair search) says whether it
    decides through its ``decisive`` attribute.

    >>> from sortcheck.model import Sorts
    >>> decides(Verdict(Status.PROVED, "enumerate", Sorts(), StopReason.COVERED, "piece", 0.1, None, {}))
    False
    """
    if isinstance(result, Verdict):
        return result.status is Status.REFUTED
    return bool(getattr(result, "decisive", False))


def sum_figures(figures: Sequence[dict[str, Any]]) -> dict[str, Any]:
    """Figures of several pieces as one: numbers summed, other values (and those named in ``"shared"``) from the first.

    ``seconds`` is summed into ``piece_seconds`` (the time the pieces took
    together); the combined verdict's own ``seconds`` is its wall time.

    >>> sum_figures([{"blocks": 2, "kernel": "numpy", "largest_set": 9, "shared": ["largest_set"]},
    ...              {"blocks": 3, "kernel": "numpy", "largest_set": 9, "shared": ["largest_set"]}])
    {'blocks': 5, 'kernel': 'numpy', 'largest_set': 9}
    """
    combined: dict[str, Any] = {}
    for one in figures:
        shared = set(one.get("shared", ()))
        for key, value in one.items():
            if key == "shared":
                continue
            name = "piece_seconds" if key == "seconds" else key
            additive = isinstance(value, (int, float)) and not isinstance(value, bool) and key not in shared
            if name not in combined:
                combined[name] = value
            elif additive and isinstance(combined[name], (int, float)):
                combined[name] += value
    return combined


def combine(engine: str, prop: Property, verdicts: Sequence[Verdict | None], ran_on: str, seconds: float,
            complete: bool = False) -> Verdict:
    """One verdict from the verdicts of the pieces, in piece order (None: the piece did not finish).

    Refuted if any piece is refuted, with the counterexample of the first
    refuted piece in piece order; proved if every piece is proved; else
    unknown.  Figures are summed over the pieces up to the first refuted one
    (the later ones were cancelled, so the sums do not depend on scheduling),
    or over every piece when ``complete`` (every piece runs to its end, as for
    counting); ``figures["pieces"]`` and ``figures["ran_on"]`` are recorded.

    >>> from sortcheck.model import Sorts
    >>> proved = Verdict(Status.PROVED, "enumerate", Sorts(), StopReason.COVERED, "piece", 0.1, None, {"blocks": 1})
    >>> verdict = combine("enumerate", Sorts(), [proved, proved], "this process", 0.3)
    >>> verdict.status.value, verdict.figures
    ('proved', {'blocks': 2, 'pieces': 2, 'ran_on': 'this process'})
    >>> combine("enumerate", Sorts(), [proved, None], "this process", 0.3).status.value
    'unknown'
    """
    total = len(verdicts)
    refuted = next((i for i, v in enumerate(verdicts) if v is not None and v.status == Status.REFUTED), None)
    counted = verdicts if complete or refuted is None else verdicts[:refuted + 1]
    figures = sum_figures([v.figures for v in counted if v is not None])
    unfinished = sum(1 for v in verdicts if v is None or v.status == Status.UNKNOWN)
    if complete and unfinished:
        figures["pieces_unfinished"] = unfinished
    figures.update({"pieces": total, "ran_on": ran_on})
    where = f"{total} pieces on {ran_on}"
    if refuted is not None:
        piece = verdicts[refuted]
        scope = f"{piece.scope} (found in piece {refuted + 1} of {where})"
        return Verdict(Status.REFUTED, engine, prop, StopReason.COUNTEREXAMPLE, scope, seconds, piece.counterexample,
                       figures)
    if not unfinished:
        scope = f"every one of the {where} was proved, and together the pieces cover the whole check"
        return Verdict(Status.PROVED, engine, prop, StopReason.COVERED, scope, seconds, None, figures)
    stops = [v.stop for v in verdicts if v is not None and v.status == Status.UNKNOWN]
    stop = stops[0] if stops else StopReason.TIMEOUT
    scope = (f"{total - unfinished} of the {where} were proved and {unfinished} did not finish "
             f"({stop.describe()}); nothing is proved")
    return Verdict(Status.UNKNOWN, engine, prop, stop, scope, seconds, None, figures)
