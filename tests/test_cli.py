"""Tests of the command line: exit statuses, the text and JSON reports, stats and build.

Commands run through ``sortcheck.cli.main`` with string buffers for the two
streams; a few run as a separate process.  Verdicts and counterexamples are
checked against an evaluator written here (a comparator puts the smaller value
on the first channel of its pair) and against Python's ``sorted``; figures of
files are recounted here from the raw JSON of the file.
"""

from __future__ import annotations

import io
import json
import os
import re
import shutil
import subprocess
import sys
import time
from pathlib import Path

import pytest

from sortcheck.cli import main
from sortcheck.load import parse_netlist, read_netlist
from gate_reference import run_gates
from reference import run as evaluate  # comparators applied value by value, independently

ROOT = Path(__file__).resolve().parent.parent
CORPUS = ROOT / "corpus"

MERGE_EXCHANGE_16 = str(CORPUS / "merge-exchange-16.json")
BITONIC_16 = str(CORPUS / "bitonic-16.json")
MERGE_EXCHANGE_24 = str(CORPUS / "merge-exchange-24.json")
MEDIAN_OF_9 = str(CORPUS / "median-of-9.json")
MERGER_8 = str(CORPUS / "odd-even-merger-8.json")
CIRCUIT = str(CORPUS / "compare-and-swap-2x2.json")
# A correct sorter of 4 words of 8 bits: 32 input bits, beyond exhaustive simulation, so undecided by the
# simulate engine alone (sampling proves nothing); auto proves it by lifting.
UNDECIDED = str(CORPUS / "gates" / "merge-exchange-4-w8-mux.json")
SAMPLING = ("--engine", "simulate")
BROKEN_GATES = str(CORPUS / "broken" / "compare-and-swap-2x2-flipped-gate.json")
BROKEN_INSERTION = str(CORPUS / "broken" / "insertion-6-truncated.json")
BROKEN_MERGE_EXCHANGE = str(CORPUS / "broken" / "merge-exchange-16-missing-comparator.json")
BROKEN_MEDIAN = str(CORPUS / "broken" / "median-of-9-missing-comparator.json")
BROKEN_MERGER = str(CORPUS / "broken" / "odd-even-merger-8-missing-comparator.json")
BROKEN_BITONIC = str(CORPUS / "broken" / "bitonic-8-reversed-comparator.json")

FAMILY_NAMES = ("merge-exchange", "bitonic", "odd-even-transposition", "insertion", "pairwise")
RESULT_KEYS = {"path", "kind", "property", "verdict", "engine", "seconds", "stats", "counterexample", "error"}
SUMMARY_KEYS = {"proved", "refuted", "unknown", "error"}


# --- running the command line ---------------------------------------------------------

class Run:
    """The outcome of one call of ``main``."""

    def __init__(self, argv: list[str]):
        out, err = io.StringIO(), io.StringIO()
        self.argv = argv
        self.status = main(argv, stdout=out, stderr=err)
        self.stdout = out.getvalue()
        self.stderr = err.getvalue()
        assert "Traceback" not in self.stdout + self.stderr, self.stderr

    def json(self) -> dict:
        return json.loads(self.stdout)


def run(*argv: str) -> Run:
    return Run(list(argv))


def error_lines(stderr: str) -> list[str]:
    return [line for line in stderr.splitlines() if line.startswith("error: ")]


# --- an independent evaluator and the properties' meaning ---------------------------------

def comparators_of(path: str) -> tuple[int, list[tuple[int, int]]]:
    """Channels and comparators of a network file, read from its raw JSON."""
    doc = json.loads(Path(path).read_text(encoding="utf-8"))
    if "comparators" in doc:
        pairs = doc["comparators"]
    else:
        pairs = [pair for layer in doc["layers"] for pair in layer]
    return doc["channels"], [(a, b) for a, b in pairs]


def greedy_depth(channels: int, comparators) -> int:
    ready = [0] * channels
    for a, b in comparators:
        ready[a] = ready[b] = max(ready[a], ready[b]) + 1
    return max(ready, default=0)


