"""Suspect gates of a gate circuit: which single gate may be at fault, with the evidence for it.

Suspects are ranked: first the gates whose op can change so that every copy
of the repair search is right, then those for which some Boolean function
of the gate's inputs makes every copy right, then by how many failing
copies flipping the gate's value alone would fix, then by the distance (in
gates) to the nearest wrong output bit, then in file order.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Any

import networkx as nx

from sortcheck.engines import Budget
from sortcheck.explain.gate_flips import flip_counts
from sortcheck.model import GateCircuit, Property


def gate_place(index: int, line: int | str | None) -> str:
    """Where a gate is: its place in the netlist, and its line there or its ``file:line`` in a design.

    >>> gate_place(3, 20), gate_place(3, "sorter.v:14"), gate_place(3, None)
    ('gates[3], line 20', 'gates[3], from sorter.v:14', 'gates[3]')
    """
    if line is None:
        return f"gates[{index}]"
    return f"gates[{index}], line {line}" if isinstance(line, int) else f"gates[{index}], from {line}"


def place_json(line: int | str | None) -> dict:
    """``{"line": N}`` for a line of the netlist file, ``{"line": None, "source": "file:line"}`` for a design."""
    return {"line": line} if not isinstance(line, str) else {"line": None, "source": line}


@dataclass(frozen=True)
class Suspect:
    """A gate that may be at fault, with the evidence for it.

    ``ops`` lists the other ops that make every copy right when this gate
    alone takes them; ``function`` says some Boolean function of the gate's
    inputs does; ``explains`` counts the failing copies that flipping the
    gate's value alone would fix (None when not computed); ``distance`` is
    the fewest gates from it to a wrong output bit.
    """

    gate: str
    index: int
    op: str
    line: int | None
    ops: tuple[str, ...]
    function: bool
    explains: int | None
    distance: int | None

    def rank_key(self) -> tuple:
        return (not self.ops, not self.function, -(self.explains or 0),
                self.distance if self.distance is not None else 1 << 30, self.index)

    def describe(self) -> str:
        where = gate_place(self.index, self.line)
        if self.ops:
            evidence = f"as {' or '.join(self.ops)} it gets every tried input right"
        elif self.function:
            evidence = "some function of its inputs gets every tried input right (no single op does)"
        else:
            evidence = "no change of this gate alone gets every tried input right"
        if self.explains is not None:
            evidence += f"; flipping it fixes {self.explains} failing input(s)"
        if self.distance is not None:
            evidence += f"; {self.distance} gate(s) from a wrong output bit"
        return f"{self.gate!r} ({self.op}, {where}): {evidence}"

    def to_json(self) -> dict[str, Any]:
        return {"gate": self.gate, "index": self.index, "op": self.op, **place_json(self.line), "ops": list(self.ops),
                "function": self.function, "explains": self.explains, "distance": self.distance}


def distances_to(circuit: GateCircuit, wrong: set[str]) -> dict[str, int]:
    """The fewest gates from each signal to one of the ``wrong`` signals (0 for those themselves).

    >>> from sortcheck.model import Gate, OutputWord, Word
    >>> circuit = GateCircuit((Word("a", 1),), (Gate("t", "not", ("a[0]",)), Gate("y", "not", ("t",))),
    ...     (OutputWord("o", ("y",)),))
    >>> distances_to(circuit, {"y"})
    {'y': 0, 't': 1, 'a[0]': 2}
    """
    if not wrong:
        return {}
    return dict(nx.multi_source_dijkstra_path_length(circuit.graph.reverse(copy=False), wrong))


def rank_suspects(circuit: GateCircuit, prop: Property, search, cone: list[str],
              failing: list[tuple[int, ...]], wrong: set[str], budget: Budget, options,
              index: dict, lines) -> list[Suspect]:
    """Every replaceable gate of the cone judged alone on all copies of ``search``, ranked.

    ``search`` is the repair search (:mod:`sortcheck.explain.gate_repair`):
    its ``cnf``, its ``solve(assumptions, budget)`` and ``at_most(count)``;
    ``options`` gives ``flip_evaluations`` and ``suspects`` (how many to keep);
    ``index`` maps gate names to their place in the file, ``lines`` to their
    lines (looked up only for the suspects kept).
    """
    cnf = search.cnf
    one = search.at_most(1)
    names = [name for name in cone if name in cnf.selectors]
    distances = distances_to(circuit, wrong)
    flips = flip_counts(circuit, prop, failing, names, options.flip_evaluations)
    found = []
    for name in names:
        selector = cnf.selectors[name]
        function = search.solve([selector, *one], budget) if not budget.expired() else None
        ops: list[str] = []
        if function:
            blocked: list[int] = []
            while search.solve([selector, cnf.ops_only, *one, *blocked], budget):
                op = cnf.chosen_ops(search.solver.get_model())[name]
                ops.append(op)
                blocked.append(-cnf.choices[name][op])
        gate = cnf.gates[name]
        found.append(Suspect(name, index[name], gate.op, None, tuple(sorted(ops)), bool(function),
                             flips.get(name), distances.get(name)))
    found.sort(key=Suspect.rank_key)
    return [replace(suspect, line=lines[suspect.gate]) for suspect in found[:options.suspects]]
