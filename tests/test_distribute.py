"""Checks split into pieces: in this process, on local worker processes, and on a real Dask cluster on loopback.

Every split run must give what the single-process run gives: the verdict, the
counterexample (the first in evaluation order) and the count of failing
inputs.  The networks are merge exchange networks (Knuth, TAOCP vol. 3,
5.3.4: they sort) checked without the reduction, so that there are many
pieces, and the same networks with a reversed comparator appended on the top
two channels: after sorting, channel n-1 holds 1 exactly when some input is
1 and channel n-2 exactly when two are, so the reversed comparator unsorts
exactly the inputs with a single 1 -- n failing 0-1 inputs, the first in
evaluation order being ``1 0 0 ... 0`` (worked out by hand, and confirmed
below with the independent evaluator of ``tests/reference.py``).
"""

from __future__ import annotations

import itertools
import json
import os
import random
import signal
import threading
import time
from pathlib import Path

import numpy as np
import pytest

from reference import breaks, run
from sortcheck.engines.networks import enumeration_pieces
from sortcheck.engines.base import Budget, Options, Status
from sortcheck.engines.runners.distribute import InProcess, LocalProcesses, check_split, run_pieces
from sortcheck.engines.networks.enumeration import EnumerateEngine
from sortcheck.engines.runners.pieces import job_data, job_from_data
from sortcheck.load import write_netlist
from sortcheck.model import ComparatorNetwork, Median, Merges, Selects, Sorts
from sortcheck.model.families import build_family

UNREDUCED = EnumerateEngine(reduction=False)


def one_hot_breaker(n: int) -> ComparatorNetwork:
    """Merge exchange on n channels, then the reversed comparator (n-1, n-2) (see the module text)."""
    network = build_family("merge-exchange", n)
    return ComparatorNetwork(n, network.comparators + ((n - 1, n - 2),))


def missing_comparator(n: int, index: int) -> ComparatorNetwork:
    network = build_family("merge-exchange", n)
    return ComparatorNetwork(n, network.comparators[:index] + network.comparators[index + 1:])


@pytest.fixture
def split_everything(monkeypatch):
    """Split every check that has at least two units, into about ``pieces`` pieces."""
    def apply(pieces: int = 8):
        monkeypatch.setattr(enumeration_pieces, "SPLIT_SECONDS", 0.0)
        monkeypatch.setattr(enumeration_pieces, "PIECE_SECONDS", 1e-9)
        monkeypatch.setattr(enumeration_pieces, "MAX_PIECES", pieces)
    return apply


@pytest.fixture(scope="module")
def dask_runner(dask_address):
    from sortcheck.engines.runners.distribute import DaskCluster
    with DaskCluster(dask_address) as runner:
        yield runner


def same_as_single(engine, network, options, verdict):
    whole = engine.check(network, Sorts(), Budget(), options)
    assert verdict.status == whole.status
    assert verdict.counterexample == whole.counterexample
    for figure in ("failing_inputs", "vectors_evaluated", "vectors_total", "vectors_after_reduction"):
        assert verdict.figures.get(figure) == whole.figures.get(figure), figure
    return whole


def test_the_one_hot_breaker_fails_exactly_on_inputs_with_a_single_one():
    network = one_hot_breaker(10)  # the independent evaluator on all 1024 inputs
    failing = [v for v in itertools.product((0, 1), repeat=10) if breaks(Sorts(), list(v), run(network.comparators, v))]
    assert sorted(failing) == sorted(tuple(int(c == k) for c in range(10)) for k in range(10))


def test_pieces_partition_the_units_in_a_fixed_order(split_everything):
    split_everything(8)
    network = build_family("merge-exchange", 22)
    pieces = UNREDUCED.pieces(network, Sorts())
    assert pieces == UNREDUCED.pieces(network, Sorts())
    units = pieces[0]["of"]
    assert units == 64  # 2^22 vectors: tiles of 2^16 lanes times 2^6 combinations
    assert [p["units"][0] for p in pieces] == [0] + [p["units"][1] for p in pieces[:-1]]
    assert pieces[-1]["units"][1] == units and len(pieces) == 8
    assert json.loads(json.dumps(pieces)) == pieces


