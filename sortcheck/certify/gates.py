"""Certificates of gate circuits: each CNF is the question its claim names, and the claims cover every threshold.

The gate-circuit ``sat`` engine records one CNF and DRUP proof per proved
question (:mod:`sortcheck.engines.gates.threshold.certificates`).  Beside the proof
checks of :mod:`sortcheck.certify.check`, a certificate of a gate circuit
must pass two checks made here:

* **encoding**: the circuit read again from its file is encoded again, and
  the CNF of each claim (:func:`~sortcheck.engines.gates.threshold.certificates.claim_clauses`)
  must equal, clause for clause, the CNF recorded; so a proof speaks about
  this circuit, this property and exactly the thresholds its claim names;
* **coverage**: the thresholds of the claims, as ranges, must join up to
  every one of the ``2^w`` thresholds of the property's domain (or a single
  claim with ``v`` free), or, for a stable partial sort, a miter claim.

Trusted here are the threshold decomposition and the CNF encoding of the
circuit and of the threshold conditions (``encodings/gate-circuit-cnf.md``,
``encodings/gate-threshold-conditions.md``).

>>> coverage_problems([[0, 1], [3, 3], [2, 2]], (0, 3))
[]
>>> coverage_problems([[0, 1], [3, 3]], (0, 3))
['threshold 2 is covered by no question']
"""

from __future__ import annotations

from typing import Any, Sequence

from sortcheck.engines.base import UnsatCall
from sortcheck.engines.gates.threshold.certificates import MODES, claim_clauses
from sortcheck.engines.gates.threshold.spec import threshold_question
from sortcheck.model import GateCircuit, PartialSort, Property
from sortcheck.certify.drup import ProofFormatError, parse_dimacs

TRUSTED = ("the threshold decomposition and the CNF encoding of the circuit and of the threshold conditions "
           "(encodings/gate-circuit-cnf.md, encodings/gate-threshold-conditions.md)")


def threshold_span(circuit: GateCircuit, prop: Property) -> tuple[int, int]:
    """The smallest and largest threshold of the property's number domain.

    >>> from sortcheck.model import Sorts
    >>> from sortcheck.model.counting import counting_sorter
    >>> threshold_span(counting_sorter(3, 2), Sorts(signed=True))
    (-2, 1)
    """
    if prop.signed:
        return -(1 << (circuit.width - 1)), (1 << (circuit.width - 1)) - 1
    return 0, (1 << circuit.width) - 1


def coverage_problems(ranges: Sequence[Sequence[int]], span: tuple[int, int]) -> list[str]:
    """Why the inclusive threshold ``ranges`` do not cover ``span`` (empty when they do): the first gap."""
    low, high = span
    reach = low  # every threshold below this one is covered
    for first, last in sorted((int(a), int(b)) for a, b in ranges):
        if first > reach:
            break
        reach = max(reach, last + 1)
    if reach > high:
        return []
    return [f"threshold {reach} is covered by no question"]


def _claim_problems(claim: Any, circuit: GateCircuit, prop: Property, span: tuple[int, int]) -> list[str]:
    """What is wrong with a claim on its face (a claim about another circuit, property or domain)."""
    if not isinstance(claim, dict) or claim.get("question") not in MODES:
        return ["the claim names no question of the gate engine"]
    problems = []
    if claim.get("property") != prop.to_json():
        problems.append("the claim is about another property")
    if (claim.get("words"), claim.get("width"), claim.get("signed")) != (circuit.words, circuit.width, prop.signed):
        problems.append("the claim is about other words, bits or number domain")
    thresholds = claim.get("thresholds")
    if claim["question"] != "miter":
        if (not isinstance(thresholds, list) or len(thresholds) != 2
                or not all(isinstance(t, int) for t in thresholds)
                or not span[0] <= thresholds[0] <= thresholds[1] <= span[1]):
            problems.append(f"the claim's thresholds {thresholds!r} are not a range inside {span[0]}..{span[1]}")
        elif claim["question"] == "fixed" and thresholds[0] != thresholds[1]:
            problems.append("a fixed threshold claim names more than one threshold")
        elif claim["question"] == "free" and tuple(thresholds) != span:
            problems.append("a claim with the threshold free must name every threshold")
    return problems


def gate_problems(circuit: GateCircuit, prop: Property, calls: Sequence[UnsatCall]) -> tuple[list[str], dict]:
    """Encoding and coverage problems of a gate circuit's recorded questions, and a summary for the manifest.

    An empty list of problems means: every recorded CNF is the encoding of its
    claim for this circuit and property, and the claims cover the property.
    """
    span = threshold_span(circuit, prop)
    stable = isinstance(prop, PartialSort) and prop.stable
    problems: list[str] = []
    base = threshold_question(circuit, prop)
    ranges: list[list[int]] = []
    miters = 0
    for number, call in enumerate(calls, 1):
        where = f"call-{number:04d}.cnf"
        claim_wrong = _claim_problems(call.claim, circuit, prop, span)
        if claim_wrong:
            problems += [f"{where}: {problem}" for problem in claim_wrong]
            continue
        claim = call.claim
        question = threshold_question(circuit, prop) if claim["question"] == "range" else base
        if (claim["question"] == "miter") != (question.method == "miter"):
            problems.append(f"{where}: a {claim['question']} claim does not fit this property")
            continue
        try:
            _, recorded = parse_dimacs(call.dimacs)
        except ProofFormatError as error:
            problems.append(f"{where}: {error}")
            continue
        if recorded != claim_clauses(question, claim):
            problems.append(f"{where}: the CNF is not the encoding of the circuit read from its file for its "
                            f"claim ({len(recorded):,} clauses recorded)")
            continue
        if claim["question"] == "miter":
            miters += 1
        else:
            ranges.append(claim["thresholds"])
    if stable:
        problems += [] if miters else ["no miter question against the stable reference sorter was recorded"]
        summary = {"domain": "miter", "questions": miters}
    else:
        problems += coverage_problems(ranges, span)
        summary = {"domain": "thresholds", "low": span[0], "high": span[1], "thresholds": span[1] - span[0] + 1,
                   "questions": len(ranges)}
    return problems, summary
