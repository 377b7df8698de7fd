"""Repair a gate circuit by changing the ops of the fewest gates, every repair proved; rank suspect gates.

The search works on *copies*: the circuit on concrete inputs, some it gets
wrong (the first counterexample and failing inputs found by simulation of
seeded random inputs and of the counterexample's one-bit neighbours), some
it gets right.  :class:`~sortcheck.explain.gate_repair_cnf.RepairCnf` gives
every gate in the fan-in of a wrong output bit a selector ("replaced") and a
truth table; the hard clauses say every copy meets the property.  A
cardinality constraint (a totalizer over the selectors) bounds the number of
replaced gates, and the bound is raised from 1 until the clauses are
satisfiable: the first satisfiable bound is the least number of gates to
change, the optimum of the MaxSAT problem whose soft clauses are "gate g is
kept" (solved this way rather than with a core-guided MaxSAT solver because
glucose can be interrupted, so the time budget holds).

CEGAR: a model asking only ops of the format (same inputs, another op) is
turned into a changed circuit and checked on every input with
:func:`sortcheck.engines.check`; a counterexample becomes a new copy and the
solver runs again.  Only a circuit the check *proves* is offered, with
``verified`` true.  Since every copy is a real input, "no model" means no
op change of at most that many of the searched gates repairs the circuit
at all (for one change the searched gates are the fan-in of the wrong
output bits, outside which no single gate can change them; for more, every
gate of at most four inputs).

Suspects (:mod:`sortcheck.explain.gate_suspects`) rank single gates,
whether or not an op change repairs the circuit:
first the gates whose op can change so that every copy is right, then those
for which some Boolean function of the gate's inputs makes every copy right,
then by how many failing copies flipping the gate's value alone would fix,
then by the distance (in gates) to the nearest wrong output bit.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, replace
from typing import Any, Sequence

import networkx as nx
from pysat.card import ITotalizer
from pysat.solvers import Solver

from sortcheck.engines import Budget, Status, StopReason, Verdict, check
from sortcheck.engines.solving import INTERRUPTIBLE_SOLVER
from sortcheck.explain.gate_flips import wrong_bits
from sortcheck.explain.gate_inputs import CircuitFailures, random_raw_inputs, solve_in_budget, to_raw, to_values
from sortcheck.explain.gate_repair_cnf import MAX_TABLE_INPUTS, RepairCnf
from sortcheck.explain.gate_suspects import gate_place, place_json
from sortcheck.explain.gate_suspects import Suspect, rank_suspects
from sortcheck.explain.repair import RepairOutcome
from sortcheck.load.locate import line_of
from sortcheck.model import DEFAULT_PROPERTY, GateCircuit, Merges, Property, check_fits


@dataclass(frozen=True)
class GateChange:
    """One gate of the circuit takes another op (same output, same inputs).

    >>> GateChange("c3_lo1", 12, "or", "and", 20).describe()
    "change gate 'c3_lo1' (gates[12], line 20) from and to or"
    """

    gate: str
    index: int
    op: str
    replaced: str
    line: int | str | None = None  # the line in the netlist file, or the design's ``file:line``
    kind = "op"

    def describe(self) -> str:
        return f"change gate {self.gate!r} ({gate_place(self.index, self.line)}) from {self.replaced} to {self.op}"

    def to_json(self) -> dict[str, Any]:
        return {"kind": self.kind, "gate": self.gate, "index": self.index, "op": self.op,
                "replaced": self.replaced, **place_json(self.line)}


@dataclass(frozen=True)
class GateRepairOptions:
    """Tuning of the search; none of it changes whether a verified repair is correct.

    ``failing`` and ``passing`` are the initial copies of each kind, chosen
    among ``samples`` seeded random inputs (and the counterexample's one-bit
    neighbours); ``max_rounds`` bounds the CEGAR rounds; ``suspects`` how many
    are reported; ``flip_evaluations`` bounds the gate evaluations spent on
    the flip counts.
    """

    failing: int = 12
    passing: int = 12
    samples: int = 4096
    max_rounds: int = 200
    suspects: int = 10
    flip_evaluations: int = 2_000_000
    seed: int = 0
    engine: str = "auto"


@dataclass(frozen=True)
class GateRepairOutcome(RepairOutcome):
    """What :func:`repair_circuit` found: the network repair's outcome (``network`` is the repaired
    circuit, ``changes`` are :class:`GateChange`), plus the ranked suspect gates."""

    suspects: tuple[Suspect, ...] = ()

    def to_json(self) -> dict[str, Any]:
        return {**super().to_json(), "suspects": [suspect.to_json() for suspect in self.suspects]}


def change_ops(circuit: GateCircuit, ops: dict[str, str]) -> GateCircuit:
    """The circuit with the gates named in ``ops`` taking the ops given (name, description and claim kept).

    >>> from sortcheck.model import Gate, OutputWord, Word
    >>> circuit = GateCircuit((Word("a", 1),), (Gate("y", "not", ("a[0]",)),), (OutputWord("o", ("y",)),))
    >>> change_ops(circuit, {"y": "and"}).gates
    (Gate(out='y', op='and', inputs=('a[0]',)),)
    """
    gates = tuple(replace(gate, op=ops[gate.out]) if gate.out in ops else gate for gate in circuit.gates)
    return replace(circuit, gates=gates)


class _Search:
    """The copies, the incremental solver and the bound on replaced gates."""

    def __init__(self, circuit: GateCircuit, prop: Property, candidates: Sequence[str], max_changes: int):
        self.cnf = RepairCnf(circuit, prop, candidates)
        self.solver = Solver(name=INTERRUPTIBLE_SOLVER)
        self.fed = 0
        selectors = list(self.cnf.selectors.values())
        self.bound: list[int] = []
        if selectors:
            pool = self.cnf.builder.pool
            totalizer = ITotalizer(lits=selectors, ubound=max(1, max_changes), top_id=pool.top)
            pool.top = totalizer.top_id
            self.cnf.builder.clauses.extend(totalizer.cnf.clauses)
            self.bound = list(totalizer.rhs)

    def at_most(self, count: int) -> list[int]:
        """The assumption that at most ``count`` gates are replaced."""
        return [-self.bound[count]] if count < len(self.bound) else []

    def add(self, raw: Sequence[int]) -> None:
        self.cnf.add_copy(raw)

    def feed(self) -> None:
        clauses = self.cnf.builder.clauses
        self.solver.append_formula(clauses[self.fed:])
        self.fed = len(clauses)

    def solve(self, assumptions: Sequence[int], budget: Budget) -> bool | None:
        self.feed()
        return solve_in_budget(self.solver, assumptions, budget)

    def close(self) -> None:
        self.solver.delete()


def _bank(circuit: GateCircuit, prop: Property, first: tuple[int, ...], failures: CircuitFailures,
          options: GateRepairOptions) -> tuple[list[tuple[int, ...]], list[tuple[int, ...]]]:
    """Failing copies (the counterexample first) and passing copies, from neighbours and random inputs."""
    neighbours = [first[:k] + (first[k] ^ (1 << i),) + first[k + 1:]
                  for k in range(circuit.words) for i in range(circuit.width)]
    randoms = random_raw_inputs(circuit.words, circuit.width, options.samples, options.seed)
    if isinstance(prop, Merges):  # only inputs with two ascending runs are in scope
        randoms = [_as_runs(raw, prop, circuit.width) for raw in randoms]
    pool = list(dict.fromkeys(neighbours + randoms))
    flags = failures.failing(pool)
    failing = [first] + [raw for raw, bad in zip(pool, flags) if bad and raw != first][:options.failing - 1]
    passing = [raw for raw, bad in zip(pool, flags) if not bad][:options.passing]
    return failing, passing


def _as_runs(raw: tuple[int, ...], prop: Merges, width: int) -> tuple[int, ...]:
    """The input with each of its two runs sorted (by value, signed or not), so a merge speaks about it.

    >>> _as_runs((3, 1, 2, 0), Merges(split=2), 2)
    (1, 3, 0, 2)
    """
    values = to_values(raw, width, prop.signed)
    return to_raw(sorted(values[:prop.split]) + sorted(values[prop.split:]), width)


class _Lines(dict):
    """Line numbers of gates in the file text, found on first use (finding one walks the text); for a
    circuit made from a design, the gate's ``file:line`` in its sources."""

    def __init__(self, text: str | None, index: dict[str, int], places: dict | None = None):
        super().__init__()
        self.text, self.index, self.places = text, index, places or {}

    def __missing__(self, name: str) -> int | str | None:
        if name in self.places:
            self[name] = self.places[name]
        else:
            self[name] = line_of(self.text, f"gates[{self.index[name]}]") if self.text else None
        return self[name]


