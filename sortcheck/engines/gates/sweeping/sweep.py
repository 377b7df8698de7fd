"""SAT sweeping: a circuit graph proved equal, signal by signal, to a reference graph on the same inputs.

:func:`sweep` rebuilds the circuit's and-inverter graph inside the
reference graph, node by node in topological order.  A circuit node whose
signature (or its complement) is that of a reference node is a *candidate*,
and is *speculatively* replaced by that reference node from then on, so the
nodes after it are rebuilt on it: every candidate leaves an *obligation*,
"the rebuilt node equals its reference node", stated on the graph in which
all the earlier candidates have been replaced.  The obligations are proved
one by one in topological order by
:class:`~sortcheck.engines.gates.sweeping.prover.EquivalenceProver`.

Why proving the obligations proves the candidates: take them in topological
order.  The first one's rebuilt node reads no replaced node, so it is the
circuit node itself.  Once the first ``k`` candidates are proved, replacing
them changes no node's function, so the rebuilt node of candidate ``k + 1``
computes what the circuit node computes, and its obligation is its
candidate.

A refuted obligation gives an input on which its candidate is really wrong
(every candidate it reads is proved, so its rebuilt node is the circuit
node).  The input is simulated on both graphs, so that every signature
learns from it, and the obligations stated on the wrong replacement (those
of the nodes that read it, directly or not) wait for the next round; the
others are still proved in this round.  An obligation left undecided by the
conflict limit is treated alike, and its candidate is not replaced again.
The next round rebuilds the graph with the candidates the refined
signatures still give.  Proved obligations are kept from round to round.

``encodings/gate-sat-sweeping.md`` gives the argument and the clauses.

>>> from sortcheck.engines.base import Budget
>>> from sortcheck.engines.gates.sweeping.aig import AndInverterGraph
>>> circuit, reference = AndInverterGraph(patterns=4), AndInverterGraph(patterns=4)
>>> a, b = circuit.add_input(0b0011), circuit.add_input(0b0101)
>>> _ = reference.add_input(0b0011), reference.add_input(0b0101)
>>> out = circuit.or_(circuit.and_(a, b ^ 1), circuit.and_(a ^ 1, b))
>>> wanted = reference.xor(a, b)
>>> result = sweep(circuit, reference, Budget())
>>> result.literal(out) == wanted, result.proved, result.rounds
(True, 1, 1)
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field
from typing import Any

from sortcheck.engines.base import Budget
from sortcheck.engines.gates.sweeping.aig import AndInverterGraph
from sortcheck.engines.gates.sweeping.prover import EquivalenceProver

#: Rounds of the sweep (each after a refuted candidate or an undecided one) before it gives up.
MAX_ROUNDS = 64


@dataclass
class Sweep:
    """The outcome of :func:`sweep`: where every circuit node went in the reference graph, and the figures.

    ``mapping[node]`` is the reference-graph literal of circuit node ``node``
    (complete only when ``finished``); ``cut_points`` are the reference nodes
    some circuit node was proved equal to.
    """

    mapping: list[int]
    prover: EquivalenceProver
    proved: int = 0
    refuted: int = 0
    undecided: int = 0
    hashed: int = 0
    rounds: int = 0
    cut_points: set[int] = field(default_factory=set)
    finished: bool = False
    timed_out: bool = False
    seconds: float = 0.0

    def literal(self, circuit_literal: int) -> int:
        """The reference-graph literal of a circuit-graph literal."""
        return self.mapping[circuit_literal >> 1] ^ (circuit_literal & 1)

    def figures(self) -> dict[str, Any]:
        return {"candidates_proved": self.proved, "candidates_refuted": self.refuted,
                "candidates_undecided": self.undecided, "merged_by_hashing": self.hashed,
                "cut_points": len(self.cut_points), "rounds": self.rounds, "seconds": round(self.seconds, 4),
                **self.prover.figures.to_json()}


def reference_index(reference: AndInverterGraph, limit: int | None = None, preferred: set[int] | None = None,
                    targets: set[int] | None = None) -> dict[int, int]:
    """For every normal signature, the earliest reference literal (below node ``limit``, and in ``targets``
    unless that is None) with it; a node in ``preferred`` comes before any other of the same signature (a
    word bit, say, before a node inside a cone that happens to compute the same).

    >>> graph = AndInverterGraph(patterns=2)
    >>> a, b = graph.add_input(0b01), graph.add_input(0b11)
    >>> inner, word = graph.and_(a, b), graph.mux(a, a, b)
    >>> index = reference_index(graph, preferred={word >> 1})
    >>> index[graph.normal(inner)[0]] == word ^ graph.normal(word)[1]
    True
    """
    index: dict[int, int] = {}
    nodes = range(1, len(reference) if limit is None else limit)
    for node in nodes if targets is None else sorted(n for n in targets if 0 < n < nodes.stop):
        signature, phase = reference.normal(2 * node)
        if signature not in index or (preferred is not None and node in preferred
                                      and index[signature] >> 1 not in preferred):
            index[signature] = 2 * node + phase
    return index


def learn(graphs: tuple[AndInverterGraph, ...], pattern: dict[int, int]) -> None:
    """Append one input pattern (input node -> bit, missing bits 0) to every graph's signatures."""
    for graph in graphs:
        graph.extend([pattern.get(node, 0) for node in graph.inputs], 1)


@dataclass(frozen=True)
class _Obligation:
    node: int
    rebuilt: int
    wanted: int