def breaks(prop: dict, values, outputs) -> bool:
    """Whether ``outputs`` (for input ``values``) break the property given as its JSON object."""
    name = prop["name"]
    if name == "sorts":
        return list(outputs) != sorted(values, reverse=prop.get("order") == "descending")
    if name == "merges":
        split = prop["split"]
        first, second = list(values[:split]), list(values[split:])
        assert first == sorted(first) and second == sorted(second), "not an input a merger speaks about"
        return list(outputs) != sorted(values)
    if name == "selects":
        count = prop["count"]
        smallest = sorted(values)[:count]
        head = list(outputs[:count])
        return head != smallest if prop.get("sorted") else sorted(head) != smallest
    if name == "median":
        middle = (len(values) - 1) // 2
        return outputs[middle] != sorted(values)[middle]
    raise AssertionError(f"unexpected property {prop}")


def all_zero_one_inputs_sorted(channels: int, comparators) -> bool:
    """Whether the comparators sort every 0-1 input, all 2^n inputs at once.

    Wire ``i`` is an integer whose bit ``x`` is bit ``i`` of input ``x``; on 0-1
    values the minimum is AND and the maximum OR.  The outputs are sorted for
    every input exactly when no channel holds a 1 where the next holds a 0.
    """
    inputs = range(1 << channels)
    wires = [sum(((x >> i) & 1) << x for x in inputs) for i in range(channels)]
    for a, b in comparators:
        wires[a], wires[b] = wires[a] & wires[b], wires[a] | wires[b]
    return all(wires[i] & ~wires[i + 1] == 0 for i in range(channels - 1))


def check_counterexample(result: dict) -> None:
    """The counterexample is a 0-1 input the network maps to ``output`` and that breaks the property."""
    example = result["counterexample"]
    if result["kind"] == "gate-circuit":  # words: replayed with the independent gate evaluator
        circuit = read_netlist(result["path"])
        assert example["domain"] == "words"
        assert example["output"] == run_gates(circuit, example["input"])
        assert result["property"]["name"] == "sorts" and example["output"] != sorted(example["input"])
        return
    channels, comparators = comparators_of(result["path"])
    assert len(example["input"]) == channels
    assert set(example["input"]) <= {0, 1}
    assert example["output"] == evaluate(comparators, example["input"])
    assert sorted(example["output"]) == sorted(example["input"])
    assert breaks(result["property"], example["input"], example["output"])


def check_report_shape(report: dict, paths: list[str]) -> None:
    """Every fixed key of the check report, and a summary that counts the results."""
    assert report["sortcheck_report"] == 1
    assert set(report) >= {"sortcheck_report", "results", "summary"}
    assert [result["path"] for result in report["results"]] == paths
    for result in report["results"]:
        assert RESULT_KEYS <= set(result)
        assert result["verdict"] in SUMMARY_KEYS
        assert isinstance(result["seconds"], (int, float)) and result["seconds"] >= 0
        if result["verdict"] == "refuted":
            assert isinstance(result["counterexample"], dict)
            check_counterexample(result)
        else:
            assert result["counterexample"] is None
        if result["verdict"] == "error":
            assert set(result["error"]) >= {"message", "where"}
            assert isinstance(result["error"]["message"], str) and result["error"]["message"]
        else:
            assert result["error"] is None
            assert isinstance(result["property"], dict)
            assert isinstance(result["engine"], str)
    counts = {verdict: sum(r["verdict"] == verdict for r in report["results"]) for verdict in SUMMARY_KEYS}
    assert set(report["summary"]) == SUMMARY_KEYS
    assert report["summary"] == counts


#: A network on 8 channels that claims median, which needs an odd number of channels.
CLAIMS_MEDIAN_ON_8 = {"sortcheck": 1, "kind": "comparator-network", "channels": 8, "property": {"name": "median"},
                      "comparators": [[0, 1], [2, 3]]}


