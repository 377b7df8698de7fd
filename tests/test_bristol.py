"""Bristol Fashion in and out, and the AND count and AND depth of ``stats``.

The format as followed here is the one published with the format's circuits ("'Bristol Fashion' MPC
Circuits", https://nigelsmart.github.io/MPC-Circuits/, and the comment at the top of SCALE-MAMBA's
src/GC/Circuit.h): a line with the numbers of gates and wires, a line with the number of input values and
the bits of each, the same for the outputs, then one gate a line (input-wire count, output-wire count,
input wires, output wires, XOR/AND/INV/EQ/EQW/MAND); inputs are the first wires, outputs the last.  Bit
order within a value: the first wire is the least significant bit; evidence: in the published 64-bit adder
(adder64.txt) the first output wire is XOR(w0, w64) with no carry, which only the lowest sum bit is.

Outside references: :func:`bristol_evaluate` below evaluates Bristol text itself, written from that
description and sharing no code with sortcheck; Python's ``sorted``; ``tests/gate_reference.py``.
"""

from __future__ import annotations

import itertools
import json
from pathlib import Path

import pytest

from cli_runner import run
from gate_reference import run_gates, sorts_everywhere
from sortcheck.api import check
from sortcheck.errors import NetlistError
from sortcheck.load import dump_netlist, parse_netlist, read_netlist
from sortcheck.load.bristol import dump_bristol, parse_bristol
from sortcheck.model import ComparatorNetwork, Sorts
from sortcheck.model.and_xor import and_depth, mpc_costs, to_and_xor
from sortcheck.model.circuit_builds import build_circuit
from sortcheck.model.cost import cost_counts
from sortcheck.model.families import build_family
from sortcheck.model.lowering import lower_network

# A sorter of 2 words of 2 bits, written by hand from the format's description.  Wires: a = 0 (bit 0), 1
# (bit 1); b = 2, 3; outputs min = 13, 14 and max = 15, 16.  Derivation:
#   d1 = a1 ^ b1, gt1 = a1 & d1 (a1 > b1), e1 = ~d1 (a1 == b1), d0 = a0 ^ b0, gt0 = a0 & d0 (a0 > b0),
#   t = e1 & gt0, gt = gt1 ^ t (a > b; gt1 and t never hold together), m_i = gt & d_i (the swap masks),
#   min_i = a_i ^ m_i, max_i = b_i ^ m_i.
HAND_SORTER = """13 17
2 2 2
2 2 2

2 1 1 3 4 XOR
2 1 1 4 5 AND
1 1 4 6 INV
2 1 0 2 7 XOR
2 1 0 7 8 AND
2 1 6 8 9 AND
2 1 5 9 10 XOR
2 1 10 7 11 AND
2 1 10 4 12 AND
2 1 0 11 13 XOR
2 1 1 12 14 XOR
2 1 2 11 15 XOR
2 1 3 12 16 XOR
"""

# The same sorter with the two masks in one MAND gate and the top bit of max copied by EQW into its output
# wire; the outputs move to wires 14..17.
HAND_SORTER_EXTENDED = """13 18
2 2 2
2 2 2

2 1 1 3 4 XOR
2 1 1 4 5 AND
1 1 4 6 INV
2 1 0 2 7 XOR
2 1 0 7 8 AND
2 1 6 8 9 AND
2 1 5 9 10 XOR
4 2 10 7 10 4 11 12 MAND
2 1 0 11 14 XOR
2 1 1 12 15 XOR
2 1 2 11 16 XOR
2 1 3 12 13 XOR
1 1 13 17 EQW
"""


# --- an independent evaluator of Bristol text -------------------------------------------------------------