def test_small_checks_are_not_split():
    # merge exchange 24 reduces to 73 vectors: not worth any process start-up
    assert EnumerateEngine().pieces(build_family("merge-exchange", 24), Sorts()) is None
    verdict = check_split(build_family("merge-exchange", 24), runner=LocalProcesses(2))
    assert verdict.status == Status.PROVED
    assert verdict.figures["ran_on"] == "this process" and verdict.figures["pieces"] == 1


def test_a_job_survives_plain_data():
    network = one_hot_breaker(6)
    data = job_data("enumerate", network, Sorts(), {"kind": "block", "units": [0, 1]}, Options(count=True), None)
    assert json.loads(json.dumps(data)) == data
    name, netlist, prop, piece, options, deadline = job_from_data(json.loads(json.dumps(data)))
    assert (name, netlist, prop, piece, options, deadline) == (
        "enumerate", network, Sorts(), {"kind": "block", "units": [0, 1]}, Options(count=True), None)


def test_a_budget_stop_condition_stops_the_engine():
    verdict = UNREDUCED.check(build_family("merge-exchange", 20), Sorts(), Budget(stopped=lambda: True))
    assert verdict.status == Status.UNKNOWN


@pytest.mark.parametrize("count", [False, True])
@pytest.mark.parametrize("network", [build_family("merge-exchange", 22), one_hot_breaker(22),
                                     missing_comparator(22, 60)], ids=["proved", "one-hot", "missing"])
def test_local_processes_give_the_single_process_result(split_everything, network, count):
    split_everything(8)
    options = Options(count=count)
    pieces = UNREDUCED.pieces(network, Sorts(), options)
    for runner in (InProcess(), LocalProcesses(2)):
        with runner:
            verdict = run_pieces(UNREDUCED, network, Sorts(), pieces, Budget(), options, runner)
        same_as_single(UNREDUCED, network, options, verdict)
        assert verdict.figures["pieces"] == 8 and verdict.figures["ran_on"] == runner.ran_on
    if network.comparators[-1] == (21, 20):
        assert verdict.counterexample.input == (1,) + (0,) * 21
        assert (verdict.figures.get("failing_inputs") == 22) == count


def test_the_reduced_check_splits_the_same_way(split_everything):
    split_everything(6)
    network = build_family("odd-even-transposition", 32)  # sorts (Knuth, TAOCP vol. 3, 5.3.4, exercise 37)
    engine = EnumerateEngine()
    pieces = engine.pieces(network, Sorts())
    assert len(pieces) == 6
    with LocalProcesses(2) as runner:
        verdict = run_pieces(engine, network, Sorts(), pieces, Budget(), Options(), runner)
    same_as_single(engine, network, Options(), verdict)
    assert verdict.status == Status.PROVED and "checked in 6 pieces on 2 local processes" in verdict.scope


@pytest.mark.parametrize("prop", [Sorts(order="descending"), Selects(count=3, sorted=True), Median(),
                                  Merges(split=9)], ids=lambda p: p.short())
@pytest.mark.parametrize("seed", range(3))
def test_every_property_splits_to_the_same_result(split_everything, prop, seed):
    split_everything(5)
    rng = random.Random(seed)
    base = list(build_family("merge-exchange", 19).comparators)
    if prop == Sorts(order="descending"):
        base = [(b, a) for a, b in base]
    del base[rng.randrange(len(base))]  # usually breaks it, with few failing inputs
    network = ComparatorNetwork(19, tuple(base))
    for count in (False, True):
        options = Options(count=count)
        pieces = UNREDUCED.pieces(network, prop, options)
        if isinstance(prop, Merges):  # (m+1)(n-m+1) inputs: one unit, nothing to split
            assert pieces is None
            continue
        assert len(pieces) == 5
        verdict = run_pieces(UNREDUCED, network, prop, pieces, Budget(), options, InProcess())
        whole = UNREDUCED.check(network, prop, Budget(), options)
        assert (verdict.status, verdict.counterexample) == (whole.status, whole.counterexample)
        assert verdict.figures.get("failing_inputs") == whole.figures.get("failing_inputs")
        if verdict.counterexample is not None:
            example = list(verdict.counterexample.input)
            assert breaks(prop, example, run(network.comparators, example))  # tests/reference.py


