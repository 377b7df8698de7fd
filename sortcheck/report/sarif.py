"""SARIF 2.1.0: refuted and unreadable netlists as results that point at lines of the netlist.

One rule per property kind (a refuted check is a result of its property's
rule) and one for invalid netlists.  A refuted comparator network points at
the comparator after which the two out-of-order values never move again
(see :mod:`sortcheck.explain.diagnose`); an invalid netlist at the place the
loader named; otherwise at the netlist's ``"property"`` line or the file.
"""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any, Sequence

from sortcheck import __version__
from sortcheck.load.locate import line_of
from sortcheck.model import PROPERTY_NAMES
from sortcheck.report.results import FileResult

SARIF_SCHEMA = "https://json.schemastore.org/sarif-2.1.0.json"
INVALID_RULE = "invalid-netlist"

_RULE_TEXT = {
    "sorts": "The netlist must output its inputs in order.",
    "merges": "The netlist must merge two ascending runs into one.",
    "selects": "The netlist must put the smallest inputs first.",
    "median": "The netlist must output the median of its inputs.",
    "partial-sort": "The netlist must order its words by their most significant bits.",
    INVALID_RULE: "The netlist file must be a valid sortcheck netlist whose property fits it.",
}
RULE_IDS = (*PROPERTY_NAMES, INVALID_RULE)


def _rules() -> list[dict[str, Any]]:
    return [{"id": rule, "name": rule.title().replace("-", ""), "shortDescription": {"text": _RULE_TEXT[rule]},
             "defaultConfiguration": {"level": "error"}} for rule in RULE_IDS]


def comparator_place(data: dict, index: int) -> str | None:
    """The place of comparator ``index`` in a network file's own layout (comparators or layers).

    >>> comparator_place({"layers": [[[0, 1], [2, 3]], [[1, 2]]]}, 2)
    'layers[1][0]'
    """
    if "comparators" in data:
        return f"comparators[{index}]"
    for layer_index, layer in enumerate(data.get("layers", [])):
        if index < len(layer):
            return f"layers[{layer_index}][{index}]"
        index -= len(layer)
    return None


def _refuted_place(result: FileResult, data: dict) -> str | None:
    if result.diagnosis is not None and result.diagnosis.sealed_at is not None:
        return comparator_place(data, result.diagnosis.sealed_at)
    return "property" if "property" in data else None


def _location(result: FileResult) -> dict[str, Any]:
    physical: dict[str, Any] = {"artifactLocation": {"uri": Path(result.path).as_posix()}}
    try:
        text = Path(result.path).read_text(encoding="utf-8")
        if result.error is not None:
            line = line_of(text, result.error.where)
        else:
            line = line_of(text, _refuted_place(result, json.loads(text)))
    except (OSError, ValueError, UnicodeDecodeError, RecursionError):
        line = None
    if line is not None:
        physical["region"] = {"startLine": line}
    return {"physicalLocation": physical}


def _message(result: FileResult) -> str:
    if result.error is not None:
        return str(result.error)
    example = result.verdict.counterexample
    return (f"{result.prop.describe()} is refuted: on input {list(example.input)} the netlist outputs "
            f"{list(example.output)}; {example.violation}")


def sarif_report(results: Sequence[FileResult]) -> str:
    """The SARIF 2.1.0 log for ``results``: a result per refuted or invalid file."""
    rule_index = {rule: index for index, rule in enumerate(RULE_IDS)}
    findings = []
    for result in results:
        if result.status not in ("refuted", "error"):
            continue
        rule = INVALID_RULE if result.status == "error" else result.prop.name
        findings.append({"ruleId": rule, "ruleIndex": rule_index[rule], "level": "error",
                         "message": {"text": _message(result)}, "locations": [_location(result)]})
    log = {"$schema": SARIF_SCHEMA, "version": "2.1.0", "runs": [{
        "tool": {"driver": {"name": "sortcheck", "version": __version__, "rules": _rules()}},
        "results": findings,
        "invocations": [{"executionSuccessful": True}],
    }]}
    return json.dumps(log, indent=2) + "\n"
