"""No process of a sortcheck run outlives it, and SIGINT and SIGTERM end a run with its report written.

The end-to-end tests start real ``sortcheck`` processes under
``tests/process_tree.py``, signal them while their worker processes are at
work, and read ``/proc`` for what is left 3 s later (Linux only).  A check is
interrupted during ``check --jobs 2`` (threshold SAT pieces of a gate
circuit), ``repair --jobs 2`` (the two-change search of a network, in pieces)
and an isolated solver call (``--engine smt``, which cannot stop itself and
runs in a child process).  The signals of one case are sent to three runs at
once, so that the whole takes a few seconds per case.
"""

from __future__ import annotations

import io
import json
import os
import signal
import subprocess
import sys
import threading
import time
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest

from sortcheck.cli import main
from sortcheck.engines import get_engine
from sortcheck.engines.base import Budget, Status, StopReason, Verdict, interruption
from sortcheck.engines.runners import processes
from sortcheck.engines.runners.interrupts import catching_signals
from sortcheck.engines.runners.isolation import needs_child
from sortcheck.errors import UsageError
from sortcheck.load import write_netlist
from sortcheck.model import ComparatorNetwork, Sorts
from sortcheck.model.circuit_builds import build_circuit
from sortcheck.model.families import build_family
from sortcheck.report import progress

LINUX = pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc and uses prctl")
HARNESS = str(Path(__file__).with_name("process_tree.py"))
SORTCHECK = [sys.executable, "-m", "sortcheck"]


def watched(runs: dict[str, list[str]], workers: int) -> dict[str, dict]:
    """Run each command under the harness at once, with the signal named by its key (``group-`` for the group)."""
    def one(key: str) -> dict:
        name = key.removeprefix("group-")
        argv = [sys.executable, HARNESS, name, str(workers)] + (["--group"] if key != name else []) + ["--"]
        done = subprocess.run(argv + runs[key], capture_output=True, text=True, timeout=300)
        assert done.returncode == 0, done.stderr
        return json.loads(done.stdout)

    with ThreadPoolExecutor(len(runs)) as pool:
        return dict(zip(runs, pool.map(one, runs)))


def assert_nothing_left(key: str, report: dict) -> None:
    assert not report["ended_early"], (key, report["stderr"][-2000:])
    assert report["left"] == [], (key, report)  # no process of the run is alive 3 s after the signal
    if key == "SIGKILL":
        assert report["exit"] == -signal.SIGKILL
    else:  # ended cleanly: it ended and reaped its children itself, and said no more than a report
        assert report["orphans"] == [], (key, report)
        assert "Traceback" not in report["stderr"], report["stderr"]


