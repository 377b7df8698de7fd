"""Equalities of literals of an and-inverter graph, proved by one incremental SAT solver.

:class:`EquivalenceProver` keeps one solver for a graph.  A node's three
clauses (``n -> a``, ``n -> b``, ``a and b -> n``) are given to it the first
time a question reaches the node, so the solver holds exactly the cones that
questions have asked about, down to the graph's inputs, and keeps what it
learnt between questions.  Every question is exact: nothing is cut loose,
so a model is an input on which two literals really differ.

:meth:`EquivalenceProver.prove_all` asks whether every pair of a batch is
equal at once: a fresh variable ``d_k <-> (x_k XOR y_k)`` per pair and one
clause ``a -> d_1 or ... or d_m`` under a fresh assumption ``a``.
Unsatisfiable proves the whole batch.  A model gives the input of one real counterexample.  Each call
has a conflict limit, so a hard batch is reported undecided instead of
holding up the rest.  ``encodings/gate-sat-sweeping.md`` gives the clauses.

>>> from sortcheck.engines.gates.sweeping.aig import AndInverterGraph
>>> from sortcheck.engines.base import Budget
>>> graph = AndInverterGraph(patterns=1)
>>> a, b = graph.add_input(0), graph.add_input(0)
>>> left = graph.or_(graph.and_(a, b ^ 1), graph.and_(a ^ 1, b))
>>> prover = EquivalenceProver(graph, Budget())
>>> prover.prove(left, graph.xor(a, b)).status, prover.prove(left, graph.or_(a, b)).status
('equal', 'different')
>>> prover.prove(left, graph.or_(a, b)).pattern
{1: 1, 2: 1}
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Iterable, Sequence

from pysat.solvers import Solver

from sortcheck.engines.base import Budget
from sortcheck.engines.gates.sweeping.aig import AndInverterGraph, cone
from sortcheck.engines.solving import solve_interruptibly

#: Conflicts allowed to one SAT call (a batch, or one pair).
CONFLICTS = 100_000
#: Windows larger than this many AND nodes are not tried: the question goes to the whole cones at once.
WINDOW_NODES = 2_000
#: glucose 4, which python-sat can interrupt (the deadline holds inside a call).
SOLVER = "glucose4"


@dataclass(frozen=True)
class Answer:
    """``status`` is ``equal``, ``different`` (``pattern``: input node -> bit, an input on which the literals
    differ; inputs it leaves out may take any value) or ``undecided`` (the conflict limit or the budget)."""

    status: str
    pattern: dict[int, int] | None = None


@dataclass
class ProverFigures:
    """SAT calls and their outcomes over the prover's life."""

    sat_calls: int = 0
    window_calls: int = 0
    windows_undecided: int = 0
    pairs_asked: int = 0
    loaded_nodes: int = 0
    undecided_calls: int = 0

    def to_json(self) -> dict[str, int]:
        return dict(vars(self))