def bristol_evaluate(text: str, values: list[int]) -> list[int]:
    """Output values of a Bristol Fashion circuit on input values, first wire of a value its low bit."""
    rows = [line.split() for line in text.splitlines() if line.strip()]
    wires_total = int(rows[0][1])
    input_sizes = [int(n) for n in rows[1][1:]]
    output_sizes = [int(n) for n in rows[2][1:]]
    wires = {}
    position = 0
    for value, size in zip(values, input_sizes):
        for bit in range(size):
            wires[position] = (value >> bit) & 1
            position += 1
    for row in rows[3:]:
        ins, outs, op = int(row[0]), int(row[1]), row[-1]
        numbers = [int(n) for n in row[2:-1]]
        source, target = numbers[:ins], numbers[ins:]
        if op == "XOR":
            wires[target[0]] = wires[source[0]] ^ wires[source[1]]
        elif op == "AND":
            wires[target[0]] = wires[source[0]] & wires[source[1]]
        elif op in ("INV", "NOT"):
            wires[target[0]] = 1 - wires[source[0]]
        elif op == "EQW":
            wires[target[0]] = wires[source[0]]
        elif op == "EQ":
            wires[target[0]] = source[0]
        elif op == "MAND":
            for k in range(outs):
                wires[target[k]] = wires[source[2 * k]] & wires[source[2 * k + 1]]
        else:
            raise AssertionError(op)
    results, position = [], wires_total - sum(output_sizes)
    for size in output_sizes:
        results.append(sum(wires[position + bit] << bit for bit in range(size)))
        position += size
    return results


def bristol_and_figures(text: str) -> tuple[int, int, dict[str, int]]:
    """(AND count, AND depth, gate lines by operation) counted from the text itself (MAND: k ANDs, depth 1)."""
    rows = [line.split() for line in text.splitlines() if line.strip()]
    depth: dict[int, int] = {}
    ands, ops = 0, {}
    for row in rows[3:]:
        ins, outs, op = int(row[0]), int(row[1]), row[-1]
        ops[op] = ops.get(op, 0) + 1
        numbers = [int(n) for n in row[2:-1]]
        source, target = numbers[:ins], numbers[ins:]
        if op == "EQ":
            depth[target[0]] = 0
            continue
        if op == "MAND":
            ands += outs
            for k in range(outs):
                depth[target[k]] = 1 + max(depth.get(source[2 * k], 0), depth.get(source[2 * k + 1], 0))
            continue
        ands += op == "AND"
        depth[target[0]] = (op == "AND") + max(depth.get(wire, 0) for wire in source)
    total = int(rows[0][1])
    outputs = sum(int(n) for n in rows[2][1:])
    return ands, max(depth.get(wire, 0) for wire in range(total - outputs, total)), ops


def test_the_independent_evaluator_reads_the_hand_sorter_as_a_sorter():
    # Judge the judge: the hand-written file sorts by the evaluator above and Python's sorted.
    for a, b in itertools.product(range(4), repeat=2):
        assert bristol_evaluate(HAND_SORTER, [a, b]) == sorted([a, b])
        assert bristol_evaluate(HAND_SORTER_EXTENDED, [a, b]) == sorted([a, b])
    broken = HAND_SORTER.replace("2 1 10 7 11 AND", "2 1 10 7 11 XOR")
    assert any(bristol_evaluate(broken, [a, b]) != sorted([a, b]) for a in range(4) for b in range(4))


# --- reading ----------------------------------------------------------------------------------------------

@pytest.mark.parametrize("text", [HAND_SORTER, HAND_SORTER_EXTENDED], ids=["basic", "extended"])
def test_hand_written_sorter_is_read_as_the_description_says(text):
    circuit = parse_bristol(text, "sort2x2.bristol")
    assert [word.width for word in circuit.inputs] == [2, 2]
    assert [word.width for word in circuit.outputs] == [2, 2]
    for a, b in itertools.product(range(4), repeat=2):
        assert circuit.evaluate([a, b]) == sorted([a, b]) == bristol_evaluate(text, [a, b])
        assert run_gates(circuit, [a, b]) == sorted([a, b])


def test_hand_written_sorter_is_proved_and_its_and_figures_are_the_texts(tmp_path):
    path = tmp_path / "sort2x2.bristol"
    path.write_text(HAND_SORTER)
    status, out, _ = run("check", path)
    assert status == 0 and out.startswith("PROVED")
    # Counted from the text: 5 ANDs (gt1, gt0, t, m0, m1); AND depth 3 (gt0 -> t -> m).
    assert bristol_and_figures(HAND_SORTER)[:2] == (5, 3)
    status, out, _ = run("stats", path, "--format", "json")
    assert status == 0
    stats = json.loads(out)["results"][0]["stats"]
    assert (stats["and_count"], stats["and_depth"]) == (5, 3)
    extended = tmp_path / "sort2x2-mand.bristol"
    extended.write_text(HAND_SORTER_EXTENDED)
    assert check(read_netlist(extended)).status.value == "proved"
    assert mpc_costs(read_netlist(extended)) == {"and_count": 5, "and_depth": 3}