@pytest.fixture
def bad_files(tmp_path: Path) -> dict[str, tuple[str, str | None]]:
    """Bad netlists: path -> (a phrase the message must hold, the place it must name or None)."""
    files = {}

    def add(name: str, content: str | bytes | None, phrase: str, where: str | None) -> None:
        path = tmp_path / name
        if isinstance(content, bytes):
            path.write_bytes(content)
        elif isinstance(content, str):
            path.write_text(content, encoding="utf-8")
        files[str(path)] = (phrase, where)

    add("missing.json", None, "no such file", None)
    add("truncated.json", '{"sortcheck": 1, "kind": "comparator-network",\n', "not JSON", "line 2, column 1")
    add("out-of-range.json", json.dumps({"sortcheck": 1, "kind": "comparator-network", "channels": 8,
                                         "comparators": [[0, 1], [0, 9]]}),
        "out of range", "comparators[1]")
    add("self-loop.json", json.dumps({"sortcheck": 1, "kind": "comparator-network", "channels": 4,
                                      "layers": [[[0, 1]], [[2, 2]]]}),
        "itself", "layers[1][0]")
    add("claim-does-not-fit.json", json.dumps(CLAIMS_MEDIAN_ON_8), "odd number", "property")
    add("latin1.json", b'{"name": "caf\xe9"}', "UTF-8", "byte 13")  # 0-based offset of the 0xe9 byte
    return files


# --- exit statuses of check -------------------------------------------------------------

def test_proved_network_exits_0_and_reports_proved():
    result = run("check", MERGE_EXCHANGE_16)
    assert result.status == 0
    lines = result.stdout.splitlines()
    assert lines[0].split() == ["PROVED", MERGE_EXCHANGE_16]
    assert result.stderr == ""


def test_several_proved_networks_exit_0():
    assert run("check", MERGE_EXCHANGE_16, BITONIC_16, MEDIAN_OF_9, MERGER_8).status == 0


def test_refuted_network_exits_1():
    result = run("check", BROKEN_INSERTION)
    assert result.status == 1
    assert result.stdout.splitlines()[0].split() == ["REFUTED", BROKEN_INSERTION]


def test_proved_and_refuted_exit_1():
    assert run("check", MERGE_EXCHANGE_16, BROKEN_MERGE_EXCHANGE).status == 1


def test_refuted_and_unknown_exit_1():
    result = run("check", UNDECIDED, BROKEN_GATES, *SAMPLING, "--format", "json")
    assert result.status == 1
    assert [r["verdict"] for r in result.json()["results"]] == ["unknown", "refuted"]


def test_undecided_gate_circuit_alone_is_unknown_exit_3():
    result = run("check", UNDECIDED, *SAMPLING)
    assert result.status == 3
    assert result.stdout.splitlines()[0].split() == ["UNKNOWN", UNDECIDED]


def test_small_gate_circuit_is_proved_by_lifting_or_by_exhaustive_simulation():
    result = run("check", CIRCUIT, "--format", "json", "--jobs", "1")  # one process: lift, then bdd (no race)
    assert result.status == 0
    assert result.json()["results"][0]["engine"] == "lift"  # a compare-and-swap lifts to one comparator
    result = run("check", CIRCUIT, *SAMPLING, "--format", "json")
    assert result.status == 0 and "all 16 inputs were evaluated" in result.json()["results"][0]["scope"]


def test_gate_circuit_with_enumerate_engine_is_unknown_exit_3():
    assert run("check", CIRCUIT, "--engine", "enumerate").status == 3


def test_proved_and_unknown_exit_3():
    assert run("check", CIRCUIT, UNDECIDED, *SAMPLING).status == 3


def test_tiny_timeout_on_a_large_network_is_unknown_and_fast(tmp_path):
    network = tmp_path / "merge-exchange-30.json"
    assert run("build", "merge-exchange", "30", "--output", str(network)).status == 0
    started = time.perf_counter()
    result = run("check", str(network), "--timeout", "0.001", "--format", "json")
    elapsed = time.perf_counter() - started
    assert result.status == 3
    assert elapsed < 1.5
    (entry,) = result.json()["results"]
    assert entry["verdict"] == "unknown"
    assert entry["counterexample"] is None and entry["error"] is None
    assert entry["stats"]["channels"] == 30