def _candidates(circuit: GateCircuit, wrong: set[str]) -> list[str]:
    """Gates in the fan-in of the wrong output bits, in file order."""
    cone = set(wrong)
    for bit in wrong:
        cone |= nx.ancestors(circuit.graph, bit)
    return [gate.out for gate in circuit.gates if gate.out in cone]


def repair_circuit(circuit: GateCircuit, prop: Property | None = None, budget: Budget = Budget(),
                   max_changes: int = 1, options: GateRepairOptions = GateRepairOptions(),
                   text: str | None = None) -> GateRepairOutcome:
    """Change the ops of the fewest gates (at most ``max_changes``) so that ``circuit`` has ``prop``, proved.

    ``text`` is the circuit's file text, used to give the line of each gate.
    Statuses as for networks: ``repaired``, ``holds``, ``none``, ``budget``,
    ``unknown``; suspects are ranked in every case but ``holds``.

    Examples
    --------
    >>> from sortcheck.model import Gate, OutputWord, Sorts, Word
    >>> swapped = GateCircuit((Word("a", 1), Word("b", 1)),
    ...     (Gate("lo", "or", ("a[0]", "b[0]")), Gate("hi", "or", ("a[0]", "b[0]"))),
    ...     (OutputWord("y0", ("lo",)), OutputWord("y1", ("hi",))))
    >>> outcome = repair_circuit(swapped, Sorts())
    >>> outcome.status, [change.describe() for change in outcome.changes], outcome.verified
    ('repaired', ["change gate 'lo' (gates[0]) from or to and"], True)
    >>> outcome.suspects[0].gate, outcome.suspects[0].ops
    ('lo', ('and',))
    """
    started = time.perf_counter()
    prop = prop or circuit.claim or DEFAULT_PROPERTY
    check_fits(prop, circuit, None)
    index = {gate.out: position for position, gate in enumerate(circuit.gates)}
    lines = _Lines(text, index, circuit.source_places)
    counts = {"tried": 0, "verifications": 0, "added": 0, "undecided": 0}
    bank_size = 0

    def outcome(status, reason, searched="", changes=(), fixed=None, verdict=None, suspects=()):
        verified = verdict is not None and verdict.status == Status.PROVED
        return GateRepairOutcome(status, tuple(changes), fixed, verified, counts["tried"], counts["verifications"],
                                 time.perf_counter() - started, reason, searched, bank_size, counts["added"],
                                 counts["undecided"], verdict=verdict, suspects=tuple(suspects))

    first = check(circuit, prop, engine=options.engine, timeout=budget.remaining())
    counts["verifications"] += 1
    if first.status == Status.PROVED:
        return outcome("holds", f"the circuit already {prop.describe()}; nothing to repair", "nothing",
                       fixed=circuit, verdict=first)
    if first.status == Status.UNKNOWN:
        status = "budget" if first.stop == StopReason.TIMEOUT else "unknown"
        return outcome(status, f"the circuit itself could not be checked: {first.scope}")
    width = circuit.width
    failures = CircuitFailures(circuit, prop)
    failing, passing = _bank(circuit, prop, to_raw(first.counterexample.input, width), failures, options)
    wrong = wrong_bits(circuit, prop, failing)
    cone = _candidates(circuit, wrong)
    candidates = cone if max_changes == 1 else [gate.out for gate in circuit.gates]
    searched = _searched(circuit, cone, candidates, max_changes)
    search = _Search(circuit, prop, candidates, max_changes)
    try:
        for raw in failing + passing:
            search.add(raw)
        initial = len(failing) + len(passing)
        found = _cegar(circuit, prop, search, budget, max_changes, options, counts, index, lines)
        bank_size = len(search.cnf.copies)
        suspects = rank_suspects(circuit, prop, search, cone, failing + search.cnf.copies[initial:], wrong, budget,
                             options, index, lines)
    finally:
        search.close()
    status, changes, fixed, verdict = found
    if status == "repaired":
        done = len(changes)
        return outcome("repaired", f"changing the op of {done} gate{'s' * (done > 1)} makes the circuit "
                       f"{prop.describe()}, proved by {verdict.engine}", searched, changes, fixed, verdict, suspects)
    if status == "budget":
        return outcome("budget", "the time budget ran out while searching op changes", searched, suspects=suspects)
    if status == "rounds":
        return outcome("budget", f"the search stopped after {options.max_rounds} candidates, each refuted by a full "
                       "check", searched, suspects=suspects)
    if counts["undecided"]:
        return outcome("unknown", f"no op change of at most {max_changes} gate(s) was proved, and "
                       f"{counts['undecided']} passed every tried input but could not be decided, last: "
                       f"{counts['undecided_example']}", searched, suspects=suspects)
    return outcome("none", f"no op change of at most {max_changes} gate(s) makes the circuit {prop.describe()} "
                   f"(searched: {searched}): none gets all {bank_size} tried inputs right", searched,
                   suspects=suspects)