@pytest.fixture(scope="module")
def netlists(tmp_path_factory) -> Path:
    folder = tmp_path_factory.mktemp("lifetime")
    # a counting-sort circuit: threshold SAT in 4 pieces, after simulation and lifting fail (words of 7 bits:
    # too wide for auto's BDDs, which would prove it in a second)
    write_netlist(build_circuit("counting", 8, 7), folder / "counting-8x7.json")
    # merge exchange on 24 channels without 3 comparators: no repair of 1 change, minutes of 2-change search
    comparators = build_family("merge-exchange", 24).comparators
    dropped = {len(comparators) // 5, len(comparators) // 2, 4 * len(comparators) // 5}
    write_netlist(ComparatorNetwork(24, tuple(c for i, c in enumerate(comparators) if i not in dropped)),
                  folder / "merge-exchange-24-less-3.json")
    write_netlist(build_family("merge-exchange", 20), folder / "merge-exchange-20.json")  # minutes of smt
    return folder


@LINUX
def test_a_split_check_leaves_no_process_and_reports_the_interruption(netlists):
    command = SORTCHECK + ["check", str(netlists / "counting-8x7.json"), "--jobs", "2", "--format", "json"]
    reports = watched({key: command for key in ("SIGKILL", "SIGTERM", "SIGINT", "group-SIGTERM")}, workers=2)
    for key, report in reports.items():
        assert_nothing_left(key, report)
        if key == "SIGKILL":
            continue
        assert report["exit"] == 3  # unknown
        (result,) = json.loads(report["stdout"])["results"]
        assert result["verdict"] == "unknown" and result["stop_reason"] == "interrupted"
        name = key.removeprefix("group-")
        assert result["scope"].startswith(f"interrupted by {name}: ") and "nothing is proved" in result["scope"]
        assert "of the 4 pieces on 2 local processes were proved" in result["scope"]  # what was covered
        assert result["figures"]["interrupted_by"] == name


@LINUX
def test_a_split_repair_leaves_no_process_and_reports_the_interruption(netlists):
    command = SORTCHECK + ["repair", str(netlists / "merge-exchange-24-less-3.json"), "--jobs", "2", "--format",
                           "json"]
    reports = watched({key: command for key in ("SIGKILL", "SIGTERM", "SIGINT")}, workers=2)
    for key, report in reports.items():
        assert_nothing_left(key, report)
        if key != "SIGKILL":
            assert report["exit"] == 3
            repair = json.loads(report["stdout"])["results"][0]["repair"]
            assert repair["status"] == "interrupted" and repair["changes"] == []
            assert repair["reason"] == f"interrupted by {key}: the run was interrupted while searching 2 change(s)"


@LINUX
def test_an_isolated_solver_leaves_no_process_and_reports_the_interruption(netlists, tmp_path):
    def command(name: str) -> list[str]:
        return SORTCHECK + ["check", str(netlists / "merge-exchange-20.json"), "--engine", "smt", "--timeout", "600",
                            "--format", "json", "--output", str(tmp_path / f"{name}.json")]

    reports = watched({key: command(key) for key in ("SIGKILL", "SIGTERM", "SIGINT")}, workers=1)
    for key, report in reports.items():
        assert_nothing_left(key, report)
        if key != "SIGKILL":
            assert report["exit"] == 3
            (result,) = json.loads((tmp_path / f"{key}.json").read_text())["results"]
            assert result["verdict"] == "unknown" and result["stop_reason"] == "interrupted"
            assert "the smt engine had not finished when the run was interrupted" in result["scope"]
    assert sorted(path.name for path in tmp_path.iterdir()) == ["SIGINT.json", "SIGTERM.json"]  # nothing partial


# --- the parts, in this process ------------------------------------------------------------------------------------

@LINUX
def test_a_child_whose_parent_is_already_gone_ends_before_any_work():
    code = ("from sortcheck.engines.runners.processes import bind_to_parent\n"
            "bind_to_parent(1)\n"  # as if the parent had died before the request: init adopted it
            "print('worked')")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert done.returncode == processes.ORPHANED and "worked" not in done.stdout


@LINUX
@pytest.mark.parametrize("binding", ["parent-death signal", "polling the parent"])
def test_a_child_ends_when_its_parent_dies(binding):
    # the parent starts a bound child that would sleep for a minute, prints its pid, and is killed;
    # "polling the parent" is what a child does where there is no parent-death signal
    fallback = "processes._parent_death_signal = lambda number: False\n" if binding == "polling the parent" else ""
    code = ("import os, signal, time\n"
            "from sortcheck.engines.runners import processes\n"
            f"{fallback}"
            "child = processes.start(time.sleep, 60)\n"
            "print(child.pid, flush=True)\n"
            "os.kill(os.getpid(), signal.SIGKILL)")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    pid = int(done.stdout)
    for _ in range(300):  # up to 3 s, looking at /proc
        state = _state(pid)
        if state in (None, "Z"):
            break
        time.sleep(0.01)
    assert _state(pid) in (None, "Z")


@LINUX
def test_an_external_program_gets_sigkill_when_sortcheck_dies(tmp_path):
    # as drat-trim under --certify: the program writes its pid, then the parent kills itself
    pid_file = tmp_path / "program.pid"
    program = f"import os, time; open({str(pid_file)!r}, 'w').write(str(os.getpid())); time.sleep(60)"
    code = ("import os, signal, sys, threading, time\n"
            "from sortcheck.engines.runners.processes import run_program\n"
            f"def watch():\n"
            f"    while not os.path.exists({str(pid_file)!r}) or not open({str(pid_file)!r}).read():\n"
            "        time.sleep(0.01)\n"
            "    os.kill(os.getpid(), signal.SIGKILL)\n"
            "threading.Thread(target=watch, daemon=True).start()\n"
            f"run_program([sys.executable, '-c', {program!r}], 120)")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert done.returncode == -signal.SIGKILL, done.stderr
    pid = int(pid_file.read_text())
    for _ in range(300):  # up to 3 s, looking at /proc
        if _state(pid) in (None, "Z"):
            break
        time.sleep(0.01)
    assert _state(pid) in (None, "Z")


def _state(pid: int) -> str | None:
    try:
        return Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0]
    except OSError:
        return None