@dataclass
class EquivalenceProver:
    """Prove or refute literal equalities in ``graph`` (see the module text)."""

    graph: AndInverterGraph
    budget: Budget
    conflicts: int = CONFLICTS
    #: Nodes a window takes as free (the natural cut, such as the bits of a network's words, or nodes proved
    #: equal to others so far); empty: no windows.  The caller may add to it between questions.
    cut: set[int] | frozenset[int] = frozenset()
    figures: ProverFigures = field(default_factory=ProverFigures)
    _solver: Solver | None = None
    _variables: dict[int, int] = field(default_factory=dict)
    _count: int = 1  # variable 1 is the constant false

    def close(self) -> None:
        """Free the solver."""
        if self._solver is not None:
            self._solver.delete()
            self._solver = None

    def prove(self, left: int, right: int) -> Answer:
        """Whether literals ``left`` and ``right`` are equal on every input."""
        if left == right:
            return Answer("equal")
        if left == right ^ 1:
            return Answer("different", {})
        return self.prove_all([(left, right)])

    def prove_all(self, pairs: Sequence[tuple[int, int]]) -> Answer:
        """Whether every pair of literals is equal on every input, in one SAT call (a lone pair is asked of
        its window first)."""
        pairs = [(left, right) for left, right in pairs if left != right]
        if not pairs:
            return Answer("equal")
        if len(pairs) == 1 and self.cut:
            answer = self._window(*pairs[0])
            if answer is not None:
                return answer
        solver = self._load(literal for pair in pairs for literal in pair)
        differences = []
        for left, right in pairs:
            x, y, d = self._literal(left), self._literal(right), self._fresh()
            for clause in ([-d, x, y], [-d, -x, -y], [d, -x, y], [d, x, -y]):
                solver.add_clause(clause)
            differences.append(d)
        switch = self._fresh()
        solver.add_clause([-switch, *differences])
        self.figures.sat_calls += 1
        self.figures.pairs_asked += len(pairs)
        # No unit clauses are added after the call ("not switch", "not d"): each unit makes the solver
        # simplify its whole clause database at the next call, which costs more than they save.
        found = self._solve([switch])
        if found is None:
            self.figures.undecided_calls += 1
            return Answer("undecided")
        if not found:
            return Answer("equal")
        true = {literal for literal in solver.get_model() if literal > 0}
        return Answer("different", {node: int(self._variables[node] in true)
                                    for node in self.graph.inputs if node in self._variables})

    # --- the window ---------------------------------------------------------------------------

    def _window(self, left: int, right: int) -> Answer | None:
        """Equal by the window (the cone back to the cut points, which are free), or None.

        Unsatisfiable means equal for every value of the cut points, so for the
        values the inputs give them.  A model is a real counterexample only when
        every free leaf is an input; otherwise (or when the window is larger than
        :data:`WINDOW_NODES`) the question goes to the whole cones.
        """
        nodes, leaves = cone(self.graph, (left, right), _CutBut(self.cut, (left >> 1, right >> 1)))
        if len(nodes) > WINDOW_NODES:
            return None
        numbers: dict[int, int] = {0: 1}
        for node in leaves:
            numbers[node] = len(numbers) + 1
        fanins = self.graph.fanins
        clauses = [[-1]]
        for node in nodes:
            output = numbers[node] = len(numbers) + 1
            first, second = fanins[node]
            a, b = numbers[first >> 1], numbers[second >> 1]
            if first & 1:
                a = -a
            if second & 1:
                b = -b
            clauses.append([-output, a])
            clauses.append([-output, b])
            clauses.append([output, -a, -b])
        difference = len(numbers) + 1
        x, y = _numbered(left, numbers), _numbered(right, numbers)
        clauses += [[-difference, x, y], [-difference, -x, -y], [difference, -x, y], [difference, x, -y]]
        self.figures.window_calls += 1
        with Solver(name=SOLVER, bootstrap_with=clauses) as solver:
            solver.conf_budget(self.conflicts)
            found = solve_interruptibly(solver, [difference], self.budget.remaining())
            model = solver.get_model() if found else None
        if found is False:
            return Answer("equal")
        if found and all(self.graph.fanins[leaf] is None for leaf in leaves):
            true = {literal for literal in model if literal > 0}
            return Answer("different", {leaf: int(numbers[leaf] in true) for leaf in leaves})
        self.figures.windows_undecided += 1
        return None

    # --- the solver ---------------------------------------------------------------------------

    def _fresh(self) -> int:
        self._count += 1
        return self._count

    def _literal(self, literal: int) -> int:
        variable = 1 if literal >> 1 == 0 else self._variables[literal >> 1]
        return -variable if literal & 1 else variable

    def _load(self, roots: Iterable[int]) -> Solver:
        """The solver, given the clauses of every node of the roots' cones that it does not have yet."""
        if self._solver is None:
            self._solver = Solver(name=SOLVER, bootstrap_with=[[-1]])
        nodes, leaves = cone(self.graph, roots, self._variables.keys())
        for leaf in leaves:
            if leaf not in self._variables:
                self._variables[leaf] = self._fresh()
        fanins = self.graph.fanins
        add = self._solver.add_clause
        for node in nodes:
            output = self._variables[node] = self._fresh()
            first, second = fanins[node]
            a, b = self._literal(first), self._literal(second)
            add([-output, a])
            add([-output, b])
            add([output, -a, -b])
        self.figures.loaded_nodes = len(self._variables)
        return self._solver

    def _solve(self, assumptions: list[int]) -> bool | None:
        """The solver's answer; None when the conflict limit or the budget ran out first."""
        if self.budget.expired():
            return None
        self._solver.conf_budget(self.conflicts)
        return solve_interruptibly(self._solver, assumptions, self.budget.remaining())


def _numbered(literal: int, numbers: dict[int, int]) -> int:
    variable = numbers[literal >> 1]
    return -variable if literal & 1 else variable


class _CutBut:
    """The nodes of ``cut`` but ``roots`` (a view: the cut is not copied for every window)."""

    def __init__(self, cut: set[int] | frozenset[int], roots: tuple[int, ...]):
        self.cut, self.roots = cut, roots

    def __contains__(self, node: int) -> bool:
        return node in self.cut and node not in self.roots