class RecordingPieces:
    """The unreduced enumerate engine, whose pieces leave files in ``folder`` saying that they started and how
    they ended (pieces run in other processes, so files are what the test can read back).

    Only the piece that begins at unit 0 checks the network it is given (the one-hot breaker: its
    counterexample ``1 0 ... 0`` is the first vector of that piece); the others check merge exchange, which
    sorts, on the same channels, after idling until their budget stops them (at most 60 s), so they have work
    that outlasts the first piece's and no counterexample (the one-hot breaker has
    failing inputs in other pieces too).  The first piece starts its work only once the piece that begins at
    unit ``waits_for`` has started, so that piece is at work when the counterexample ends the check, whatever
    the scheduling.
    """

    name = "enumerate"
    cooperative = True

    def __init__(self, folder, waits_for: int):
        self.folder, self.waits_for = str(folder), waits_for

    def check_piece(self, netlist, prop, piece, budget, options=Options()):
        folder, first = Path(self.folder), piece["units"][0]
        (folder / f"started-{first}").touch()
        waited = 0
        while first == 0 and not (folder / f"started-{self.waits_for}").exists() and waited < 3000:
            time.sleep(0.01)  # at most 30 s, should no other worker take a piece
            waited += 1
        while first != 0 and not budget.expired() and waited < 6000:
            time.sleep(0.01)  # the later pieces idle (at most 60 s) until stopped: the first piece's counterexample
            waited += 1       # takes as long to come as their own work, so they must not finish before it
        checked = netlist if first == 0 else build_family("merge-exchange", netlist.channels)
        verdict = UNREDUCED.check_piece(checked, prop, piece, budget, options)
        (folder / f"ended-{first}").write_text(verdict.status.value)
        return verdict

    def outcomes(self) -> tuple[set[int], dict[int, str]]:
        """The first units of the pieces that started, and how those that ended ended."""
        folder = Path(self.folder)
        started = {int(path.name.split("-")[1]) for path in folder.glob("started-*")}
        return started, {int(path.name.split("-")[1]): path.read_text() for path in folder.glob("ended-*")}


def cancellation_case(split_everything, folder):
    """The one-hot breaker on 30 channels in 4 pieces (seconds of work each), and the recording engine."""
    split_everything(4)
    network = one_hot_breaker(30)
    pieces = UNREDUCED.pieces(network, Sorts())
    assert len(pieces) == 4 and pieces[0]["units"][0] == 0
    return network, pieces, RecordingPieces(folder, waits_for=pieces[1]["units"][0])


def test_the_first_counterexample_cancels_the_other_local_pieces(split_everything, tmp_path):
    network, pieces, engine = cancellation_case(split_everything, tmp_path)
    with LocalProcesses(2) as runner:
        verdict = run_pieces(engine, network, Sorts(), pieces, Budget(), Options(), runner)
    assert verdict.status == Status.REFUTED and verdict.counterexample.input == (1,) + (0,) * 29
    started, ended = engine.outcomes()
    assert pieces[1]["units"][0] in started  # the second piece was at work when the counterexample came ...
    assert ended == {0: "refuted"}  # ... and its process was ended: no piece after the first ran to its end


