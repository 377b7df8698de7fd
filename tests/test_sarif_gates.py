"""SARIF for refuted gate circuits: the result points at the output word that is wrong on the counterexample.

The wrong word is judged here with Python's ``sorted`` (the property's definition), and the log is
validated against the official SARIF 2.1.0 schema (tests/data/sarif-schema-2.1.0.json).
"""

from __future__ import annotations

import io
import json
from pathlib import Path

import jsonschema

from conftest import circuit_doc
from sortcheck.cli import main

ROOT = Path(__file__).resolve().parent.parent
SARIF_SCHEMA = json.loads((ROOT / "tests" / "data" / "sarif-schema-2.1.0.json").read_text(encoding="utf-8"))


def sarif_of(path: Path) -> dict:
    out = io.StringIO()
    assert main(["check", str(path), "--format", "sarif", "--quiet"], stdout=out, stderr=io.StringIO()) == 1
    log = json.loads(out.getvalue())
    jsonschema.validate(log, SARIF_SCHEMA)
    return log


def line_with(text: str, needle: str) -> int:
    return next(number for number, line in enumerate(text.splitlines(), 1) if needle in line)


def test_a_refuted_gate_circuit_points_at_its_wrong_output_word(tmp_path):
    # Both output words are the bitwise AND of the inputs: "small" is right whenever one word is 0, "large" not.
    doc = circuit_doc(outputs=[{"name": "small", "bits": ["lo0", "lo1"]}, {"name": "large", "bits": ["lo0", "lo1"]}],
                      property={"name": "sorts"})
    path = tmp_path / "and-words.json"
    text = json.dumps(doc, indent=2)
    path.write_text(text, encoding="utf-8")
    [result] = sarif_of(path)["runs"][0]["results"]
    report = io.StringIO()
    main(["check", str(path), "--format", "json", "--quiet"], stdout=report, stderr=io.StringIO())
    example = json.loads(report.getvalue())["results"][0]["counterexample"]
    expected = sorted(example["input"])
    wrong = next(i for i, (got, want) in enumerate(zip(example["output"], expected)) if got != want)
    name = doc["outputs"][wrong]["name"]
    opening = line_with(text, f'"{name}"') - 1  # the line that opens the word's object
    assert text.splitlines()[opening - 1].strip() == "{"
    assert result["locations"][0]["physicalLocation"]["region"]["startLine"] == opening


def test_the_corpus_flipped_gate_points_at_an_output_line():
    path = ROOT / "corpus" / "broken" / "compare-and-swap-2x2-flipped-gate.json"
    [result] = sarif_of(path)["runs"][0]["results"]
    line = result["locations"][0]["physicalLocation"]["region"]["startLine"]
    assert '"bits"' in path.read_text(encoding="utf-8").splitlines()[line - 1]
