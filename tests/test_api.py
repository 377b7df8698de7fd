"""The public Python API and the pytest helper."""

from __future__ import annotations

from pathlib import Path

import pytest

import sortcheck
from sortcheck.model.families import build_family
from sortcheck.testing import assert_holds

CORPUS = Path(__file__).resolve().parent.parent / "corpus"


def test_load_and_check_by_path_and_by_model():
    network = sortcheck.load(CORPUS / "median-of-9.json")
    assert isinstance(network, sortcheck.ComparatorNetwork)
    assert sortcheck.check(network).status == sortcheck.Status.PROVED  # its claimed property: median
    verdict = sortcheck.check(str(CORPUS / "median-of-9.json"), "sorts")
    assert verdict.status == sortcheck.Status.REFUTED
    example = verdict.counterexample
    assert isinstance(example, sortcheck.Counterexample)
    assert network.apply(list(example.input)) == list(example.output)
    assert list(example.output) != sorted(example.input)


def test_bad_input_raises_the_project_error_with_its_place(tmp_path):
    bad = tmp_path / "bad.json"
    bad.write_text('{"sortcheck": 1, "kind": "comparator-network", "channels": 2, "comparators": [[0, 2]]}')
    with pytest.raises(sortcheck.NetlistError, match=r"bad.json: comparators\[0\]: channel 2 is out of range"):
        sortcheck.check(bad)
    with pytest.raises(sortcheck.PropertyError, match="median needs an odd number"):
        sortcheck.check(CORPUS / "merge-exchange-16.json", "median")


def test_assert_holds_passes_and_returns_the_verdict():
    verdict = assert_holds(CORPUS / "odd-even-merger-8.json")
    assert verdict.status == sortcheck.Status.PROVED and verdict.prop.name == "merges"


def test_assert_holds_shows_the_counterexample():
    path = CORPUS / "broken" / "insertion-6-truncated.json"
    with pytest.raises(AssertionError) as failure:
        assert_holds(path, "sorts")
    message = str(failure.value)
    network = sortcheck.load(path)
    example = sortcheck.check(network).counterexample
    assert f"input:  {' '.join(map(str, example.input))}" in message
    assert f"output: {' '.join(map(str, example.output))}" in message
    assert str(path) in message and "out of order" in message


def test_assert_holds_does_not_pass_an_undecided_check():
    # One layer of 32 comparators on 64 channels leaves 3^32 0-1 vectors: beyond what enumerate takes.
    wide = sortcheck.ComparatorNetwork(64, tuple((2 * k, 2 * k + 1) for k in range(32)))
    with pytest.raises(AssertionError, match="was not proved"):
        assert_holds(wide, "sorts", engine="enumerate")


def test_pre_commit_hook_runs_the_configured_check():
    text = (CORPUS.parent / ".pre-commit-hooks.yaml").read_text()
    assert "id: sortcheck" in text and "entry: sortcheck check" in text and "pass_filenames: false" in text