def test_a_killed_local_worker_is_replaced_and_the_check_completes(split_everything):
    psutil = pytest.importorskip("psutil")
    split_everything(16)
    network = build_family("merge-exchange", 29)
    pieces = UNREDUCED.pieces(network, Sorts())
    outcome = {}
    with LocalProcesses(2) as runner:
        thread = threading.Thread(target=lambda: outcome.update(
            verdict=run_pieces(UNREDUCED, network, Sorts(), pieces, Budget(), Options(), runner)))
        thread.start()
        children = []
        while thread.is_alive() and not children:
            time.sleep(0.05)
            me = psutil.Process()  # forked workers share this process's command line (Dask's are spawned)
            children = [child for child in me.children() if child.cmdline() == me.cmdline()]
        time.sleep(0.1)
        assert thread.is_alive(), "the check ended before a worker could be killed"
        os.kill(children[0].pid, signal.SIGKILL)
        thread.join(60)
    same_as_single(UNREDUCED, network, Options(), outcome["verdict"])
    assert outcome["verdict"].figures["vectors_evaluated"] == 1 << 29


@pytest.mark.parametrize("count", [False, True])
@pytest.mark.parametrize("network", [build_family("merge-exchange", 22), one_hot_breaker(22)],
                         ids=["proved", "one-hot"])
def test_dask_gives_the_single_process_result(split_everything, dask_runner, network, count):
    split_everything(8)
    options = Options(count=count)
    pieces = UNREDUCED.pieces(network, Sorts(), options)
    verdict = run_pieces(UNREDUCED, network, Sorts(), pieces, Budget(), options, dask_runner)
    same_as_single(UNREDUCED, network, options, verdict)
    assert verdict.figures["ran_on"].startswith("dask tcp://127.0.0.1:")


def test_the_first_counterexample_cancels_running_dask_pieces(split_everything, dask_runner, tmp_path):
    network, pieces, engine = cancellation_case(split_everything, tmp_path)
    verdict = run_pieces(engine, network, Sorts(), pieces, Budget(), Options(), dask_runner)
    assert verdict.status == Status.REFUTED and verdict.counterexample.input == (1,) + (0,) * 29
    # the workers are free again soon: the running pieces polled the stop variable
    client = dask_runner.client
    deadline = time.monotonic() + 10
    while any(client.processing().values()) and time.monotonic() < deadline:
        time.sleep(0.05)
    assert not any(client.processing().values())
    for _ in range(1200):  # every piece that started ends (at most 2 minutes: a piece left to run takes seconds)
        started, ended = engine.outcomes()
        if started <= set(ended):
            break
        time.sleep(0.1)
    assert pieces[1]["units"][0] in started  # the second piece was at work when the counterexample came
    assert ended[0] == "refuted"
    # no piece after the first ran to its end: those at work saw the stop variable and stopped, unfinished
    assert {first: status for first, status in ended.items() if first != 0} == dict.fromkeys(started - {0}, "unknown")


CLIENT = """
import sys
sys.path.insert(0, {tests!r})
from sortcheck.engines.base import Budget, Options
from sortcheck.engines.networks import enumeration_pieces
from sortcheck.engines.runners.distribute import DaskCluster, run_pieces
from sortcheck.model import Sorts
from sortcheck.model.families import build_family
from test_distribute import UNREDUCED, RecordingPieces

enumeration_pieces.SPLIT_SECONDS, enumeration_pieces.PIECE_SECONDS, enumeration_pieces.MAX_PIECES = 0.0, 1e-9, 2
network = build_family("merge-exchange", 30)
pieces = UNREDUCED.pieces(network, Sorts())
with DaskCluster({address!r}) as runner:
    run_pieces(RecordingPieces({folder!r}, pieces[1]["units"][0]), network, Sorts(), pieces, Budget(), Options(),
               runner)
"""