def test_network_beyond_the_size_limit_is_unknown_exit_3(tmp_path):
    network = tmp_path / "merge-exchange-128.json"  # more channels than enumerate takes
    assert run("build", "merge-exchange", "128", "--output", str(network)).status == 0
    started = time.perf_counter()
    result = run("check", str(network), "--format", "json", "--engine", "enumerate")
    assert result.status == 3
    assert time.perf_counter() - started < 1.5
    assert result.json()["results"][0]["verdict"] == "unknown"


def test_error_wins_over_every_other_verdict(tmp_path):
    missing = str(tmp_path / "missing.json")
    result = run("check", CIRCUIT, BROKEN_GATES, UNDECIDED, missing, *SAMPLING, "--format", "json")
    assert result.status == 2
    report = result.json()
    check_report_shape(report, [CIRCUIT, BROKEN_GATES, UNDECIDED, missing])
    assert report["summary"] == {"proved": 1, "refuted": 1, "unknown": 1, "error": 1}


def test_error_before_good_files_does_not_stop_them(tmp_path):
    missing = str(tmp_path / "missing.json")
    result = run("check", missing, MERGE_EXCHANGE_16, "--format", "json")
    assert result.status == 2
    assert [r["verdict"] for r in result.json()["results"]] == ["error", "proved"]


# --- bad netlists ---------------------------------------------------------------------

def test_each_bad_file_exits_2_with_one_located_line(bad_files):
    for path, (phrase, where) in bad_files.items():
        result = run("check", path)
        assert result.status == 2, path
        (line,) = error_lines(result.stderr)
        expected_start = f"error: {path}: {where}: " if where else f"error: {path}: "
        assert line.startswith(expected_start), line
        assert phrase in line, line


def test_bad_files_in_json_are_error_results_and_good_files_are_checked(bad_files):
    paths = list(bad_files) + [MERGE_EXCHANGE_16, BROKEN_INSERTION]
    result = run("check", *paths, "--format", "json")
    assert result.status == 2
    report = result.json()
    check_report_shape(report, paths)
    errors = len(bad_files)
    assert report["summary"] == {"proved": 1, "refuted": 1, "unknown": 0, "error": errors}
    for entry in report["results"][:errors]:
        phrase, where = bad_files[entry["path"]]
        assert entry["verdict"] == "error"
        assert entry["error"]["where"] == where
        assert phrase in entry["error"]["message"]
    assert len(error_lines(result.stderr)) == errors


def test_bad_file_in_text_report_keeps_others(bad_files):
    path = next(iter(bad_files))
    result = run("check", path, MERGE_EXCHANGE_16)
    assert result.status == 2
    assert f"PROVED   {MERGE_EXCHANGE_16}" in result.stdout
    assert path in result.stdout


def test_a_directory_without_netlists_is_a_usage_error(tmp_path):
    result = run("check", str(tmp_path))
    assert result.status == 2
    assert f"{tmp_path}: no netlist files" in result.stderr
    assert result.stdout == ""


def test_a_directory_stands_for_every_netlist_below_it(tmp_path):
    (tmp_path / "deep").mkdir()
    shutil.copy(MERGE_EXCHANGE_16, tmp_path / "a.json")
    shutil.copy(BROKEN_INSERTION, tmp_path / "deep" / "b.json")
    (tmp_path / "notes.txt").write_text("not a netlist")
    result = run("check", str(tmp_path), "--format", "json")
    assert result.status == 1
    report = result.json()
    assert [Path(r["path"]).relative_to(tmp_path).as_posix() for r in report["results"]] == ["a.json", "deep/b.json"]
    assert report["summary"] == {"proved": 1, "refuted": 1, "unknown": 0, "error": 0}


# --- usage errors ---------------------------------------------------------------------

USAGE_ERRORS = [
    ["check", MERGE_EXCHANGE_16, "--engine", "nosuch"],
    ["check", MERGE_EXCHANGE_16, "--timeout", "0"],
    ["check", MERGE_EXCHANGE_16, "--timeout", "-1"],
    ["check", MERGE_EXCHANGE_16, "--timeout", "abc"],
    ["check", MERGE_EXCHANGE_16, "--timeout", "nan"],
    ["check", MERGE_EXCHANGE_16, "--format", "xml"],
    ["check"],
    ["frobnicate"],
    ["stats"],
    ["build", "insertion"],
]