def test_a_broken_hand_sorter_is_refuted_with_an_input_that_breaks_it(tmp_path):
    path = tmp_path / "broken.bristol"
    text = HAND_SORTER.replace("2 1 10 4 12 AND", "2 1 10 7 12 AND")  # the high mask reads the low difference
    path.write_text(text)
    verdict = check(read_netlist(path))
    assert verdict.status.value == "refuted"
    values = list(verdict.counterexample.input)
    assert bristol_evaluate(text, values) != sorted(values)


def test_packed_input_value_is_regrouped_into_words(tmp_path):
    # One input value of 4 bits (both words packed, low word first) and one output value of 4 bits.
    packed = HAND_SORTER.replace("2 2 2\n2 2 2\n", "1 4\n1 4\n")
    assert [w.width for w in parse_bristol(packed).inputs] == [4]
    circuit = parse_bristol(packed, "packed.bristol", words=2, width=2)
    assert [w.width for w in circuit.inputs] == [2, 2] and len(circuit.outputs) == 2
    for a, b in itertools.product(range(4), repeat=2):
        assert circuit.evaluate([a, b]) == sorted([a, b])
        assert bristol_evaluate(packed, [a + 4 * b]) == [sorted([a, b])[0] + 4 * sorted([a, b])[1]]
    path = tmp_path / "packed.bristol"
    path.write_text(packed)
    assert run("check", path, "--words", "2", "--width", "2")[0] == 0
    Path(str(path) + ".words").write_text('{"words": 2, "width": 2}')  # a grouping file, as for BLIF
    assert read_netlist(path).widths == (2, 2)
    assert run("check", tmp_path)[0] == 0  # the directory holds the .bristol file, and its grouping file is no netlist


def test_constants_from_eq_gates():
    # y = (a AND 1, a XOR 1, 0): EQ puts constants on wires 1 and 5.
    text = "4 6\n1 1\n1 3\n1 1 1 1 EQ\n2 1 0 1 3 AND\n2 1 0 1 4 XOR\n1 1 0 5 EQ\n"
    circuit = parse_bristol(text)
    assert [circuit.evaluate([a]) for a in (0, 1)] == [[0 + 2 + 0], [1 + 0 + 0]]
    assert [bristol_evaluate(text, [a]) for a in (0, 1)] == [[2], [1]]


# --- bad input: exit 2, the file and the line -------------------------------------------------------------

BAD_FILES = {
    "gate count too high": (HAND_SORTER.replace("13 17", "14 17", 1), 17, "the header gives 14 gates"),
    "gate count too low": (HAND_SORTER.replace("13 17", "12 17", 1), 17, "more gate lines than the 12 gates"),
    "wire count too low": (HAND_SORTER.replace("13 17", "13 16", 1), 17, "wire 16 is out of range"),
    "input sizes": (HAND_SORTER.replace("2 2 2\n", "2 2\n", 1), 2, "2 input values need 2 sizes, got 1"),
    "input and output wires overlap": (HAND_SORTER.replace("13 17", "13 7", 1), 1, "do not fit in 7 wires"),
    "undefined wire": (HAND_SORTER.replace("2 1 6 8 9 AND", "2 1 6 11 9 AND"), 10, "wire 11 is read before"),
    "wire defined twice": (HAND_SORTER.replace("2 1 0 2 7 XOR", "2 1 0 2 5 XOR"), 8, "wire 5 is defined twice"),
    "input wire written": (HAND_SORTER.replace("2 1 1 3 4 XOR", "2 1 1 3 2 XOR"), 5, "wire 2 is defined twice"),
    "unknown gate": (HAND_SORTER.replace("2 1 5 9 10 XOR", "2 1 5 9 10 OR"), 11, "unknown gate 'OR'"),
    "wrong shape": (HAND_SORTER.replace("1 1 4 6 INV", "2 1 4 4 6 INV"), 7, "INV takes 1 1"),
    "wire numbers missing": (HAND_SORTER.replace("2 1 0 7 8 AND", "2 1 0 8 AND"), 9, "need 3 wire numbers"),
    "EQ of 2": (HAND_SORTER.replace("1 1 4 6 INV", "1 1 2 6 EQ"), 7, "EQ assigns a constant 0 or 1"),
    "MAND shape": (HAND_SORTER_EXTENDED.replace("4 2 10 7 10 4 11 12 MAND", "3 2 10 7 10 11 12 MAND"), 12,
                   "MAND takes 2k k"),
    "output wire left out": (HAND_SORTER.replace("13 17", "12 17", 1).replace("2 1 3 12 16 XOR\n", ""), 3,
                             "output wire 16 is never defined"),
    "not a number": (HAND_SORTER.replace("2 1 0 7 8 AND", "2 1 0 seven 8 AND"), 9, "whole numbers"),
    "header too short": ("1 2\n1 1\n", 2, "expected three header lines"),
}