@pytest.mark.skipif(not hasattr(signal, "SIGKILL"), reason="needs SIGKILL")
def test_dask_pieces_stop_when_their_client_is_killed_and_the_workers_stay(dask_runner, tmp_path):
    import subprocess
    import sys

    # a client process runs merge exchange 30 (it sorts) in 2 pieces of seconds each, one per worker
    code = CLIENT.format(tests=str(Path(__file__).parent), address=dask_runner.address, folder=str(tmp_path))
    client_process = subprocess.Popen([sys.executable, "-c", code])
    engine = RecordingPieces(tmp_path, 0)
    try:
        for _ in range(1200):  # both pieces at work (at most 2 minutes)
            if len(engine.outcomes()[0]) == 2 or client_process.poll() is not None:
                break
            time.sleep(0.1)
    finally:
        client_process.kill()  # SIGKILL: the client cannot cancel anything itself
        client_process.wait()
    assert len(engine.outcomes()[0]) == 2, "the pieces did not start"
    for _ in range(1200):  # both pieces end (at most 2 minutes; one left to run takes seconds)
        started, ended = engine.outcomes()
        if started <= set(ended):
            break
        time.sleep(0.1)
    assert ended == dict.fromkeys(started, "unknown")  # both stopped unfinished: the scheduler gave them up
    assert len(dask_runner.client.scheduler_info()["workers"]) == 2  # the workers are not ours: they stay


def test_cli_runs_pieces_on_local_processes_and_on_dask(split_everything, dask_address, tmp_path, capsys):
    from sortcheck.cli import main

    split_everything(4)
    # odd-even transposition on 30 channels without its fifth comparator from the end: the reduction
    # leaves 122,865 vectors in 15 combinations, so the check splits with the reduction on
    network = build_family("odd-even-transposition", 30)
    path = tmp_path / "transposition-30-broken.json"
    write_netlist(ComparatorNetwork(30, network.comparators[:-5] + network.comparators[-4:]), path)
    reports = {}
    for where in (["--jobs", "1"], ["--jobs", "2"], ["--cluster", dask_address]):
        status = main(["check", str(path), "--count", "--no-minimize", "--format", "json", *where])
        assert status == 1
        (result,) = json.loads(capsys.readouterr().out)["results"]
        reports[where[0] + where[1]] = result
    assert reports["--jobs1"]["figures"]["ran_on"] == "this process"
    assert reports["--jobs2"]["figures"]["ran_on"] == "2 local processes"
    assert reports[f"--cluster{dask_address}"]["figures"]["ran_on"] == f"dask {dask_address}"
    single = reports.pop("--jobs1")
    example = single["counterexample"]["input"]
    assert breaks(Sorts(), example, run(network.comparators[:-5] + network.comparators[-4:], example))
    for result in reports.values():
        assert result["figures"]["pieces"] == 4
        assert result["counterexample"] == single["counterexample"]
        assert result["figures"]["failing_inputs"] == single["figures"]["failing_inputs"] > 0
    assert main(["check", str(path), "--jobs", "2", "--no-minimize"]) == 1
    assert "in 4 pieces on 2 local processes" in capsys.readouterr().out


def test_a_killed_dask_worker_is_replaced_and_the_check_completes(split_everything, dask_runner):
    split_everything(16)
    network = build_family("merge-exchange", 27)
    pieces = UNREDUCED.pieces(network, Sorts())
    client = dask_runner.client
    outcome = {}
    thread = threading.Thread(target=lambda: outcome.update(
        verdict=run_pieces(UNREDUCED, network, Sorts(), pieces, Budget(), Options(), dask_runner)))
    thread.start()
    while thread.is_alive() and not any(client.processing().values()):
        time.sleep(0.02)
    time.sleep(0.2)
    assert thread.is_alive(), "the check ended before a worker could be killed"
    victim = next(iter(client.run(os.getpid).values()))
    os.kill(victim, signal.SIGKILL)
    thread.join(90)
    same_as_single(UNREDUCED, network, Options(), outcome["verdict"])
    assert outcome["verdict"].figures["vectors_evaluated"] == 1 << 27
    client.wait_for_workers(2, timeout=60)


@pytest.mark.parametrize("where", ["local", "dask"])
def test_a_deadline_ends_a_split_check_with_unknown(split_everything, request, where):
    split_everything(16)
    network = build_family("merge-exchange", 29)  # about 5 s of evaluation without the reduction
    pieces = UNREDUCED.pieces(network, Sorts())
    runner = LocalProcesses(2) if where == "local" else request.getfixturevalue("dask_runner")
    started = time.perf_counter()
    verdict = run_pieces(UNREDUCED, network, Sorts(), pieces, Budget.of(0.5), Options(), runner)
    elapsed = time.perf_counter() - started
    if where == "local":
        runner.close()
    assert verdict.status == Status.UNKNOWN and verdict.stop.value == "timeout"
    assert "nothing is proved" in verdict.scope
    assert verdict.figures.get("vectors_evaluated", 0) < 1 << 29
    assert elapsed < 2.0


