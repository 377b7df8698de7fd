"""Repairs and suspects of gate circuits, every repair re-checked here without the project's evaluators.

A repaired circuit is judged by ``tests/gate_reference.holds_everywhere``:
every input is run through the gates with the ops' truth tables written out
there, and judged with the property's definition written with Python's
``sorted`` (``tests/reference.breaks``).
"""

from __future__ import annotations

import itertools
import json
from dataclasses import replace

import pytest
from pysat.solvers import Solver

from gate_reference import breaks_words, holds_everywhere, run_gates, signed_values
from sortcheck.cli import main
from sortcheck.engines import Budget
from sortcheck.engines.gates.cnf import CnfBuilder
from sortcheck.explain.gate_flips import expected_raw, flip_counts
from sortcheck.explain.gate_repair import GateRepairOptions, change_ops, repair_circuit
from sortcheck.explain.gate_repair_cnf import alternative_ops, meets_clauses, op_table
from sortcheck.load import dump_netlist
from sortcheck.model import Median, Merges, PartialSort, Selects, Sorts
from sortcheck.model.circuit_builds import build_circuit

FLIP = {"and": "or", "or": "and", "xor": "xnor", "xnor": "xor", "mux": "xor"}


def flipped(circuit, index):
    gate = circuit.gates[index]
    return change_ops(circuit, {gate.out: FLIP[gate.op]})