class _Sweeper:
    """The state of one :func:`sweep` (see the module text)."""

    def __init__(self, circuit: AndInverterGraph, reference: AndInverterGraph, budget: Budget,
                 prover: EquivalenceProver, preferred: set[int] | None, targets: set[int] | None,
                 grow_cut: bool = False):
        self.circuit, self.reference, self.budget, self.prover = circuit, reference, budget, prover
        self.grow_cut = grow_cut
        self.preferred, self.targets = preferred, targets
        self.limit = len(reference)
        self.proved_pairs: set[tuple[int, int]] = set()
        self.excluded: set[int] = set()
        self.fanouts: list[list[int]] | None = None
        self.result = Sweep([0] * len(circuit), prover)

    def rebuild(self) -> list[_Obligation]:
        """Rebuild the circuit with every candidate replaced; the obligations, in topological order."""
        index = reference_index(self.reference, self.limit, self.preferred, self.targets)
        mapping = self.result.mapping
        for node in self.circuit.inputs:
            mapping[node] = 2 * node
        obligations = []
        hashed = 0
        for node in range(1, len(self.circuit)):
            fanin = self.circuit.fanins[node]
            if fanin is None:
                continue
            left, right = fanin
            rebuilt = self.reference.and_(mapping[left >> 1] ^ (left & 1), mapping[right >> 1] ^ (right & 1))
            mapping[node] = rebuilt
            signature, phase = self.circuit.normal(2 * node)
            target = index.get(signature)
            if target is None or node in self.excluded:
                continue
            wanted = target ^ phase
            mapping[node] = wanted
            if rebuilt == wanted:
                hashed += 1
            else:
                obligations.append(_Obligation(node, rebuilt, wanted))
        self.result.hashed = hashed
        return obligations

    def prove(self, obligations: list[_Obligation]) -> bool:
        """Prove the obligations not proved before; False when a round must follow (some refuted or undecided).

        A refuted or undecided candidate *taints* the circuit nodes after it
        (their obligations were stated on its replacement): those are left to
        the next round, every other obligation is still proved in this one.
        """
        pending = [ob for ob in obligations if (ob.rebuilt, ob.wanted) not in self.proved_pairs]
        tainted: set[int] = set()
        settled = True
        for ob in pending:
            if ob.node in tainted:
                continue
            if self.budget.expired():
                self.result.timed_out = True
                return False
            if self.reference.value(ob.rebuilt) != self.reference.value(ob.wanted):
                status = "different"  # a pattern learnt in this round tells them apart already
            else:
                answer = self.prover.prove(ob.rebuilt, ob.wanted)
                status = answer.status
                if status == "different":
                    self._refuted(ob, answer.pattern or {})
            if status == "equal":
                self.proved_pairs.add((ob.rebuilt, ob.wanted))
                if self.grow_cut and isinstance(self.prover.cut, set):
                    self.prover.cut.add(ob.wanted >> 1)  # later windows may stop at it
                continue
            settled = False
            if status == "different":
                self.result.refuted += 1
            else:
                self.result.undecided += 1
                self.excluded.add(ob.node)
            self._taint(ob.node, tainted)
        return settled

    def _refuted(self, obligation: _Obligation, pattern: dict[int, int]) -> None:
        """Learn the input that refutes ``obligation``: every signature of both graphs gets its bit."""
        learn((self.circuit, self.reference), pattern)

    def _taint(self, node: int, tainted: set[int]) -> None:
        """Add ``node`` and every circuit node that reads it, directly or not, to ``tainted``."""
        if self.fanouts is None:
            self.fanouts = [[] for _ in range(len(self.circuit))]
            for reader in range(len(self.circuit)):
                for literal in self.circuit.fanins[reader] or ():
                    self.fanouts[literal >> 1].append(reader)
        stack = [node]
        while stack:
            current = stack.pop()
            if current not in tainted:
                tainted.add(current)
                stack.extend(self.fanouts[current])


def sweep(circuit: AndInverterGraph, reference: AndInverterGraph, budget: Budget,
          prover: EquivalenceProver | None = None, preferred: set[int] | None = None,
          targets: set[int] | None = None, grow_cut: bool = False) -> Sweep:
    """Rebuild ``circuit`` in ``reference`` with every provable candidate merged (see the module text).

    Both graphs must have the same inputs, made first and in the same order,
    and signatures on the same patterns.  The reference nodes that exist when
    the sweep starts and are in ``targets`` (None: all of them) are the
    candidates' targets; of several with one signature, one in ``preferred``
    is taken first.  With ``grow_cut`` every reference node proved equal to a
    circuit node becomes a cut point of the prover's windows (for two
    netlists of one design, whose equalities are local).
    """
    started = time.perf_counter()
    if circuit.inputs != reference.inputs[:len(circuit.inputs)]:
        raise ValueError("the two graphs must share their inputs")
    prover = prover or EquivalenceProver(reference, budget, cut=set(preferred or ()))
    state = _Sweeper(circuit, reference, budget, prover, preferred, targets, grow_cut)
    result = state.result
    while result.rounds < MAX_ROUNDS:
        result.rounds += 1
        obligations = state.rebuild()
        if state.prove(obligations):
            result.finished = True
            result.proved = len(obligations)
            result.cut_points = {result.mapping[node] >> 1 for node in range(len(circuit))
                                 if circuit.fanins[node] is not None and result.mapping[node] >> 1 < state.limit}
            break
        if result.timed_out:
            break
    result.seconds = time.perf_counter() - started
    return result