def test_stopped_calls_end_their_workers_and_say_what_ran():
    started = threading.Event()

    def stopped() -> bool:
        return started.is_set()

    def waiting(running: list[int], finished: int) -> None:
        if finished >= 1 and running:
            started.set()

    before = set(processes.running())
    answers = processes.run_calls([(divmod, (7, 2)), (time.sleep, (60,)), (time.sleep, (60,))], 1, stopped, waiting)
    assert answers == [("result", (3, 1)), ("unfinished", None), None]
    assert set(processes.running()) <= before  # the worker was ended, not left sleeping


def test_a_call_that_raises_is_an_error_answer():
    (answer,) = processes.run_calls([(int, ("not a number",))], 1, lambda: False)
    assert answer[0] == "error" and "ValueError: invalid literal for int()" in answer[1]


def test_catching_signals_turns_sigterm_into_an_interruption_and_restores_the_handlers():
    before = signal.getsignal(signal.SIGTERM)
    with catching_signals():
        assert interruption.watched
        os.kill(os.getpid(), signal.SIGTERM)
        for _ in range(500):
            if interruption.requested():
                break
            time.sleep(0.01)
        assert interruption.requested() and interruption.signal == "SIGTERM"
        assert Budget().expired()  # every budget expires
    assert signal.getsignal(signal.SIGTERM) is before
    assert not interruption.requested() and not interruption.watched and not Budget().expired()


def test_an_engine_that_cannot_stop_itself_runs_in_a_child_when_signals_are_caught():
    smt, enumerate_engine = get_engine("smt"), get_engine("enumerate")
    assert not needs_child(smt, Budget()) and needs_child(smt, Budget.of(10))
    interruption.watched = True
    try:
        assert needs_child(smt, Budget()) and not needs_child(enumerate_engine, Budget())
    finally:
        interruption.watched = False


def test_an_interrupted_verdict_says_what_was_covered():
    stopped = Verdict(Status.UNKNOWN, "sat", Sorts(), StopReason.TIMEOUT,
                      "the time budget ran out after 12 parts were proved to sort and 3 were not; nothing is proved")
    verdict = stopped.interrupted("SIGTERM")
    assert verdict.stop is StopReason.INTERRUPTED and verdict.status is Status.UNKNOWN
    assert verdict.scope == ("interrupted by SIGTERM: the run was interrupted after 12 parts were proved to sort and "
                             "3 were not; nothing is proved")
    proved = Verdict(Status.PROVED, "sat", Sorts(), StopReason.COVERED, "every input")
    assert proved.interrupted("SIGTERM") is proved  # finished before the signal: it stands
    refused = Verdict(Status.UNKNOWN, "smt", Sorts(), StopReason.SIZE_LIMIT, "too large")
    assert refused.interrupted("SIGINT") is refused


def test_an_interruption_before_the_check_gives_every_file_an_interrupted_result(tmp_path, capsys):
    paths = []
    for n in (6, 8):
        paths.append(tmp_path / f"merge-exchange-{n}.json")
        write_netlist(build_family("merge-exchange", n), paths[-1])
    interruption.request("SIGINT")  # as the signal handler does; main clears it when it ends
    try:
        status = main(["check", *map(str, paths), "--jobs", "1", "--format", "json"])
    finally:
        interruption.clear()
    assert status == 3
    results = json.loads(capsys.readouterr().out)["results"]
    assert [(r["verdict"], r["stop_reason"]) for r in results] == [("unknown", "interrupted")] * 2
    assert {r["scope"] for r in results} == {"interrupted by SIGINT before this file was checked; nothing is proved"}


