"""Every engine that takes a gate circuit of the conformance corpus gives its listed verdict.

The corpus (``corpus/make_corpus.py``) holds circuits for every property in two
independent lowerings (and/or/not with a most-significant-first equality
chain; mux with a least-significant-first ripple comparison), two's complement
words, a key-only lowering, counting sorters with no comparators, and each with
one gate flipped.  Each counterexample is replayed with the independent
evaluator of ``tests/gate_reference.py`` and judged with Python's ``sorted``.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from gate_reference import breaks_words, run_gates, signed_values
from sortcheck.engines import ENGINES, Status, check
from sortcheck.load import read_netlist
from sortcheck.model import GateCircuit

CORPUS = Path(__file__).resolve().parent.parent / "corpus"
LISTED = {path: verdict for verdict, path in (line.split() for line in
          (CORPUS / "expected-verdicts.txt").read_text(encoding="utf-8").splitlines()
          if line.strip() and not line.startswith("#"))}
GATE_FILES = sorted(path for path in LISTED if path.endswith(".json")
                    and isinstance(read_netlist(CORPUS / path), GateCircuit))
#: smt bit-blasts the whole circuit with z3: kept to the smaller circuits so the suite stays quick.
SMT_GATES = 800


def engines_for(circuit):
    names = ["auto", "sat", "lift", "bdd"]
    if sum(circuit.widths) <= 18:  # exhaustive simulation: 2^18 inputs at most, to keep the suite quick
        names.append("simulate")
    if len(circuit.gates) <= SMT_GATES:
        names.append("smt")
    return names


def test_the_conformance_corpus_has_every_property_style_and_mutants():
    kinds = {read_netlist(CORPUS / path).claim.name for path in GATE_FILES}
    assert kinds == {"sorts", "merges", "selects", "median", "partial-sort"}
    assert sum(LISTED[path] == "refuted" for path in GATE_FILES) >= 7


@pytest.mark.parametrize("path", GATE_FILES)
def test_every_engine_gives_the_listed_verdict(path):
    circuit = read_netlist(CORPUS / path)
    prop = circuit.claim
    expected = Status(LISTED[path])
    for engine in engines_for(circuit):
        if engine != "auto" and ENGINES[engine].refusal(circuit, prop) is not None:
            continue  # e.g. lift does not take stable partial sorts
        verdict = check(circuit, prop, engine=engine, timeout=120)
        if engine == "lift" and verdict.status is Status.UNKNOWN and "does not lift" in verdict.scope:
            continue  # lift decides only circuits that are comparator networks (a flipped gate may stop that)
        assert verdict.status == expected, (engine, verdict.scope)
        if expected is Status.REFUTED:
            example = verdict.counterexample
            raw = [value % (1 << circuit.width) for value in example.input]
            output = signed_values(run_gates(circuit, raw), circuit.width, prop.signed)
            assert tuple(output) == tuple(example.output), engine
            assert breaks_words(prop, list(example.input), output, circuit.width), engine
