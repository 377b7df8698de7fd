"""The two-change stage of a network repair split into pieces: in this process, on worker processes and on Dask.

Every split run must find what the search in one process finds: the same
changes (the first proved pair in search order), the same outcome and the
same count of candidates tried up to the deciding piece.  The broken networks
are merge exchange and bitonic networks (Knuth, TAOCP vol. 3, 5.3.4: they
sort) with comparators removed; each repair is judged again with the
independent evaluator of ``tests/test_repair.py`` (every 0-1 input, by the
0-1 principle).
"""

from __future__ import annotations

import json

import pytest

from sortcheck.engines import Budget
from sortcheck.engines.runners.distribute import InProcess, LocalProcesses
from sortcheck.explain.repair import repair_network
from sortcheck.explain.repair_bank import seed_bank
from sortcheck.explain.repair_candidates import _Counts, all_candidates, guide_for, search_space
from sortcheck.explain.repair_pieces import TwoChangePieces, two_change_pieces
from sortcheck.explain.repair_search import CandidateSearch
from sortcheck.load import write_netlist
from sortcheck.model import ComparatorNetwork, Selects, Sorts
from sortcheck.model.families import bitonic, merge_exchange
from test_repair import holds_everywhere


def without(network: ComparatorNetwork, *indices: int) -> ComparatorNetwork:
    kept = [c for i, c in enumerate(network.comparators) if i not in indices]
    return ComparatorNetwork(network.channels, tuple(kept))


CASES = [
    (without(merge_exchange(10), 3, 20), Sorts(), "repaired"),
    (without(merge_exchange(12), 5, 30), Sorts(), "repaired"),
    (without(bitonic(8), 2, 17), Sorts(), "repaired"),
    (without(merge_exchange(10), 0, 9), Selects(count=3), "repaired"),
    (without(merge_exchange(8), 0, 5, 10, 15), Sorts(), "none"),  # four removed: no two changes repair it
]


def the_search(network, prop):
    """The search state the two-change stage starts from, built as :func:`repair_network` builds it."""
    from sortcheck.engines import check

    example = check(network, prop).counterexample.input
    guide = guide_for(network.comparators, network.channels, prop, example)
    space, _ = search_space(network, prop, guide, 10 ** 6)
    return CandidateSearch(network, prop, Budget(), "auto", seed_bank(network, prop, example), _Counts()), space, \
        guide, example


def assert_same(split, single, status):
    assert single.status == split.status == status
    assert split.changes == single.changes
    assert split.candidates_tried == single.candidates_tried
    if status == "repaired":
        assert len(split.changes) == 2 and split.verified
        assert holds_everywhere(split.network, split.verdict.prop)


@pytest.mark.parametrize("network, prop, status", CASES)
def test_pieces_in_this_process_and_on_workers_find_the_single_search_repair(network, prop, status):
    single = repair_network(network, prop, max_changes=2)
    assert single.pieces == 1 and single.ran_on == "this process"
    here = repair_network(network, prop, max_changes=2, runner=InProcess())
    assert_same(here, single, status)
    assert here.pieces > 1
    with LocalProcesses(2) as runner:
        local = repair_network(network, prop, max_changes=2, runner=runner)
    assert_same(local, single, status)
    assert local.ran_on == "2 local processes" and local.pieces == here.pieces


def test_dask_finds_the_single_search_repair(dask_address):
    from sortcheck.engines.runners.distribute import DaskCluster

    network, prop, status = CASES[1]
    single = repair_network(network, prop, max_changes=2)
    with DaskCluster(dask_address) as runner:
        split = repair_network(network, prop, max_changes=2, runner=runner)
    assert_same(split, single, status)
    assert split.ran_on == f"dask {dask_address}"


def test_pieces_partition_the_first_changes_in_order():
    network, prop, _ = CASES[0]
    search, space, guide, example = the_search(network, prop)
    pieces = two_change_pieces(search, space, guide, example, "auto", 10 ** 6, 0, pieces=7)
    firsts = len(all_candidates(network.comparators, space, guide))
    assert [p["first"][0] for p in pieces][0] == 0 and pieces[-1]["first"][1] == firsts
    assert all(a["first"][1] == b["first"][0] for a, b in zip(pieces, pieces[1:]))
    assert len(pieces) == 7 and all(p["of"] == firsts for p in pieces)
    assert json.loads(json.dumps(pieces)) == pieces  # plain data
    assert all(len(vector) == network.channels and set(vector) <= {"0", "1"} for vector in pieces[0]["bank"])


def test_a_piece_of_another_search_is_refused_not_misread():
    network, prop, _ = CASES[0]
    search, space, guide, example = the_search(network, prop)
    piece = two_change_pieces(search, space, guide, example, "auto", 10 ** 6, 0, pieces=4)[0]
    with pytest.raises(ValueError, match="does not fit"):
        TwoChangePieces().check_piece(network, prop, {**piece, "of": piece["of"] + 1}, Budget())
    with pytest.raises(ValueError, match="not a piece of a repair"):
        TwoChangePieces().check_piece(network, prop, {"kind": "block"}, Budget())


def test_a_runner_that_does_not_split_searches_here():
    network, prop, status = CASES[0]
    outcome = repair_network(network, prop, max_changes=2, runner=InProcess(splits=False))
    assert outcome.status == status and outcome.pieces == 1 and outcome.ran_on == "this process"


def test_cli_repair_runs_the_pieces_on_worker_processes(tmp_path, capsys):
    from sortcheck.cli import main

    network, prop, _ = CASES[1]
    path = tmp_path / "line-card-sorter-12.json"
    write_netlist(network, path)
    results = {}
    for jobs in ("1", "2"):
        assert main(["repair", str(path), "--jobs", jobs, "--format", "json"]) == 0
        (results[jobs],) = json.loads(capsys.readouterr().out)["results"]
    assert results["1"]["repair"]["changes"] == results["2"]["repair"]["changes"]
    assert results["1"]["repair"]["ran_on"] == "this process" and results["1"]["repair"]["pieces"] == 1
    assert results["2"]["repair"]["ran_on"] == "2 local processes" and results["2"]["repair"]["pieces"] > 1
    assert main(["repair", str(path), "--jobs", "2"]) == 0
    assert "pieces on 2 local processes" in capsys.readouterr().out


def test_a_deadline_ends_a_split_search_with_the_budget_outcome():
    network = without(merge_exchange(24), 20, 90)  # measured: no repair within 120 s in one process
    with LocalProcesses(2) as runner:
        outcome = repair_network(network, Sorts(), Budget.of(3), max_changes=2, runner=runner)
    assert outcome.status == "budget" and not outcome.changes
    assert outcome.seconds < 10