def test_an_unreachable_scheduler_is_a_usage_error_only_when_pieces_need_it(split_everything):
    pytest.importorskip("distributed")
    from sortcheck.engines.runners.distribute import DaskCluster
    from sortcheck.errors import UsageError

    runner = DaskCluster("tcp://127.0.0.1:9", connect_seconds=1.0)  # the discard port: nothing listens
    small = check_split(build_family("merge-exchange", 24), runner=runner)  # not split: never connects
    assert small.status == Status.PROVED and small.figures["ran_on"] == "this process"
    split_everything(4)
    with pytest.raises(UsageError, match="cannot reach a Dask scheduler at tcp://127.0.0.1:9"):
        check_split(build_family("odd-even-transposition", 32), engine="enumerate", runner=runner)
    runner.close()


def test_a_piece_of_another_layout_is_refused_not_misread(split_everything):
    split_everything(4)
    network = build_family("merge-exchange", 22)
    piece = dict(UNREDUCED.pieces(network, Sorts())[0], of=63)  # as if another version had reduced differently
    verdict = UNREDUCED.check_piece(network, Sorts(), piece, Budget(), Options())
    assert verdict.status == Status.UNKNOWN and verdict.stop.value == "unsupported"
    assert "nothing was checked" in verdict.scope


# --- auto for gate circuits: its own steps here, then threshold SAT as pieces ------------------------------------

#: Values of words x0..x3 on which :func:`trapped` breaks (2^-20 of the inputs: random simulation misses them).
TRAP = (21, 10, 27, 6)


def trapped(words: int = 6, width: int = 5):
    """The counting sorter with output bit 0 of its largest word flipped exactly when x0..x3 hold :data:`TRAP`."""
    from sortcheck.model import Gate, GateCircuit, OutputWord
    from sortcheck.model.counting import counting_sorter

    circuit = counting_sorter(words, width)
    gates, terms = list(circuit.gates), []
    for word, value in enumerate(TRAP):
        for bit in range(width):
            name = f"x{word}[{bit}]"
            if not value >> bit & 1:
                gates.append(Gate(f"trap_not_{word}_{bit}", "not", (name,)))
                name = f"trap_not_{word}_{bit}"
            terms.append(name)
    gates.append(Gate("trap", "and", tuple(terms)))
    last = circuit.outputs[-1]
    gates.append(Gate("trap_bit0", "xor", (last.bits[0], "trap")))
    outputs = circuit.outputs[:-1] + (OutputWord(last.name, ("trap_bit0",) + last.bits[1:]),)
    return GateCircuit(circuit.inputs, tuple(gates), outputs)


def test_the_trap_breaks_exactly_where_it_says():
    from gate_reference import breaks_words, run_gates

    circuit = trapped()
    caught = list(TRAP) + [3, 30]
    assert breaks_words(Sorts(), caught, run_gates(circuit, caught), 5)  # the independent evaluator
    missed = list(TRAP[:3]) + [7, 3, 30]
    assert not breaks_words(Sorts(), missed, run_gates(circuit, missed), 5)