@pytest.mark.parametrize("argv", USAGE_ERRORS, ids=" ".join)
def test_usage_error_exits_2_with_a_message(argv):
    result = Run(argv)
    assert result.status == 2
    assert "error: " in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1
    assert result.stdout == ""


@pytest.mark.parametrize("spec", ["merges", "foo", "selects:x", "selects:", "merges:0", "sorts:sideways",
                                  '{"name": "median"', '{"name": "sorts", "oder": "ascending"}'])
def test_bad_property_exits_2_naming_property(spec):
    result = run("check", MERGE_EXCHANGE_16, "--property", spec, "--format", "json")
    assert result.status == 2
    assert "error: " in result.stderr and "--property" in result.stderr
    assert len(result.stderr.strip().splitlines()) == 1
    assert result.stdout == ""


def test_no_command_exits_2_with_usage_on_stderr():
    result = run()
    assert result.status == 2
    assert "usage" in result.stderr.lower()
    assert result.stdout == ""


def test_unwritable_output_exits_2(tmp_path):
    target = tmp_path / "no-such-folder" / "report.json"
    result = run("check", MERGE_EXCHANGE_16, "--format", "json", "--output", str(target))
    assert result.status == 2
    assert "error: " in result.stderr and str(target) in result.stderr
    assert not target.exists()


# --- the property from the command line --------------------------------------------------

def test_command_line_property_overrides_the_claim():
    # The median network claims median; as a sorter it fails.
    result = run("check", MEDIAN_OF_9, "--property", "sorts", "--format", "json")
    assert result.status == 1
    report = result.json()
    check_report_shape(report, [MEDIAN_OF_9])
    (entry,) = report["results"]
    assert entry["property"] == {"name": "sorts", "order": "ascending", "signed": False}
    assert entry["verdict"] == "refuted"


def test_command_line_property_replaces_a_claim_that_does_not_fit(tmp_path):
    path = tmp_path / "claims-median-on-8.json"
    path.write_text(json.dumps(CLAIMS_MEDIAN_ON_8), encoding="utf-8")
    assert run("check", str(path)).status == 2
    result = run("check", str(path), "--property", "sorts", "--format", "json")
    assert result.status == 1
    check_report_shape(result.json(), [str(path)])
    assert result.stderr == ""


def test_command_line_property_weaker_than_sorting_is_proved():
    result = run("check", MERGE_EXCHANGE_16, "--property", "selects:3:sorted", "--format", "json")
    assert result.status == 0
    assert result.json()["results"][0]["property"] == {"name": "selects", "count": 3, "sorted": True}


def test_descending_property_refutes_an_ascending_sorter():
    result = run("check", BITONIC_16, "--property", "sorts:desc", "--format", "json")
    assert result.status == 1
    report = result.json()
    check_report_shape(report, [BITONIC_16])
    assert report["results"][0]["property"]["order"] == "descending"


def test_json_property_on_the_command_line():
    result = run("check", MERGER_8, "--property", '{"name": "merges", "split": 4}', "--format", "json")
    assert result.status == 0
    assert result.json()["results"][0]["property"] == {"name": "merges", "split": 4}


def test_merger_is_no_sorter():
    result = run("check", MERGER_8, "--property", "sorts", "--format", "json")
    assert result.status == 1
    check_report_shape(result.json(), [MERGER_8])


@pytest.mark.parametrize("spec,other", [("median", MEDIAN_OF_9), ("merges:16", MERGE_EXCHANGE_24),
                                        ("selects:17", MERGE_EXCHANGE_24)])
def test_property_that_does_not_fit_is_an_error_for_that_file_only(spec, other):
    result = run("check", MERGE_EXCHANGE_16, other, "--property", spec, "--format", "json")
    assert result.status == 2
    report = result.json()
    check_report_shape(report, [MERGE_EXCHANGE_16, other])
    first, second = report["results"]
    assert first["verdict"] == "error"
    assert first["error"]["where"].startswith("--property")
    assert second["verdict"] == "proved"
    assert second["property"] == json.loads(run("check", other, "--property", spec, "--format", "json")
                                            .stdout)["results"][0]["property"]
    (line,) = error_lines(result.stderr)
    assert line.startswith(f"error: {MERGE_EXCHANGE_16}: --property")