@pytest.mark.parametrize("case", sorted(BAD_FILES))
def test_bad_file_gives_exit_2_with_the_file_and_the_line(case, tmp_path):
    text, line, message = BAD_FILES[case]
    path = tmp_path / "bad.bristol"
    path.write_text(text)
    status, _, err = run("check", path)
    assert status == 2
    assert f"{path}: line {line}: " in err and message in err, err
    with pytest.raises(NetlistError) as error:
        parse_bristol(text, "bad.bristol")
    assert error.value.where == f"line {line}"


# --- writing, and round trips ----------------------------------------------------------------------------

def _text_ands(text: str) -> int:
    return bristol_and_figures(text)[0]


@pytest.mark.parametrize("style", ["and-or", "mux", "xor"])
def test_written_sorter_reads_back_to_the_same_function_verdict_and_and_figures(style):
    circuit = build_circuit("bitonic", 4, 2, style=style)
    text = dump_bristol(circuit)
    back = parse_bristol(text, "back.bristol")
    assert sorts_everywhere(back)  # gate_reference and numpy.sort on every input
    for values in itertools.product(range(4), repeat=4):
        if sum(values) % 7 == 0:  # a spread of inputs for the text evaluator (it is slow)
            assert bristol_evaluate(text, list(values)) == sorted(values)
    assert check(back).status == check(circuit).status
    # AND figures: the text's own count and depth, the rewritten circuit's, and (count) the cost model's.
    ands, depth, ops = bristol_and_figures(text)
    assert mpc_costs(circuit) == mpc_costs(back) == {"and_count": ands, "and_depth": depth}
    costs = cost_counts(circuit)
    assert ands == costs["and"] + costs["or"]
    assert back.op_counts() == {op: count for op, count in
                               (("and", ops.get("AND", 0)), ("not", ops.get("INV", 0)), ("xor", ops.get("XOR", 0)))
                               if count}


def test_xor_style_costs_two_ands_per_compared_bit():
    # The xor style's comparator on w-bit words: w ANDs for the comparison (one per bit of the carry chain)
    # and w for the swap masks, so 2 w per comparator; counted from the written text.
    for family, channels, width in [("merge-exchange", 8, 3), ("bitonic", 4, 5)]:
        network = build_family(family, channels)
        text = dump_bristol(network, width=width)
        assert _text_ands(text) == 2 * width * network.size
        assert mpc_costs(lower_network(network, width, style="xor"))["and_count"] == 2 * width * network.size


def test_a_refuted_circuit_stays_refuted_with_a_failing_input_of_both():
    network = ComparatorNetwork(4, build_family("bitonic", 4).comparators[:-1], name="short")
    circuit = lower_network(network, 2, style="mux")
    back = parse_bristol(dump_bristol(circuit))
    first, second = check(circuit), check(back)
    assert first.status.value == second.status.value == "refuted"
    for verdict in (first, second):
        values = list(verdict.counterexample.input)
        assert run_gates(circuit, values) != sorted(values)
        assert run_gates(back, values) != sorted(values)