def breaking_mutants(circuit, prop, count):
    """The first ``count`` single-op mutants (spread over the circuit) that break ``prop``."""
    indices = [i for i, gate in enumerate(circuit.gates) if gate.op in FLIP]
    step = max(1, len(indices) // (3 * count))
    found = []
    for index in indices[::step]:
        mutant = flipped(circuit, index)
        if not holds_everywhere(mutant, prop):
            found.append((index, mutant))
        if len(found) == count:
            break
    return found


def assert_verified(outcome, mutant, prop, flipped_gate):
    assert outcome.status == "repaired", outcome.reason
    assert outcome.verified and outcome.verdict.status.value == "proved"
    assert holds_everywhere(outcome.network, prop)
    assert len(outcome.changes) == 1
    change = outcome.changes[0]
    assert mutant.gates[change.index].out == change.gate and mutant.gates[change.index].op == change.replaced
    assert flipped_gate in [suspect.gate for suspect in outcome.suspects[:3]]


@pytest.mark.parametrize("prop, outputs", [
    (Selects(count=2, sorted=True), 5), (Selects(count=2), 5), (Median(), 5), (Merges(split=2), 5),
    (Sorts(order="descending"), 5), (Sorts(signed=True), 5),
])
def test_mutants_are_repaired_for_every_functional_property(prop, outputs):
    signed = prop.signed
    circuit = build_circuit("merge-exchange", outputs, 2, style="mux", signed=signed)
    if isinstance(prop, Sorts) and prop.order == "descending":
        circuit = replace(circuit, outputs=circuit.outputs[::-1])
    assert holds_everywhere(circuit, prop)
    for index, mutant in breaking_mutants(circuit, prop, 2):
        outcome = repair_circuit(mutant, prop, Budget.of(60))
        assert outcome.status == "repaired", outcome.reason
        assert holds_everywhere(outcome.network, prop)
        assert circuit.gates[index].out in [suspect.gate for suspect in outcome.suspects[:3]]


def test_a_partial_sort_mutant_is_repaired():
    prop = PartialSort(key_bits=1)
    circuit = build_circuit("merge-exchange", 4, 2, style="and-or", key_bits=1)
    assert holds_everywhere(circuit, prop)
    index, mutant = breaking_mutants(circuit, prop, 1)[0]
    outcome = repair_circuit(mutant, prop, Budget.of(60))
    assert outcome.status == "repaired" and holds_everywhere(outcome.network, prop)


def test_a_circuit_that_holds_has_nothing_to_repair():
    circuit = build_circuit("bitonic", 4, 2, style="xor")
    outcome = repair_circuit(circuit, Sorts())
    assert outcome.status == "holds" and outcome.changes == () and outcome.suspects == ()


def test_two_flipped_gates_need_two_changes():
    circuit = build_circuit("merge-exchange", 4, 2, style="mux")
    (first, _), (second, _) = breaking_mutants(circuit, Sorts(), 2)
    mutant = change_ops(flipped(circuit, first), {circuit.gates[second].out: FLIP[circuit.gates[second].op]})
    assert not holds_everywhere(mutant, Sorts())
    one = repair_circuit(mutant, Sorts(), Budget.of(60), max_changes=1)
    assert one.status in ("none", "repaired")
    if one.status == "repaired":  # another single op change may happen to fix both
        assert holds_everywhere(one.network, Sorts())
    else:
        assert "no op change of at most 1 gate" in one.reason and not one.verified
    two = repair_circuit(mutant, Sorts(), Budget.of(60), max_changes=2)
    assert two.status == "repaired" and holds_everywhere(two.network, Sorts())


def test_a_spent_budget_gives_status_budget():
    circuit = build_circuit("merge-exchange", 6, 3, style="mux")
    _, mutant = breaking_mutants(circuit, Sorts(), 1)[0]
    outcome = repair_circuit(mutant, Sorts(), Budget.of(1e-9))
    assert outcome.status == "budget" and not outcome.verified


def test_a_fault_no_op_change_repairs_still_gets_suspects():
    # A constant in place of a comparison bit: no op of the gate reading it repairs the circuit here when the
    # search may only touch gates outside the constant's place, yet suspects are ranked.
    circuit = build_circuit("merge-exchange", 4, 2, style="mux")
    index = next(i for i, gate in enumerate(circuit.gates) if gate.op == "mux")
    gate = circuit.gates[index]
    broken_gate = replace(gate, op="not", inputs=(gate.inputs[1],))
    mutant = replace(circuit, gates=circuit.gates[:index] + (broken_gate,) + circuit.gates[index + 1:])
    assert not holds_everywhere(mutant, Sorts())
    outcome = repair_circuit(mutant, Sorts(), Budget.of(60))
    assert outcome.suspects
    if outcome.status == "repaired":
        assert holds_everywhere(outcome.network, Sorts())
    else:
        assert outcome.status == "none" and not outcome.verified


def test_the_same_input_gives_the_same_repair():
    circuit = build_circuit("counting", 4, 2)
    _, mutant = breaking_mutants(circuit, Sorts(), 1)[0]
    first, second = (repair_circuit(mutant, Sorts(), Budget.of(60)) for _ in range(2))
    assert first.changes == second.changes and first.suspects == second.suspects


def test_more_copies_do_not_change_correctness():
    circuit = build_circuit("merge-exchange", 4, 3, style="and-or")
    index, mutant = breaking_mutants(circuit, Sorts(), 1)[0]
    for options in (GateRepairOptions(failing=1, passing=0), GateRepairOptions(failing=40, passing=40)):
        outcome = repair_circuit(mutant, Sorts(), Budget.of(60), options=options)
        assert outcome.status == "repaired" and holds_everywhere(outcome.network, Sorts())


@pytest.mark.parametrize("prop", [Sorts(), Sorts(order="descending"), Sorts(signed=True), Merges(split=1),
                                  Selects(count=2), Selects(count=2, sorted=True), Median(), Median(signed=True),
                                  PartialSort(key_bits=1), PartialSort(key_bits=1, stable=True),
                                  PartialSort(key_bits=2, signed=True)])
def test_the_copy_condition_agrees_with_the_definition_on_every_small_case(prop):
    width, words = 2, 3
    for raw in itertools.product(range(4), repeat=words):
        for outputs in itertools.product(range(4), repeat=words):
            builder = CnfBuilder()
            literals = [[builder.constant((value >> i) & 1) for i in range(width)] for value in outputs]
            clauses = builder.clauses + meets_clauses(builder, prop, raw, literals, width)
            with Solver(name="glucose4", bootstrap_with=clauses) as solver:
                meets = solver.solve()
            inputs = signed_values(raw, width, prop.signed)
            assert meets == (not breaks_words(prop, inputs, signed_values(outputs, width, prop.signed), width)), \
                (raw, outputs)


def test_op_tables_and_alternatives_follow_the_format():
    assert op_table("xor", 3) == (0, 1, 1, 0, 1, 0, 0, 1)
    assert op_table("mux", 3)[0b011] == 0 and op_table("mux", 3)[0b101] == 1  # select 1 takes the third input
    from sortcheck.model import Gate
    assert "mux" in alternative_ops(Gate("y", "xor", ("s", "a", "b")))
    assert "mux" not in alternative_ops(Gate("y", "xor", ("a", "b")))


def test_flip_counts_and_expected_words():
    circuit = build_circuit("merge-exchange", 3, 2, style="mux")
    index, mutant = breaking_mutants(circuit, Sorts(), 1)[0]
    failing = [w for w in itertools.product(range(4), repeat=3) if run_gates(mutant, w) != sorted(w)]
    counts = flip_counts(mutant, Sorts(), failing, [g.out for g in mutant.gates], 10 ** 7)
    # Flipping the flipped gate's value fixes exactly the inputs on which the two ops differ, which are all
    # the failing ones here or a subset; no count exceeds the number of failing inputs.
    assert max(counts.values()) <= len(failing) and counts[mutant.gates[index].out] >= 1
    assert expected_raw(Sorts(signed=True), (3, 1), 2) == {0: 3, 1: 1}  # -1 then 1


def test_the_repair_command_fixes_a_gate_circuit_file(tmp_path):
    circuit = build_circuit("merge-exchange", 4, 2, style="xor")
    index, mutant = breaking_mutants(circuit, Sorts(), 1)[0]
    path, fixed = tmp_path / "broken.json", tmp_path / "fixed.json"
    path.write_text(dump_netlist(mutant), encoding="utf-8")
    assert main(["repair", str(path), "--output", str(fixed), "--format", "json"]) == 0
    assert main(["check", str(fixed), "--quiet"]) == 0
    from sortcheck.load import read_netlist
    assert holds_everywhere(read_netlist(str(fixed)), Sorts())


def test_the_repair_command_reports_json_with_lines_and_exit_statuses(tmp_path, capsys):
    circuit = build_circuit("merge-exchange", 4, 2, style="mux")
    index, mutant = breaking_mutants(circuit, Sorts(), 1)[0]
    path = tmp_path / "broken.json"
    path.write_text(dump_netlist(mutant), encoding="utf-8")
    capsys.readouterr()
    assert main(["repair", str(path), "--format", "json"]) == 0
    report = json.loads(capsys.readouterr().out)["results"][0]
    assert report["kind"] == "gate-circuit"
    repair = report["repair"]
    assert repair["verified"] is True and repair["changes"][0]["kind"] == "op"
    lines = path.read_text().splitlines()
    change = repair["changes"][0]
    assert f'"out": "{change["gate"]}"' in lines[change["line"] - 1]
    assert repair["suspects"][0]["line"] is not None
    assert main(["repair", str(path), "--timeout", "0.000001"]) == 3
    good = tmp_path / "good.json"
    good.write_text(dump_netlist(circuit), encoding="utf-8")
    assert main(["repair", str(good)]) == 0
    assert "already meets" in capsys.readouterr().out


def test_a_circuit_beyond_exhaustive_simulation_is_repaired_only_when_a_complete_engine_proves_it():
    # 6 words of 5 bits: 30 input bits, beyond exhaustive simulation.  A candidate that passes every tried input
    # is offered as a repair only if the check proves it; otherwise the outcome is unknown, naming it, with suspects.
    circuit = build_circuit("merge-exchange", 6, 5, style="mux")
    gate = circuit.gates[len(circuit.gates) // 2]
    mutant = change_ops(circuit, {gate.out: FLIP[gate.op]})
    outcome = repair_circuit(mutant, Sorts(), Budget.of(120))
    assert gate.out in [suspect.gate for suspect in outcome.suspects[:3]]
    if outcome.status == "repaired":
        assert outcome.verified and outcome.verdict.status.value == "proved"
    else:
        assert outcome.status == "unknown" and not outcome.verified and outcome.network is None
        assert "could not be decided" in outcome.reason and "change gate" in outcome.reason


def test_the_repair_command_groups_the_bits_of_a_blif_file(tmp_path, capsys):
    from sortcheck.load import read_netlist
    from sortcheck.load.blif import dump_blif
    corpus = __import__("pathlib").Path(__file__).resolve().parent.parent / "corpus"
    broken = read_netlist(str(corpus / "broken" / "compare-and-swap-2x2-flipped-gate.json"))
    path = tmp_path / "broken.blif"
    path.write_text(dump_blif(broken), encoding="utf-8")
    fixed = tmp_path / "fixed.json"
    capsys.readouterr()
    assert main(["repair", str(path), "--words", "2", "--output", str(fixed)]) == 0
    assert "from or to and" in capsys.readouterr().out
    assert holds_everywhere(read_netlist(str(fixed)), Sorts())


def test_a_median_circuit_with_one_output_word_is_repaired():
    sorter = build_circuit("merge-exchange", 5, 2, style="mux")
    circuit = replace(sorter, outputs=(sorter.outputs[2],))
    assert holds_everywhere(circuit, Median())
    index, mutant = breaking_mutants(circuit, Median(), 1)[0]
    outcome = repair_circuit(mutant, Median(), Budget.of(60))
    assert outcome.status == "repaired" and holds_everywhere(outcome.network, Median())
    assert circuit.gates[index].out in [suspect.gate for suspect in outcome.suspects[:3]]
