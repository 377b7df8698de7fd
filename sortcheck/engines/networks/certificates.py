"""Certificate material shared by the engines: claims of proved parts and their digests.

A *claim* is a JSON-ready description of one thing a proof rests on: after
the listed comparators (indices into the network, in an order valid for it),
every 0-1 vector that is sorted on each of the listed channel groups is
sorted on ``channels`` (in ``order``), or meets ``property``.  Its digest is
the SHA-256 of the canonical JSON of the network, the claim and the number of
vectors evaluated, so two runs that evaluated the same vectors of the same
network give the same digest.

>>> from sortcheck.model import ComparatorNetwork, Sorts
>>> claim = part_claim([((0,), "ascending"), ((1,), "ascending")], [0], Sorts())
>>> claim["target"]["property"]["name"], claim["comparators"]
('sorts', [0])
>>> len(claim_digest(network_digest(ComparatorNetwork(2, ((0, 1),))), claim, 4))
64
"""

from __future__ import annotations

import hashlib
import json
from typing import Any, Sequence

from sortcheck.model import ComparatorNetwork
from sortcheck.model.properties import property_from_json


def canonical(value: Any) -> bytes:
    """Canonical JSON bytes (sorted keys, no spaces)."""
    return json.dumps(value, sort_keys=True, separators=(",", ":")).encode("utf-8")


def network_digest(network: ComparatorNetwork) -> str:
    """SHA-256 of the network's channels and comparators."""
    return hashlib.sha256(canonical({"channels": network.channels,
                                     "comparators": [list(pair) for pair in network.comparators]})).hexdigest()


def part_claim(groups: Sequence[tuple[Sequence[int], str]], comparators: Sequence[int], target: Any) -> dict:
    """The claim of one check of the sat engine (``target``: a property or ``("sorted", channels, order)``)."""
    if isinstance(target, tuple):
        described: dict[str, Any] = {"channels": list(target[1]), "order": target[2]}
    else:
        described = {"property": target.to_json()}
    return {"target": described, "groups": [[list(channels), order] for channels, order in groups],
            "comparators": list(comparators)}


def claim_digest(network: str, claim: dict, vectors: int) -> str:
    """SHA-256 of a network digest, a claim and the number of vectors evaluated for it."""
    return hashlib.sha256(canonical({"network": network, "claim": claim, "vectors": vectors})).hexdigest()


def claim_label(claim: dict) -> str:
    """The claim in a few words.

    >>> claim_label({"target": {"channels": [0, 1], "order": "ascending"}, "groups": [], "comparators": [0]})
    'channels 0..1 sorted ascending after 1 comparators'
    """
    target = claim["target"]
    count = len(claim["comparators"])
    if "property" in target:
        return f"{property_from_json(target['property']).short()} after {count} comparators"
    channels = target["channels"]
    span = f"{channels[0]}..{channels[-1]}" if channels == list(range(channels[0], channels[-1] + 1)) else \
        ",".join(map(str, channels))
    return f"channels {span} sorted {target['order']} after {count} comparators"