def test_a_report_is_replaced_whole_or_not_at_all(tmp_path, monkeypatch):
    from sortcheck import cli

    report = tmp_path / "report.json"
    report.write_text("the previous report")

    def refuse(source, target):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(cli.os, "replace", refuse)
    with pytest.raises(UsageError, match="No space left on device"):
        cli._write(str(report), "a new report")
    assert report.read_text() == "the previous report"
    assert [path.name for path in tmp_path.iterdir()] == ["report.json"]  # no partial file left beside it
    monkeypatch.undo()
    cli._write(str(report), "a new report")
    assert report.read_text() == "a new report" and len(list(tmp_path.iterdir())) == 1


def test_a_long_check_off_a_terminal_logs_a_line_a_minute(tmp_path, monkeypatch):
    path = tmp_path / "counting-6x4.json"
    write_netlist(build_circuit("counting", 6, 4), path)
    lines = {}
    monkeypatch.setattr(progress, "LOG_SECONDS", 0.01)  # a line every 10 ms instead of every minute
    for quiet in (False, True):
        stderr = io.StringIO()
        assert main(["check", str(path), "--jobs", "1"] + ["--quiet"] * quiet, stdout=io.StringIO(),
                    stderr=stderr) == 0
        lines[quiet] = stderr.getvalue().splitlines()
    assert lines[True] == []
    assert lines[False] and all(line.startswith(f"sortcheck: {path}: ") and " so far" in line for line in lines[False])


def test_the_progress_log_writes_what_is_worked_on_until_cleared():
    stream = io.StringIO()
    log = progress.ProgressLog(stream, "net.json", interval=0.01).start()
    log(3, 4, "sat: pieces")
    for _ in range(500):
        if "sat: pieces, 75%" in stream.getvalue():
            break
        time.sleep(0.01)
    log.clear()
    written = stream.getvalue()
    assert "sortcheck: net.json: 0 s so far; sat: pieces, 75%\n" in written
    time.sleep(0.05)
    assert stream.getvalue() == written  # nothing after clear


def test_interrupted_results_in_every_report_format(tmp_path):
    import jsonschema
    import junitparser

    from sortcheck.report import check_report, format_text
    from sortcheck.report.junit import junit_report
    from sortcheck.report.results import FileResult, interrupted_result
    from sortcheck.report.sarif import sarif_report

    stopped = Verdict(Status.UNKNOWN, "enumerate", Sorts(), StopReason.TIMEOUT,
                      "1,024 of 4,096 vectors were checked before the time budget ran out; nothing is proved")
    stats = build_family("merge-exchange", 12).stats()
    results = [FileResult("a.json", "comparator-network", Sorts(), stopped.interrupted("SIGTERM"), None, stats),
               interrupted_result("b.json", None, started=False)]
    assert [r["stop_reason"] for r in check_report(results)["results"]] == ["interrupted", "interrupted"]
    text = format_text(results)
    assert "interrupted by SIGTERM: 1,024 of 4,096 vectors were checked before the run was interrupted" in text
    assert "2 files: 0 proved, 0 refuted, 2 unknown, 0 errors" in text
    (tmp_path / "junit.xml").write_text(junit_report(results))
    cases = [case for suite in junitparser.JUnitXml.fromfile(str(tmp_path / "junit.xml")) for case in suite]
    assert [case.result[0].message.startswith("undecided: interrupted by") for case in cases] == [True, True]
    log = json.loads(sarif_report(results))
    schema = Path(__file__).with_name("data") / "sarif-schema-2.1.0.json"
    jsonschema.validate(log, json.loads(schema.read_text(encoding="utf-8")))  # the official SARIF 2.1.0 schema
    assert log["runs"][0]["invocations"] == [{"executionSuccessful": False, "exitSignalName": "SIGTERM"}]
