"""SARIF 2.1.0: refuted and unreadable netlists as results that point at lines of the netlist.

One rule per property kind (a refuted check is a result of its property's
rule) and one for invalid netlists.  A refuted comparator network points at
the comparator after which the two out-of-order values never move again
(see :mod:`sortcheck.explain.diagnose`); a refuted gate circuit at the first
output word that holds a wrong value on the counterexample
(:func:`wrong_output_word`); an invalid netlist at the place the loader named;
otherwise at the netlist's ``"property"`` line or the file.
"""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any, Sequence

from sortcheck import __version__
from sortcheck.load.locate import line_of
from collections import Counter

from sortcheck.model import PROPERTY_NAMES, Median, Merges, PartialSort, Property, Selects, Sorts
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


def wrong_output_word(prop: Property, inputs: list[int], outputs: list[int], width: int | None = None
                      ) -> int | None:
    """The first output that differs from what the property asks for on this input (None if none stands out).

    >>> wrong_output_word(Sorts(), [3, 1, 2], [1, 3, 2]), wrong_output_word(Median(), [3, 1, 2], [3, 1, 2])
    (1, 1)
    >>> wrong_output_word(Selects(count=2), [5, 1, 2], [1, 5, 2])
    1
    """
    if isinstance(prop, (Sorts, Merges)):
        expected = sorted(inputs, reverse=isinstance(prop, Sorts) and prop.order == "descending")
    elif isinstance(prop, Selects):
        smallest = sorted(inputs)[:prop.count]
        if prop.sorted:
            expected = smallest
        else:
            left = Counter(smallest)
            for index, value in enumerate(outputs[:prop.count]):
                if left[value] == 0:
                    return index
                left[value] -= 1
            return None
    elif isinstance(prop, Median):
        return (len(outputs) - 1) // 2
    elif isinstance(prop, PartialSort) and width is not None:
        shift = width - prop.key_bits
        expected = sorted(inputs, key=lambda value: value >> shift)
        keys = [value >> shift for value in expected]
        for index, value in enumerate(outputs):
            if value >> shift != keys[index]:
                return index
    else:
        return None
    for index, (value, wanted) in enumerate(zip(outputs, expected)):
        if value != wanted:
            return index
    return None


def _refuted_place(result: FileResult, data: dict) -> str | None:
    if result.diagnosis is not None and result.diagnosis.sealed_at is not None:
        return comparator_place(data, result.diagnosis.sealed_at)
    example = result.verdict.counterexample if result.verdict else None
    if result.kind == "gate-circuit" and example is not None and example.domain == "words":
        width = (result.stats or {}).get("width")
        index = wrong_output_word(result.prop, list(example.input), list(example.output), width)
        if index is not None and index < len(data.get("outputs", [])):
            return f"outputs[{index}]"
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


def _invocation(results: Sequence[FileResult]) -> dict:
    """The run's invocation: successful, unless a signal interrupted it (then named, as SARIF allows)."""
    signals = [result.verdict.figures.get("interrupted_by") for result in results
               if result.verdict is not None and result.verdict.stop.value == "interrupted"]
    if not signals:
        return {"executionSuccessful": True}
    invocation = {"executionSuccessful": False}
    if signals[0]:
        invocation["exitSignalName"] = signals[0]
    return invocation


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
        "invocations": [_invocation(results)],
    }]}
    return json.dumps(log, indent=2) + "\n"