def _searched(circuit: GateCircuit, cone: list[str], candidates: list[str], max_changes: int) -> str:
    """Which op changes the search covers, in words."""
    by_out = {gate.out: gate for gate in circuit.gates}
    wide = sum(len(by_out[name].inputs) > MAX_TABLE_INPUTS for name in candidates)
    kept = f"; {wide} gate(s) of more than {MAX_TABLE_INPUTS} inputs keep their op" if wide else ""
    if max_changes == 1:
        return (f"every op change of one of the {len(cone)} gates in the fan-in of the wrong output bits (of "
                f"{len(circuit.gates)} gates; no other single gate can change those bits){kept}")
    return f"every op change of at most {max_changes} of the {len(circuit.gates)} gates{kept}"


def _cegar(circuit: GateCircuit, prop: Property, search: _Search, budget: Budget, max_changes: int,
           options: GateRepairOptions, counts: dict, index: dict, lines: "_Lines"):
    """Candidate op changes from the solver, checked on every input; counterexamples become copies."""
    cnf = search.cnf
    for _ in range(options.max_rounds):
        answer = False
        for bound in range(1, max_changes + 1):
            answer = search.solve([cnf.ops_only, *search.at_most(bound)], budget)
            if answer is not False:
                break
        if answer is None:
            return "budget", (), None, None
        if not answer:
            return "none", (), None, None
        chosen = cnf.chosen_ops(search.solver.get_model())
        changes = tuple(GateChange(name, index[name], op, cnf.gates[name].op, lines[name])
                        for name, op in sorted(chosen.items(), key=lambda item: index[item[0]]))
        fixed = change_ops(circuit, {change.gate: change.op for change in changes})
        counts["tried"] += 1
        verdict = check(fixed, prop, engine=options.engine, timeout=budget.remaining())
        counts["verifications"] += 1
        if verdict.status == Status.PROVED:
            return "repaired", changes, fixed, verdict
        if verdict.status == Status.REFUTED:
            search.add(to_raw(verdict.counterexample.input, circuit.width))
            counts["added"] += 1
        elif verdict.stop == StopReason.TIMEOUT:
            return "budget", (), None, None
        else:
            counts["undecided"] += 1
            counts["undecided_example"] = f"{'; '.join(c.describe() for c in changes)} ({verdict.scope})"
            cnf.builder.clauses.append([-cnf.choices[name][op] for name, op in chosen.items()])
    return "rounds", (), None, None


__all__ = ["GateChange", "GateRepairOptions", "GateRepairOutcome", "Suspect", "change_ops", "repair_circuit"]