@pytest.mark.parametrize("circuit, status", [(None, Status.PROVED), ("trapped", Status.REFUTED)])
def test_auto_for_gate_circuits_splits_its_threshold_sat_step(dask_runner, monkeypatch, circuit, status):
    from sortcheck.engines import GATE_PIPELINE
    from sortcheck.model.counting import counting_sorter

    monkeypatch.setattr(GATE_PIPELINE, "bdd_width", 0)  # threshold SAT's pieces are what is tested: no BDDs
    circuit = trapped() if circuit else counting_sorter(6, 5)
    single = check_split(circuit, Sorts(), runner=InProcess(splits=False))  # what --jobs 1 runs
    assert single.status is status and single.figures["method"] == "threshold-sat"
    with LocalProcesses(2) as local:
        runs = [check_split(circuit, Sorts(), runner=local), check_split(circuit, Sorts(), runner=dask_runner)]
    for verdict, where in zip(runs, ["2 local processes", dask_runner.ran_on]):
        assert verdict.status is status and verdict.engine == single.engine == "sat"
        assert verdict.figures["pieces"] == 4 and verdict.figures["ran_on"] == where
        assert verdict.figures["method"] == "threshold-sat"
        assert verdict.figures["steps"][0].startswith("simulation of corner cases")  # the steps before the pieces
        assert verdict.counterexample == single.counterexample
    if status is Status.REFUTED:
        assert single.counterexample.input[:4] == TRAP


@pytest.mark.parametrize("circuit, engine", [("counting", "bdd"), ("lowered", "lift"), ("trapped", "bdd")])
def test_auto_for_gate_circuits_races_lifting_and_bdds_on_workers(circuit, engine):
    # The race gives what the strategies give one after another (--jobs 1); the reference for the circuits'
    # verdicts is the independent evaluator of gate_reference on every input (30 and 20 input bits: sampled
    # where 2^30 is too many, the trap's one failing input included).
    from gate_reference import breaks_words, run_gates
    from sortcheck.model.counting import counting_sorter
    from sortcheck.model.families import merge_exchange
    from sortcheck.model.lowering import lower_network

    circuit = {"counting": lambda: counting_sorter(6, 3), "trapped": trapped,
               "lowered": lambda: lower_network(merge_exchange(5), 4, style="xor")}[circuit]()
    single = check_split(circuit, Sorts(), runner=InProcess(splits=False))
    with LocalProcesses(2) as local:
        raced = check_split(circuit, Sorts(), runner=local)
    assert raced.engine == single.engine == engine and raced.status is single.status
    assert raced.figures["ran_on"] == "2 local processes (strategies raced)"
    steps = raced.figures["steps"]
    assert any(step.startswith(("BDDs of the threshold conditions", "bdd was stopped")) for step in steps)
    assert any(step.startswith(("lifted to", "lifting stopped", "lift was stopped")) for step in steps)
    assert raced.counterexample == single.counterexample
    if raced.counterexample is not None:
        values = list(raced.counterexample.input)
        assert breaks_words(Sorts(), values, run_gates(circuit, values), circuit.width)
    else:
        rng = np.random.default_rng(7)
        for values in rng.integers(0, 1 << circuit.width, size=(500, circuit.words)).tolist():
            assert not breaks_words(Sorts(), values, run_gates(circuit, values), circuit.width)


def test_auto_for_gate_circuits_decided_before_threshold_sat_runs_here():
    from sortcheck.model.families import merge_exchange
    from sortcheck.model.lowering import lower_network

    with LocalProcesses(2) as local:
        verdict = check_split(lower_network(merge_exchange(8), 8, style="mux"), Sorts(), runner=local)
    assert verdict.status is Status.PROVED and verdict.figures["method"] == "lift"
    assert verdict.figures["ran_on"] == "this process" and verdict.figures["pieces"] == 1


def test_a_dask_worker_gets_glibc_thresholds_that_suit_numpy(monkeypatch):
    from sortcheck.engines.runners import distribute

    calls = []

    class FakeLibc:
        def mallopt(self, parameter, value):
            calls.append((parameter, value))
            return 1

    monkeypatch.setattr(distribute.ctypes, "CDLL", lambda name: FakeLibc())
    monkeypatch.setattr(distribute, "_allocator_tuned", False)
    monkeypatch.delenv("MALLOC_TRIM_THRESHOLD_", raising=False)
    distribute._roomier_allocator()
    assert calls == []  # not under a Dask nanny: nothing changes
    monkeypatch.setenv("MALLOC_TRIM_THRESHOLD_", "65536")  # what the nanny sets
    monkeypatch.setattr(distribute.sys, "platform", "linux")
    distribute._roomier_allocator()
    distribute._roomier_allocator()  # once per process
    assert calls == [(-1, 64 << 20), (-3, 32 << 20)]  # M_TRIM_THRESHOLD, M_MMAP_THRESHOLD (glibc malloc.h)


