"""Certificate material of the gate-circuit ``sat`` engine: one self-contained CNF per proved question.

Assumptions do not go into a DRUP proof, so with ``Options(certify=True)``
every question the engine proves is solved as a CNF of its own, and its
*claim* (JSON-ready) says which CNF that is:

* ``"fixed"``: the threshold CNF of :func:`~sortcheck.engines.gates.threshold.spec.threshold_question`
  plus one unit clause per bit of the threshold word ``v``, fixing it to
  ``thresholds[0]`` (``== thresholds[1]``);
* ``"range"``: the threshold CNF plus the unit clause ``low <= v <= high``
  (:meth:`~sortcheck.engines.gates.threshold.spec.ThresholdQuestion.within`);
* ``"free"``: the threshold CNF with ``v`` free (every threshold at once);
* ``"miter"``: the miter of a stable partial sort against the stable
  reference sorter (no threshold).

:func:`claim_clauses` is the one definition of the CNF of a claim: the
engine writes it, and the report layer builds it again from the circuit read
from its file and compares.

>>> from sortcheck.model import Sorts
>>> from sortcheck.model.counting import counting_sorter
>>> from sortcheck.engines.gates.threshold.spec import threshold_question
>>> circuit = counting_sorter(3, 2)
>>> question = threshold_question(circuit, Sorts())
>>> claim = question_claim(circuit, Sorts(), question, "fixed", (2, 2))
>>> claim_text(claim)
'no input of 3 words of 2 bits violates sorts ascending at threshold v = 2'
>>> len(claim_clauses(question, claim)) - len(question.clauses())  # the two bits of v, as unit clauses
2
"""

from __future__ import annotations

from typing import Any

from sortcheck.engines.networks.certificates import canonical
from sortcheck.engines.gates.cnf import Clause
from sortcheck.engines.gates.threshold.spec import ThresholdQuestion
from sortcheck.model import GateCircuit, Property
from sortcheck.model.properties import property_from_json

#: The kinds of question a claim can name.
MODES = ("fixed", "range", "free", "miter")


def question_claim(circuit: GateCircuit, prop: Property, question: ThresholdQuestion, mode: str,
                   thresholds: tuple[int, int] | None) -> dict[str, Any]:
    """The claim of one question: the property, the circuit's words and bits, and the thresholds asked."""
    if mode not in MODES:
        raise ValueError(f"not a kind of question: {mode!r}")
    return {"question": mode, "property": prop.to_json(), "words": circuit.words, "width": circuit.width,
            "signed": question.signed, "thresholds": None if mode == "miter" else list(thresholds)}


def claim_text(claim: dict[str, Any]) -> str:
    """What the unsatisfiability of the claim's CNF means, in words.

    >>> claim_text({"question": "free", "property": {"name": "sorts", "order": "ascending", "signed": False},
    ...             "words": 4, "width": 5, "signed": False, "thresholds": [0, 31]})
    'no input of 4 words of 5 bits violates sorts ascending at any threshold'
    """
    prop = property_from_json(claim["property"])
    inputs = f"no input of {claim['words']} words of {claim['width']} bits"
    mode, thresholds = claim["question"], claim.get("thresholds")
    if mode == "miter":
        return (f"{inputs} makes the outputs differ from the stable reference sorter's "
                f"(so it has {prop.describe()})")
    where = {"fixed": lambda: f"at threshold v = {thresholds[0]}",
             "range": lambda: f"at any threshold v in {thresholds[0]}..{thresholds[1]}",
             "free": lambda: "at any threshold"}[mode]()
    return f"{inputs} violates {prop.describe()} {where}"


def claim_clauses(question: ThresholdQuestion, claim: dict[str, Any]) -> list[Clause]:
    """The self-contained CNF of ``claim``: unsatisfiable exactly when the claim holds.

    A ``"range"`` claim adds the definitions of ``low <= v <= high`` to the
    question's builder (structural hashing makes a second call add nothing).
    """
    mode = claim["question"]
    if mode == "range":
        low, high = claim["thresholds"]
        inside = question.within(low, high)
        return question.clauses() + [[inside]]
    clauses = question.clauses()
    if mode == "fixed":
        return clauses + [[literal] for literal in question.threshold_literals(claim["thresholds"][0])]
    return clauses


def claim_comments(claim: dict[str, Any], names: list[str]) -> list[str]:
    """DIMACS comment lines (without the ``c``): what unsatisfiability means, the claim, the named words."""
    fixing = {"fixed": "the threshold word v is fixed by one unit clause per bit",
              "range": "the last clause keeps the threshold word v inside the range",
              "free": "the threshold word v is free", "miter": "no threshold: a miter"}[claim["question"]]
    return [f"sortcheck gate question: unsatisfiable exactly when {claim_text(claim)}", fixing,
            "claim " + canonical(claim).decode(), *names]
