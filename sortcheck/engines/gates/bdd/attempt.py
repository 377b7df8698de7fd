"""One attempt of the BDD check: a variable order under a node limit, every threshold, the fewest-ones failure.

:func:`run_attempt` builds the circuit's output BDDs once under the order,
then for every threshold ``v`` (and every key value of a partial sort) the
BDD of the failing inputs; the circuit has the property exactly when every
one is the constant false.  When some is not, the attempt goes on through
the remaining thresholds so that the failing input it keeps has the fewest
one bits of *all* failing inputs (:func:`~sortcheck.engines.gates.bdd.witness.fewest_ones`
on each, the least weight kept, the first threshold winning ties).
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field
from typing import Any

from sortcheck.engines.base import Budget
from sortcheck.engines.gates.bdd.build import CircuitBdds, Progress, TimeUp, build_outputs
from sortcheck.engines.gates.bdd.conditions import (at_least_value, key_values, key_violation, precondition,
                                                    sorted_bits, threshold_values, threshold_violation)
from sortcheck.engines.gates.bdd.manager import BddManager, NodeLimitReached
from sortcheck.engines.gates.bdd.orders import Attempt, variable_order, word_groups
from sortcheck.engines.gates.bdd.witness import fewest_ones, plain_size
from sortcheck.model import GateCircuit, PartialSort, Property, bit_name


@dataclass(frozen=True)
class Failure:
    """A failing input read off a BDD: raw words (two's complement patterns), its one bits, where it was found."""

    raw: tuple[int, ...]
    ones: int
    where: str


@dataclass
class Outcome:
    """What one attempt found.

    ``status`` is ``"proved"``, ``"refuted"``, ``"size-limit"`` or ``"timeout"``;
    ``complete`` says whether every threshold (and key value) was asked, which
    makes a failure the fewest-ones failure of all inputs.
    """

    attempt: Attempt
    backend: str
    status: str = "proved"
    failure: Failure | None = None
    complete: bool = False
    thresholds_checked: int = 0
    keys_checked: int = 0
    conditions: int = 0
    peak_nodes: int = 0
    output_nodes: int = 0
    largest_violation: int = 0
    reorderings: int = 0
    slowest_operation: float = 0.0
    seconds: float = 0.0
    note: str = ""
    thresholds_failed: list = field(default_factory=list)
    progress: Progress = field(default_factory=Progress)

    def summary(self) -> dict[str, Any]:
        """The figures of this attempt, JSON-ready."""
        return {"order": self.attempt.order, "node_limit": self.attempt.node_limit, "outcome": self.status,
                "peak_nodes": self.peak_nodes, "slowest_operation_seconds": round(self.slowest_operation, 4),
                "seconds": round(self.seconds, 4)}


def _raw_input(circuit: GateCircuit, chosen: dict[str, bool]) -> tuple[int, ...]:
    """Input words from the variables set true (every other bit 0)."""
    return tuple(sum(1 << i for i in range(word.width) if chosen.get(bit_name(word.name, i)))
                 for word in circuit.inputs)


def _consider(outcome: Outcome, manager: BddManager, circuit: GateCircuit, violation: Any, where: str) -> None:
    """Keep the fewest-ones input of ``violation`` when it has fewer one bits than the failure kept so far."""
    if manager.is_false(violation):
        return
    outcome.thresholds_failed.append(where)
    outcome.largest_violation = max(outcome.largest_violation, manager.size([violation]))
    ones, chosen = fewest_ones(manager, violation)
    if outcome.failure is None or ones < outcome.failure.ones:
        outcome.failure = Failure(_raw_input(circuit, chosen), ones, where)


def _check_thresholds(outcome: Outcome, manager: BddManager, circuit: GateCircuit, prop: Property,
                      built: CircuitBdds, budget: Budget) -> None:
    speaks_about = precondition(manager, prop, built.inputs)
    values = threshold_values(prop, circuit.width)
    keys = key_values(prop) if isinstance(prop, PartialSort) else range(0)
    outcome.progress.all_thresholds = len(values) + len(keys)
    for number, value in enumerate(values):
        if budget.expired():
            raise TimeUp(f"{number:,} of {len(values):,} thresholds were checked")
        violation, asked = threshold_violation(manager, prop, built.inputs, built.outputs, value, speaks_about)
        outcome.conditions += asked
        outcome.thresholds_checked += 1
        outcome.progress.thresholds += 1
        _consider(outcome, manager, circuit, violation, f"threshold v = {value}")
        manager.check_size()
        budget.report(number + 1, len(values), "BDD thresholds")
    if isinstance(prop, PartialSort):
        for key in keys:
            if budget.expired():
                raise TimeUp(f"every threshold and {outcome.keys_checked:,} key values were checked")
            violation, asked = key_violation(manager, prop, built.outputs, key)
            outcome.conditions += asked
            outcome.keys_checked += 1
            outcome.progress.thresholds += 1
            _consider(outcome, manager, circuit, violation, f"key value u = {key}")
            manager.check_size()


def run_attempt(circuit: GateCircuit, prop: Property, attempt: Attempt, backend: str | None, budget: Budget
                ) -> Outcome:
    """Build the circuit under ``attempt``'s order and ask every threshold condition (see the module text)."""
    started = time.perf_counter()
    manager = BddManager(variable_order(circuit, attempt.order), backend, attempt.node_limit, attempt.reorder,
                         word_groups(circuit, attempt.order))
    outcome = Outcome(attempt, manager.backend)
    try:
        built = build_outputs(circuit, manager, budget, outcome.progress)
        outcome.output_nodes = manager.size([bit for word in built.outputs for bit in word])
        _check_thresholds(outcome, manager, circuit, prop, built, budget)
        outcome.complete = True
        outcome.status = "proved" if outcome.failure is None else "refuted"
    except NodeLimitReached as reached:
        outcome.status = "size-limit"
        outcome.note = f"{reached.nodes:,} live nodes reached"
        outcome.peak_nodes = reached.nodes
    except TimeUp as stopped:
        outcome.status = "timeout"
        outcome.note = stopped.done
    outcome.peak_nodes = max(outcome.peak_nodes, manager.peak_nodes())
    outcome.reorderings = manager.reorderings()
    outcome.slowest_operation = manager.slowest
    outcome.seconds = time.perf_counter() - started
    if outcome.failure is not None and outcome.status in ("size-limit", "timeout"):
        outcome.status = "refuted"  # a failing input stands whatever stopped the search for smaller ones
    return outcome


def threshold_table(circuit: GateCircuit, prop: Property, order: str = "word-major", backend: str | None = None
                    ) -> dict[str, Any]:
    """Plain ROBDD sizes, threshold by threshold, of a small circuit under one order (the golden file's content).

    For every threshold ``v``: the nodes of ``[y_i >= v]`` over all outputs,
    of the 0-1 sort of ``[x_j >= v]``, of the failing inputs (1: the constant
    false) and the fewest one bits of a failing input (None: none fails).
    Sizes are of BDDs without complemented edges (:func:`~sortcheck.engines.gates.bdd.witness.plain_size`),
    so both backends give the same table.

    >>> from sortcheck.model import Sorts
    >>> from sortcheck.model.counting import counting_sorter
    >>> table = threshold_table(counting_sorter(2, 1), Sorts(), backend="python")
    >>> [(row["v"], row["violation_nodes"], row["fewest_ones"]) for row in table["thresholds"]]
    [(0, 1, None), (1, 1, None)]
    """
    manager = BddManager(variable_order(circuit, order), backend)
    built = build_outputs(circuit, manager, Budget())
    speaks_about = precondition(manager, prop, built.inputs)
    rows = []
    for value in threshold_values(prop, circuit.width):
        above = [at_least_value(manager, word, value, prop.signed) for word in built.outputs]
        low = sorted_bits(manager, [at_least_value(manager, word, value, prop.signed) for word in built.inputs])
        violation, _ = threshold_violation(manager, prop, built.inputs, built.outputs, value, speaks_about)
        found = fewest_ones(manager, violation)
        rows.append({"v": value, "outputs_at_least_nodes": plain_size(manager, above),
                     "sorted_inputs_nodes": plain_size(manager, low), "violation_nodes": plain_size(manager, [violation]),
                     "fewest_ones": None if found is None else found[0]})
    bits = [bit for word in built.outputs for bit in word]
    return {"circuit": circuit.name, "property": prop.short(), "order": order,
            "variables": list(manager.order), "output_bits_nodes": plain_size(manager, bits), "thresholds": rows}
