"""Write models back as netlist format version 1 (the inverse of parsing).

Comparator networks are written one layer per line, so a diff of two
networks reads layer by layer; gate circuits one gate per line.  A written
layer is a run of consecutive comparators on distinct channels, so reading
the file back gives the comparators in their original order (the greedy
layers of :attr:`ComparatorNetwork.layers` may reorder comparators on
disjoint channels, which would change the network as a value).
"""

from __future__ import annotations

import json
import os
from pathlib import Path

from sortcheck.model import ComparatorNetwork, GateCircuit, Netlist


def _header(netlist: Netlist, kind: str) -> list[str]:
    lines = ['  "sortcheck": 1', f'  "kind": {json.dumps(kind)}']
    for key in ("name", "description"):
        value = getattr(netlist, key)
        if value is not None:
            lines.append(f"  {json.dumps(key)}: {json.dumps(value)}")
    if netlist.claim is not None:
        lines.append(f'  "property": {json.dumps(netlist.claim.to_json())}')
    return lines


def _runs(comparators: tuple[tuple[int, int], ...]) -> list[list[tuple[int, int]]]:
    """Split comparators, in order, into runs in which no channel occurs twice.

    >>> _runs(((0, 1), (2, 3), (1, 2), (3, 4)))
    [[(0, 1), (2, 3)], [(1, 2), (3, 4)]]
    >>> _runs(((0, 1), (1, 2), (3, 4)))
    [[(0, 1)], [(1, 2), (3, 4)]]
    """
    runs: list[list[tuple[int, int]]] = []
    used: set[int] = set()
    for a, b in comparators:
        if not runs or a in used or b in used:
            runs.append([])
            used = set()
        runs[-1].append((a, b))
        used.update((a, b))
    return runs


def _block(key: str, rows: list[str]) -> str:
    if not rows:
        return f'  "{key}": []'
    return f'  "{key}": [\n' + ",\n".join(f"    {row}" for row in rows) + "\n  ]"


def dump_netlist(netlist: Netlist) -> str:
    """Return the netlist as the text of a format version 1 file.

    >>> from sortcheck.load import parse_netlist
    >>> net = ComparatorNetwork(3, ((0, 1), (1, 2), (0, 1)), name="three")
    >>> parse_netlist(dump_netlist(net)) == net
    True
    """
    if isinstance(netlist, ComparatorNetwork):
        lines = _header(netlist, "comparator-network") + [f'  "channels": {netlist.channels}']
        lines.append(_block("layers", [json.dumps([list(pair) for pair in layer])
                                       for layer in _runs(netlist.comparators)]))
    elif isinstance(netlist, GateCircuit):
        lines = _header(netlist, "gate-circuit")
        lines.append(_block("inputs", [json.dumps({"name": w.name, "width": w.width}) for w in netlist.inputs]))
        lines.append(_block("gates", [json.dumps({"out": g.out, "op": g.op, "in": list(g.inputs)})
                                      for g in netlist.gates]))
        lines.append(_block("outputs", [json.dumps({"name": w.name, "bits": list(w.bits)})
                                        for w in netlist.outputs]))
    else:
        raise TypeError(f"not a netlist: {type(netlist).__name__}")
    return "{\n" + ",\n".join(lines) + "\n}\n"


def write_netlist(netlist: Netlist, path: str | os.PathLike) -> None:
    """Write the netlist to ``path`` as UTF-8 JSON."""
    Path(path).write_text(dump_netlist(netlist), encoding="utf-8")
