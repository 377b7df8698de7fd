"""CI gating: directories and pyproject settings, JUnit XML read back with junitparser, SARIF 2.1.0
validated against the official schema (tests/data/sarif-schema-2.1.0.json, the 2.1.0 final schema,
version rtm.5) and pointing at the right lines."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import jsonschema
import junitparser
import pytest

from sortcheck.load import write_netlist
from sortcheck.model import ComparatorNetwork
from sortcheck.model.families import build_family
from cli_runner import run

ROOT = Path(__file__).resolve().parent.parent
SARIF_SCHEMA = json.loads((ROOT / "tests" / "data" / "sarif-schema-2.1.0.json").read_text(encoding="utf-8"))

INVALID = """{
  "sortcheck": 1,
  "kind": "comparator-network",
  "channels": 4,
  "comparators": [
    [0, 1],
    [2, 3],
    [1, 7],
    [0, 2]
  ]
}
"""


@pytest.fixture
def mixed(tmp_path):
    """A directory with two proved, two refuted, one undecided and one invalid netlist."""
    folder = tmp_path / "netlists"
    (folder / "broken").mkdir(parents=True)
    shutil.copy(ROOT / "corpus" / "merge-exchange-16.json", folder / "a-proved.json")
    shutil.copy(ROOT / "corpus" / "median-of-9.json", folder / "b-proved.json")
    shutil.copy(ROOT / "corpus" / "broken" / "insertion-6-truncated.json", folder / "broken" / "c-refuted.json")
    network = build_family("merge-exchange", 12)
    write_netlist(ComparatorNetwork(12, network.comparators[:-1] + ((11, 0),), "d-refuted"),
                  folder / "broken" / "d-refuted.json")
    write_netlist(build_family("merge-exchange", 128), folder / "e-undecided.json")  # beyond enumeration
    (folder / "f-invalid.json").write_text(INVALID, encoding="utf-8")
    return folder


def test_a_mixed_directory_gives_exit_2_and_matching_junit_and_sarif(mixed, tmp_path):
    junit_file, sarif_file = tmp_path / "report.xml", tmp_path / "report.sarif"
    status, out, err = run("check", str(mixed), "--engine", "enumerate", "--format", "junit",
                           "--output", str(junit_file))
    assert status == 2
    assert "6 files: 2 proved, 2 refuted, 1 unknown, 1 error" in out  # the text summary still shows
    suite = next(iter(junitparser.JUnitXml.fromfile(str(junit_file))))
    assert (suite.tests, suite.failures, suite.errors, suite.skipped) == (6, 2, 1, 1)
    outcomes = {case.name.split(" [")[0].rsplit("/", 1)[-1]: [type(r).__name__ for r in case.result]
                for case in suite}
    assert outcomes == {"a-proved.json": [], "b-proved.json": [], "c-refuted.json": ["Failure"],
                        "d-refuted.json": ["Failure"], "e-undecided.json": ["Skipped"], "f-invalid.json": ["Error"]}
    failure = next(case for case in suite if "c-refuted" in case.name).result[0]
    assert "input:" in failure.text and "output:" in failure.text and "out of order" in failure.message

    status, _, _ = run("check", str(mixed), "--engine", "enumerate", "--format", "sarif", "--output", str(sarif_file))
    assert status == 2
    log = json.loads(sarif_file.read_text(encoding="utf-8"))
    jsonschema.validate(log, SARIF_SCHEMA)
    results = log["runs"][0]["results"]
    assert len(results) == 3  # two refuted, one invalid; nothing for proved or undecided
    by_file = {Path(r["locations"][0]["physicalLocation"]["artifactLocation"]["uri"]).name: r for r in results}
    assert set(by_file) == {"c-refuted.json", "d-refuted.json", "f-invalid.json"}
    rules = [rule["id"] for rule in log["runs"][0]["tool"]["driver"]["rules"]]
    for result in results:
        assert rules[result["ruleIndex"]] == result["ruleId"]
    invalid = by_file["f-invalid.json"]
    assert invalid["ruleId"] == "invalid-netlist"
    assert invalid["locations"][0]["physicalLocation"]["region"]["startLine"] == 8  # the line of [1, 7]
    assert "comparators[2]" in invalid["message"]["text"]


def test_sarif_points_a_refuted_network_at_the_comparator_that_sealed_the_fault(mixed, tmp_path):
    status, out, _ = run("check", str(mixed / "broken" / "c-refuted.json"), "--format", "sarif")
    assert status == 1
    result = json.loads(out)["runs"][0]["results"][0]
    line = result["locations"][0]["physicalLocation"]["region"]["startLine"]
    status, report, _ = run("check", str(mixed / "broken" / "c-refuted.json"), "--format", "json")
    sealed = json.loads(report)["results"][0]["diagnosis"]["sealed_at"]
    text = (mixed / "broken" / "c-refuted.json").read_text().splitlines()
    # The file lists one run of disjoint comparators per line; find the line holding comparator `sealed`.
    layer_lines = [i + 1 for i, row in enumerate(text) if row.strip().startswith("[[")]
    document = json.loads("\n".join(text))
    counted, expected_line = 0, None
    for line_number, layer in zip(layer_lines, document["layers"]):
        if counted <= sealed < counted + len(layer):
            expected_line = line_number
        counted += len(layer)
    assert line == expected_line


def test_pyproject_table_gives_paths_and_per_path_settings(tmp_path, monkeypatch):
    (tmp_path / "nets").mkdir()
    shutil.copy(ROOT / "corpus" / "merge-exchange-16.json", tmp_path / "nets" / "sorter.json")
    shutil.copy(ROOT / "corpus" / "merge-exchange-16.json", tmp_path / "as-selector.json")
    write_netlist(build_family("merge-exchange", 128), tmp_path / "wide.json")
    (tmp_path / "pyproject.toml").write_text(
        '[tool.sortcheck]\n'
        'paths = ["nets", {path = "as-selector.json", property = "selects:3:sorted"},\n'
        '         {path = "wide.json", engine = "enumerate", timeout = 5}]\n'
        'timeout = 30\n', encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    status, out, err = run("check", "--format", "json")
    report = json.loads(out)
    assert status == 3, err
    by_path = {r["path"]: r for r in report["results"]}
    assert by_path[str(Path("nets") / "sorter.json")]["verdict"] == "proved"
    assert by_path["as-selector.json"]["property"] == {"name": "selects", "count": 3, "sorted": True}
    assert by_path["wide.json"]["verdict"] == "unknown" and by_path["wide.json"]["engine"] == "enumerate"


@pytest.mark.parametrize("table, phrase", [
    ('paths = []', "tool.sortcheck.paths: expected a non-empty list of paths"),
    ('paths = ["x.json"]\nengine = 3', "tool.sortcheck.engine: expected an engine name"),
    ('paths = [{path = "x.json", timeout = -1}]', "tool.sortcheck.paths[0].timeout: expected a positive number"),
    ('paths = [{path = "x.json", colour = "red"}]', "tool.sortcheck.paths[0].colour: unknown key 'colour'"),
    ('paths = [{path = "x.json", property = "merges"}]', "needs a split position"),
    ('paths = [7]', "tool.sortcheck.paths[0]: expected a path or a table"),
])
def test_bad_pyproject_settings_are_usage_errors_with_places(tmp_path, monkeypatch, table, phrase):
    (tmp_path / "pyproject.toml").write_text(f"[tool.sortcheck]\n{table}\n", encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    status, out, err = run("check")
    assert status == 2 and out == ""
    assert "pyproject.toml" in err and phrase in err


def test_no_paths_and_no_pyproject_is_a_usage_error(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    status, _, err = run("check")
    assert status == 2 and "no pyproject.toml" in err


def test_jobs_give_the_same_report_as_one_process(mixed):
    _, one, _ = run("check", str(mixed), "--engine", "enumerate", "--format", "json")
    _, two, _ = run("check", str(mixed), "--engine", "enumerate", "--format", "json", "--jobs", "2")

    def stable(text):
        report = json.loads(text)
        for result in report["results"]:
            result.pop("seconds")
            if result["figures"]:
                result["figures"] = {k: v for k, v in result["figures"].items() if "second" not in k}
        return report

    assert stable(one) == stable(two)