def test_median_on_nine_channels_fits_and_is_proved():
    assert run("check", MEDIAN_OF_9, "--property", "median").status == 0


# --- the JSON report ------------------------------------------------------------------

def test_json_report_of_every_verdict():
    paths = [MERGE_EXCHANGE_16, MEDIAN_OF_9, UNDECIDED, BROKEN_MERGE_EXCHANGE, BROKEN_BITONIC, BROKEN_MEDIAN,
             BROKEN_MERGER, BROKEN_INSERTION]
    result = run("check", *paths, "--format", "json")
    assert result.status == 1
    report = result.json()
    check_report_shape(report, paths)
    assert report["summary"] == {"proved": 3, "refuted": 5, "unknown": 0, "error": 0}
    by_path = {entry["path"]: entry for entry in report["results"]}
    me16 = by_path[MERGE_EXCHANGE_16]
    channels, comparators = comparators_of(MERGE_EXCHANGE_16)
    assert me16["kind"] == "comparator-network"
    assert me16["engine"] == "enumerate"
    assert me16["property"] == {"name": "sorts", "order": "ascending", "signed": False}
    assert {k: me16["stats"][k] for k in ("channels", "size", "depth")} == {
        "channels": channels, "size": len(comparators), "depth": greedy_depth(channels, comparators)}
    assert by_path[MEDIAN_OF_9]["property"] == {"name": "median"}
    assert by_path[BROKEN_MERGER]["property"] == {"name": "merges", "split": 4}
    circuit = by_path[UNDECIDED]
    assert circuit["kind"] == "gate-circuit" and circuit["verdict"] == "proved" and circuit["engine"] == "lift"
    for path in (BROKEN_MERGE_EXCHANGE, BROKEN_BITONIC, BROKEN_MEDIAN, BROKEN_MERGER, BROKEN_INSERTION):
        assert by_path[path]["verdict"] == "refuted"
        assert by_path[path]["engine"] == "enumerate"


def test_json_report_is_one_object_and_nothing_else():
    result = run("check", BROKEN_INSERTION, "--format", "json")
    decoder = json.JSONDecoder()
    report, end = decoder.raw_decode(result.stdout)
    assert result.stdout[end:].strip() == ""
    assert isinstance(report, dict)


def test_text_counterexample_shows_the_json_counterexample():
    text = run("check", BROKEN_INSERTION).stdout
    example = run("check", BROKEN_INSERTION, "--format", "json").json()["results"][0]["counterexample"]
    rows = {line.split()[0]: "".join(line.split()[1:]) for line in text.splitlines()
            if line.split() and line.split()[0] in ("input", "output")}
    assert rows["input"] == "".join(map(str, example["input"]))
    assert rows["output"] == "".join(map(str, example["output"]))


# --- --output ---------------------------------------------------------------------------

def test_output_file_gets_the_json_and_stdout_the_text(tmp_path):
    target = tmp_path / "report.json"
    paths = [MERGE_EXCHANGE_16, BROKEN_INSERTION]
    result = run("check", *paths, "--format", "json", "--output", str(target))
    assert result.status == 1
    report = json.loads(target.read_text(encoding="utf-8"))
    check_report_shape(report, paths)
    assert report["summary"] == {"proved": 1, "refuted": 1, "unknown": 0, "error": 0}
    assert result.stdout.splitlines()[0].split() == ["PROVED", MERGE_EXCHANGE_16]
    assert _without_seconds(result.stdout) == _without_seconds(run("check", *paths).stdout)
    with pytest.raises(json.JSONDecodeError):
        json.loads(result.stdout)
    assert f"REFUTED  {BROKEN_INSERTION}" in result.stdout


def _without_seconds(text: str) -> str:
    """The text report without its timings, which differ from run to run."""
    return re.sub(r"\d+\.\d+ s\b", "<seconds>", text)