def test_json_bristol_json_round_trip(tmp_path):
    circuit = build_circuit("merge-exchange", 4, 2, style="and-or")
    text = dump_bristol(circuit)
    again = parse_netlist(dump_netlist(parse_bristol(text)))
    assert sorts_everywhere(again)
    assert dump_bristol(again) == text  # a circuit of AND, XOR and NOT is written as it was read
    assert dump_bristol(parse_bristol(text)) == text


def test_writing_constants_copies_and_repeated_outputs():
    circuit = parse_netlist("""{"sortcheck": 1, "kind": "gate-circuit",
      "inputs": [{"name": "a", "width": 2}],
      "gates": [{"out": "t", "op": "nor", "in": ["a[0]", 1, "a[1]"]}, {"out": "u", "op": "xnor", "in": ["t", 0]}],
      "outputs": [{"name": "p", "bits": ["u", "a[1]", 1]}, {"name": "q", "bits": ["u", 0]}]}""")
    text = dump_bristol(circuit)
    for a in range(4):
        assert bristol_evaluate(text, [a]) == circuit.evaluate([a]) == run_gates(circuit, [a])
    assert parse_bristol(text).widths == (2,)
    ands, depth, _ = bristol_and_figures(text)
    assert (ands, depth) == (2, 2) == (mpc_costs(circuit)["and_count"], mpc_costs(circuit)["and_depth"])


def test_and_depth_of_wide_gates_is_a_balanced_tree():
    # An 8-input AND: 7 ANDs, depth 3 (log2 8); a 5-input OR: 4 ANDs, depth 3.
    circuit = parse_netlist("""{"sortcheck": 1, "kind": "gate-circuit",
      "inputs": [{"name": "a", "width": 8}],
      "gates": [{"out": "t", "op": "and", "in": ["a[0]","a[1]","a[2]","a[3]","a[4]","a[5]","a[6]","a[7]"]},
                {"out": "u", "op": "or", "in": ["a[0]","a[1]","a[2]","a[3]","a[4]"]}],
      "outputs": [{"name": "y", "bits": ["t"]}, {"name": "z", "bits": ["u"]}]}""")
    basic = to_and_xor(circuit)
    assert and_depth(basic) == 3 and sum(g.op == "and" for g in basic.gates) == 11
    text = dump_bristol(circuit)
    assert bristol_and_figures(text)[:2] == (11, 3)
    for value in range(256):
        assert bristol_evaluate(text, [value]) == [int(value == 255), int(value & 31 != 0)]


def test_build_and_export_write_bristol(tmp_path):
    path = tmp_path / "s.bristol"
    status, _, err = run("build", "merge-exchange", 4, "--width", 3, "--output", path)
    assert status == 0 and "w3-xor" in err  # Bristol output lowers in the xor style unless told otherwise
    assert run("check", path)[0] == 0
    network = tmp_path / "n.json"
    run("build", "merge-exchange", 4, "--output", network)
    status, _, err = run("export", network, "--to", "bristol")
    assert status == 2 and "--width" in err
    status, out, _ = run("export", network, "--to", "bristol", "--width", 3)
    assert status == 0 and out == path.read_text()
    status, out, _ = run("export", network, "--to", "bristol", "--width", 3, "--style", "and-or")
    assert _text_ands(out) == mpc_costs(build_circuit("merge-exchange", 4, 3))["and_count"]
    assert run("build", "bitonic", 4, "--format", "bristol")[0] == 2  # no width
    status, text, _ = run("stats", path)
    ands, depth, _ = bristol_and_figures(path.read_text())
    assert f"{ands} AND, AND depth {depth}" in text


def test_signed_export_sorts_twos_complement():
    network = build_family("bitonic", 4)
    circuit = parse_bristol(dump_bristol(network, width=3, signed=True))
    for values in itertools.product(range(-4, 4), repeat=4):
        words = [v % 8 for v in values]
        out = [w - 8 if w >= 4 else w for w in circuit.evaluate(words)]
        assert out == sorted(values)
    assert check(circuit, Sorts(signed=True)).status.value == "proved"