def random_network(n: int, per_channel: int, seed: int) -> ComparatorNetwork:
    """A perfect matching, then ``per_channel * n`` random comparators (as ``tests/benchmarks/bench_distribute.py``)."""
    rng = random.Random(seed)
    comparators = [(i, i + 1) for i in range(0, n - 1, 2)]
    for _ in range(per_channel * n):
        comparators.append(tuple(sorted(rng.sample(range(n), 2))))
    return ComparatorNetwork(n, tuple(comparators), name=f"random-{n}")


def test_a_long_count_after_a_short_suffix_runs_in_pieces_on_two_processes(tmp_path, capsys):
    """Random 40 channels, seed 11: the reduction leaves 156 million vectors but only 7 comparators after it, so
    the work per vector besides the comparators decides the time (an estimate by comparators alone said 0.07 s
    and the count ran in one process); counted on 2 processes it gives the count of one process."""
    from sortcheck.cli import main

    network = random_network(40, 1, 11)
    path = tmp_path / "random-40.json"
    write_netlist(network, path)
    assert main(["check", str(path), "--count", "--jobs", "2", "--no-minimize", "--format", "json"]) == 1
    (result,) = json.loads(capsys.readouterr().out)["results"]
    assert result["figures"]["ran_on"] == "2 local processes" and result["figures"]["pieces"] >= 4
    whole = EnumerateEngine().check(network, Sorts(), Budget(), Options(count=True))
    assert result["figures"]["failing_inputs"] == whole.figures["failing_inputs"] > 0
    assert tuple(result["counterexample"]["input"]) == whole.counterexample.input


def test_a_split_count_matches_an_independent_count_and_the_smallest_input_is_reported(split_everything, tmp_path,
                                                                                        capsys):
    """Random 20 channels: the count of failing inputs on 2 processes (pieces of every 0-1 input) and through
    ``check --count --jobs 2`` equals a count of all 2^20 inputs
    evaluated comparator by comparator with numpy (no sortcheck code; the definition of ``breaks`` in
    tests/reference.py, vectorised), and the reported input has the fewest ones or zeros of any failing input."""
    from sortcheck.cli import main

    split_everything(4)
    n = 20
    network = random_network(n, 1, 5)
    inputs = ((np.arange(1 << n)[:, None] >> np.arange(n)) & 1).astype(np.int8)
    wires = inputs.copy()
    for a, b in network.comparators:
        wires[:, a], wires[:, b] = np.minimum(wires[:, a], wires[:, b]), np.maximum(wires[:, a], wires[:, b])
    failing = (wires[:, :-1] > wires[:, 1:]).any(axis=1)
    ones = inputs[failing].sum(axis=1)
    pieces = UNREDUCED.pieces(network, Sorts(), Options(count=True))  # 2^20 vectors: 16 units, 4 pieces
    with LocalProcesses(2) as runner:
        verdict = run_pieces(UNREDUCED, network, Sorts(), pieces, Budget(), Options(count=True), runner)
    assert verdict.figures["ran_on"] == "2 local processes" and verdict.figures["pieces"] == 4
    assert verdict.figures["failing_inputs"] == int(failing.sum()) > 0
    path = tmp_path / "random-20.json"
    write_netlist(network, path)
    assert main(["check", str(path), "--count", "--jobs", "2", "--format", "json"]) == 1
    (result,) = json.loads(capsys.readouterr().out)["results"]
    assert result["figures"]["failing_inputs"] == int(failing.sum())
    example = result["counterexample"]["input"]
    assert breaks(Sorts(), example, run(network.comparators, example))
    assert min(sum(example), n - sum(example)) == int(np.minimum(ones, n - ones).min())