def test_output_file_gets_the_text_report(tmp_path):
    target = tmp_path / "report.txt"
    result = run("check", MERGE_EXCHANGE_16, "--output", str(target))
    assert result.status == 0
    written = target.read_text(encoding="utf-8")
    assert written.splitlines()[0].split() == ["PROVED", MERGE_EXCHANGE_16]
    assert result.stdout.splitlines()[0].split() == ["PROVED", MERGE_EXCHANGE_16]


# --- stats ------------------------------------------------------------------------------

def circuit_figures(path: str) -> dict:
    """Words, width, gates and depth of a gate circuit file, recounted from its raw JSON."""
    doc = json.loads(Path(path).read_text(encoding="utf-8"))
    level: dict[str, int] = {}
    for gate in doc["gates"]:
        level[gate["out"]] = 1 + max((level.get(signal, 0) for signal in gate["in"] if isinstance(signal, str)),
                                     default=0)
    widths = {word["width"] for word in doc["inputs"]}
    (width,) = widths
    return {"words": len(doc["inputs"]), "width": width, "gates": len(doc["gates"]),
            "depth": max(level.values())}


def test_stats_json_of_networks_and_a_gate_circuit():
    paths = [MERGE_EXCHANGE_16, BITONIC_16, BROKEN_BITONIC, CIRCUIT]
    result = run("stats", *paths, "--format", "json")
    assert result.status == 0
    rows = result.json()["results"]
    assert [row["path"] for row in rows] == paths
    for row in rows[:3]:
        channels, comparators = comparators_of(row["path"])
        assert row["kind"] == "comparator-network"
        assert row["stats"]["channels"] == channels
        assert row["stats"]["size"] == len(comparators)
        assert row["stats"]["depth"] == greedy_depth(channels, comparators)
    # Batcher's bitonic sorter on n = 2^k channels: (n/4) k (k+1) comparators in k (k+1) / 2 layers
    # (Batcher, "Sorting networks and their applications", AFIPS SJCC 1968).
    assert (rows[1]["stats"]["size"], rows[1]["stats"]["depth"]) == (16 // 4 * 4 * 5, 4 * 5 // 2)
    circuit = rows[3]
    assert circuit["kind"] == "gate-circuit"
    figures = {key: circuit["stats"][key] for key in ("words", "width", "gates", "depth")}
    assert figures == {"words": 2, "width": 2, "gates": 10, "depth": 4}
    assert figures == circuit_figures(CIRCUIT)


def test_stats_text():
    result = run("stats", BITONIC_16, CIRCUIT)
    assert result.status == 0
    network_line, circuit_line = result.stdout.splitlines()
    assert network_line.startswith(f"{BITONIC_16}: ")
    assert "16 channels" in network_line and "80 comparators" in network_line and "depth 10" in network_line
    assert circuit_line.startswith(f"{CIRCUIT}: ")
    assert "2 words of 2 bits" in circuit_line and "10 gates" in circuit_line and "depth 4" in circuit_line


def test_stats_of_a_bad_file_exits_2_and_keeps_the_others(bad_files):
    path, (phrase, where) = next((p, v) for p, v in bad_files.items() if v[1] is not None)
    result = run("stats", path, BITONIC_16, "--format", "json")
    assert result.status == 2
    rows = result.json()["results"]
    assert [row["path"] for row in rows] == [path, BITONIC_16]
    assert rows[0]["error"]["where"] == where and phrase in rows[0]["error"]["message"]
    assert rows[1]["stats"]["size"] == 80
    (line,) = error_lines(result.stderr)
    assert line.startswith(f"error: {path}: {where}: ")


def test_stats_text_of_a_bad_file_exits_2(tmp_path):
    result = run("stats", str(tmp_path / "missing.json"))
    assert result.status == 2
    assert error_lines(result.stderr) == [f"error: {tmp_path / 'missing.json'}: no such file"]


# --- build ------------------------------------------------------------------------------

def build_cases():
    return [(family, n) for family in FAMILY_NAMES for n in range(1, 13)
            if family != "bitonic" or n & (n - 1) == 0]


@pytest.mark.parametrize("family,n", build_cases())
def test_build_writes_a_network_that_sorts(family, n):
    result = run("build", family, str(n))
    assert result.status == 0
    network = parse_netlist(result.stdout, "<build>")
    assert network.channels == n
    assert network.claim is not None and network.claim.to_json()["name"] == "sorts"
    assert all_zero_one_inputs_sorted(n, network.comparators)


def test_evaluator_notices_a_network_that_does_not_sort():
    # Guard for the test above: the evaluator must be able to say no.
    assert not all_zero_one_inputs_sorted(3, [(0, 1), (1, 2)])
    assert not all_zero_one_inputs_sorted(2, [(1, 0)])
    assert all_zero_one_inputs_sorted(3, [(0, 1), (1, 2), (0, 1)])


def test_build_output_writes_the_file(tmp_path):
    target = tmp_path / "pairwise-12.json"
    result = run("build", "pairwise", "12", "--output", str(target))
    assert result.status == 0
    assert result.stdout == ""
    assert str(target) in result.stderr
    text = target.read_text(encoding="utf-8")
    assert text == run("build", "pairwise", "12").stdout
    network = parse_netlist(text, str(target))
    assert all_zero_one_inputs_sorted(12, network.comparators)
    assert run("check", str(target)).status == 0


@pytest.mark.parametrize("n", [9, 10])
def test_built_odd_even_transposition_has_the_published_size(n):
    network = parse_netlist(run("build", "odd-even-transposition", str(n)).stdout)
    # Odd-even transposition sort (Habermann, "Parallel neighbor-sort", CMU, 1972): n rounds of
    # alternately floor(n/2) and floor((n-1)/2) adjacent comparators, n (n - 1) / 2 in all.
    assert (network.size, network.depth) == (n * (n - 1) // 2, n)


@pytest.mark.parametrize("argv", [["build", "quicksort", "8"], ["build", "bitonic", "12"],
                                  ["build", "insertion", "0"], ["build", "bitonic", "0"],
                                  ["build", "pairwise", "abc"], ["build", "pairwise", "-3"],
                                  ["build", "pairwise", "2.5"]], ids=" ".join)
def test_build_bad_arguments_exit_2(argv, tmp_path):
    target = tmp_path / "out.json"
    result = Run(argv + ["--output", str(target)])
    assert result.status == 2
    assert "error: " in result.stderr
    assert result.stdout == ""
    assert not target.exists()


# --- as a separate process ------------------------------------------------------------------

def _environment() -> dict:
    env = dict(os.environ)
    env["PYTHONPATH"] = str(ROOT) + os.pathsep + env.get("PYTHONPATH", "")
    return env


def test_python_m_sortcheck_proves_merge_exchange_16():
    process = subprocess.run([sys.executable, "-m", "sortcheck", "check", "corpus/merge-exchange-16.json"],
                             cwd=ROOT, env=_environment(), capture_output=True, text=True, timeout=60)
    assert process.returncode == 0, process.stderr
    assert process.stdout.splitlines()[0].split() == ["PROVED", "corpus/merge-exchange-16.json"]


def test_python_m_sortcheck_bad_file_has_no_traceback(tmp_path):
    bad = tmp_path / "bad.json"
    bad.write_text('{"sortcheck": 1, "kind": "comparator-network", "channels": 4, "comparators": [[0, 4]]}',
                   encoding="utf-8")
    process = subprocess.run([sys.executable, "-m", "sortcheck", "check", str(bad), "--format", "json"],
                             cwd=ROOT, env=_environment(), capture_output=True, text=True, timeout=60)
    assert process.returncode == 2
    assert "Traceback" not in process.stderr + process.stdout
    assert error_lines(process.stderr) == [f"error: {bad}: comparators[0]: channel 4 is out of range for 4 channels"]
    assert json.loads(process.stdout)["summary"]["error"] == 1


def test_console_script_refutes_a_broken_network():
    script = shutil.which("sortcheck")
    if script is None:
        pytest.skip("the sortcheck console script is not installed on PATH")
    process = subprocess.run([script, "check", "corpus/broken/insertion-6-truncated.json"],
                             cwd=ROOT, env=_environment(), capture_output=True, text=True, timeout=60)
    assert process.returncode == 1, process.stderr
