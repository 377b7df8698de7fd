"""Read and write AIGER and-inverter graphs, ASCII (``.aag``) and binary (``.aig``).

AIGER is the open exchange format of and-inverter graphs.  A file starts
with the header ``aag M I L O A`` (ASCII) or ``aig M I L O A`` (binary):
the largest variable index, then the numbers of inputs, latches, outputs and
AND gates.  A literal is ``2 * variable`` or ``2 * variable + 1`` for its
negation; literals 0 and 1 are the constants false and true.  In the ASCII
form every input, output and AND gate is a line of literals (``lhs rhs0
rhs1`` for an AND); in the binary form the inputs are implicitly the
literals 2, 4, ..., 2I, and the AND gates follow the output lines as pairs of
variable-length unsigned numbers, the differences ``lhs - rhs0`` and ``rhs0 -
rhs1`` (7 bits per byte, least significant group first, the high bit set on
every byte but the last), with ``lhs`` counting up from ``2(I + L + 1)``.  A
symbol table (``i0 name``, ``o0 name``) and a comment section (a line ``c``,
then free text) may follow.

sortcheck checks combinational circuits, so files with latches, and the
AIGER 1.9 header fields for bad states, constraints, justice and fairness,
are refused.  In the model, input bit ``k`` is grouped into words as
:mod:`sortcheck.load.grouping` says; the AND gate of variable ``v`` is the
signal ``v<v>`` and the negation of variable ``v`` is one ``not`` gate
``n<v>``, shared by every use.  AND gates are numbered from 0 in the order of
the file (``and gate 0`` is the first).  The file is decoded into a graph of
literals by :mod:`sortcheck.load.aiger_decode`.

Examples
--------
>>> text = "aag 3 2 0 1 1\\n2\\n4\\n7\\n6 2 4\\ni0 a\\ni1 b\\no0 nand\\n"
>>> circuit = parse_aiger(text, "nand.aag")
>>> [circuit.evaluate([a, b]) for a, b in ((0, 0), (0, 1), (1, 0), (1, 1))]
[[1], [1], [1], [0]]
>>> [(gate.out, gate.op, gate.inputs) for gate in circuit.gates]
[('v3', 'and', ('x0[0]', 'x1[0]')), ('n3', 'not', ('v3',))]
>>> parse_aiger("aag 1 0 1 0 0\\n2 3\\n", "latch.aag")  # doctest: +ELLIPSIS
Traceback (most recent call last):
...
sortcheck.errors.NetlistError: latch.aag: line 1: the header declares 1 latch; ... latches are not supported
"""

from __future__ import annotations

import os

from sortcheck.errors import NetlistError
from sortcheck.load.aiger_decode import _Graph, _parse_ascii, _parse_binary
from sortcheck.load.decode import decode_text, read_file_bytes
from sortcheck.load.grouping import choose_grouping, describe_grouping, input_words, output_words, read_sidecar
from sortcheck.model import GateCircuit, Gate, Property
from sortcheck.model.circuit import Signal, bit_name


# --- reading ---------------------------------------------------------------------------------

def parse_aiger(data: bytes | str, source: str = "<aiger>", words: int | None = None, width: int | None = None,
                claim: Property | None = None) -> GateCircuit:
    """Parse an AIGER file, ASCII or binary (told apart by the header), into a gate circuit.

    Parameters
    ----------
    data : bytes or str
        The file contents; binary AIGER must be bytes (a str is taken as Latin-1 code points).
    source : str
        The file name, for error messages.
    words, width : int or None
        How to group the input and output bits into words (:mod:`sortcheck.load.grouping`).
    claim : Property or None
        The property the circuit claims (from its grouping file).

    Raises
    ------
    NetlistError
        With the place: ``line 7`` in ASCII files and the text lines of binary ones, ``and gate 5, byte
        123`` or ``byte 123`` in the binary part.
    """
    if isinstance(data, str):
        if not data.startswith("aig"):
            return _build(_parse_ascii(data.removeprefix("\ufeff"), source), source, words, width, claim)
        try:
            data = data.encode("latin-1")
        except UnicodeEncodeError as error:
            raise NetlistError("binary AIGER given as text with characters beyond one byte", source,
                               f"character {error.start}") from None
    if data.startswith(b"aig"):
        return _build(_parse_binary(data, source), source, words, width, claim)
    return _build(_parse_ascii(decode_text(data, source), source), source, words, width, claim)


def read_aiger(path: str | os.PathLike, words: int | None = None, width: int | None = None) -> GateCircuit:
    """Read an AIGER file and its grouping file (``FILE.words``, if any); ``words``/``width`` override it."""
    grouping = choose_grouping(read_sidecar(path), words, width)
    return parse_aiger(read_file_bytes(path), str(path), grouping.words, grouping.width, grouping.claim)


# --- the model ------------------------------------------------------------------------------

def _build(graph: _Graph, source: str, words: int | None, width: int | None, claim: Property | None) -> GateCircuit:
    inputs, bit_names = input_words(len(graph.inputs), words, width, source)
    signal_of: dict[int, str] = {literal // 2: name for literal, name in zip(graph.inputs, bit_names)}
    signal_of.update({lhs // 2: f"v{lhs // 2}" for lhs, _, _ in graph.ands})
    negated: set[int] = set()

    def signal(literal: int) -> Signal:
        if literal < 2:
            return literal
        if literal % 2:
            negated.add(literal // 2)
            return f"n{literal // 2}"
        return signal_of[literal // 2]

    ands = [Gate(f"v{lhs // 2}", "and", (signal(rhs0), signal(rhs1))) for lhs, rhs0, rhs1 in graph.ands]
    outputs = output_words([signal(literal) for literal in graph.outputs], inputs[0].width, source)
    gates = [Gate(f"n{literal // 2}", "not", (signal_of[literal // 2],)) for literal in graph.inputs
             if literal // 2 in negated]
    for gate, (lhs, _, _) in zip(ands, graph.ands):
        gates.append(gate)
        if lhs // 2 in negated:
            gates.append(Gate(f"n{lhs // 2}", "not", (gate.out,)))
    description = None
    if graph.input_symbols or graph.output_symbols:
        input_names = [graph.input_symbols.get(k, f"i{k}") for k in range(len(graph.inputs))]
        output_names = [graph.output_symbols.get(k, f"o{k}") for k in range(len(graph.outputs))]
        description = describe_grouping("AIGER", input_names, output_names, inputs[0].width)
    return GateCircuit(inputs, tuple(gates), outputs, description=description, claim=claim)


# --- writing --------------------------------------------------------------------------------

class _Builder:
    """Lower gates to a hashed and-inverter graph: ANDs numbered in creation order, constants folded."""

    def __init__(self, inputs: int):
        self.next_variable = inputs + 1
        self.ands: list[tuple[int, int, int]] = []
        self.table: dict[tuple[int, int], int] = {}

    def conj(self, a: int, b: int) -> int:
        if a == 0 or b == 0 or a == b ^ 1:
            return 0
        if a == 1 or a == b:
            return b
        if b == 1:
            return a
        key = (max(a, b), min(a, b))
        if key not in self.table:
            self.table[key] = 2 * self.next_variable
            self.ands.append((2 * self.next_variable, *key))
            self.next_variable += 1
        return self.table[key]

    def disj(self, a: int, b: int) -> int:
        return self.conj(a ^ 1, b ^ 1) ^ 1

    def xor(self, a: int, b: int) -> int:
        return self.disj(self.conj(a, b ^ 1), self.conj(a ^ 1, b))

    def gate(self, op: str, literals: list[int]) -> int:
        if op == "not":
            return literals[0] ^ 1
        if op == "mux":
            select, when0, when1 = literals
            return self.disj(self.conj(select, when1), self.conj(select ^ 1, when0))
        combine = {"and": self.conj, "nand": self.conj, "or": self.disj, "nor": self.disj,
                   "xor": self.xor, "xnor": self.xor}[op]
        result = literals[0]
        for literal in literals[1:]:
            result = combine(result, literal)
        return result ^ 1 if op in ("nand", "nor", "xnor") else result


def _lower(circuit: GateCircuit) -> tuple[int, list[tuple[int, int, int]], list[int], list[str], list[str]]:
    input_names = [bit_name(word.name, i) for word in circuit.inputs for i in range(word.width)]
    literal_of: dict[Signal, int] = {0: 0, 1: 1}
    literal_of.update({name: 2 * (k + 1) for k, name in enumerate(input_names)})
    builder = _Builder(len(input_names))
    for gate in circuit.gate_order:
        literal_of[gate.out] = builder.gate(gate.op, [literal_of[signal] for signal in gate.inputs])
    outputs = [literal_of[bit] for word in circuit.outputs for bit in word.bits]
    output_names = [bit_name(word.name, i) for word in circuit.outputs for i in range(word.width)]
    return len(input_names), builder.ands, outputs, input_names, output_names


def _symbols_and_comment(circuit: GateCircuit, input_names: list[str], output_names: list[str]) -> str:
    lines = [f"i{k} {name}" for k, name in enumerate(input_names)]
    lines += [f"o{k} {name}" for k, name in enumerate(output_names)]
    widths = ", ".join(f"{word.name}: {word.width}" for word in circuit.inputs)
    lines += ["c", f"input words (bits least significant first) {widths}"]
    if circuit.name:
        lines.append(f"name {circuit.name}")
    return "\n".join(lines) + "\n"


def dump_aiger(circuit: GateCircuit) -> str:
    """The circuit as ASCII AIGER: every op lowered to ANDs and negations (constants folded, ANDs shared).

    The inputs are the bits of the input words in order, least significant first, and likewise the
    outputs, so the file reads back with ``width`` set to the word width.

    >>> from sortcheck.model import Word, OutputWord
    >>> circuit = GateCircuit((Word("a", 1), Word("b", 1)), (Gate("s", "xor", ("a[0]", "b[0]")),),
    ...                       (OutputWord("y", ("s",)),))
    >>> print(dump_aiger(circuit), end="")
    aag 5 2 0 1 3
    2
    4
    11
    6 5 2
    8 4 3
    10 9 7
    i0 a[0]
    i1 b[0]
    o0 y[0]
    c
    input words (bits least significant first) a: 1, b: 1
    >>> parse_aiger(dump_aiger(circuit)).evaluate([1, 0])
    [1]
    """
    inputs, ands, outputs, input_names, output_names = _lower(circuit)
    lines = [f"aag {inputs + len(ands)} {inputs} 0 {len(outputs)} {len(ands)}"]
    lines += [str(2 * (k + 1)) for k in range(inputs)] + [str(literal) for literal in outputs]
    lines += [f"{lhs} {rhs0} {rhs1}" for lhs, rhs0, rhs1 in ands]
    return "\n".join(lines) + "\n" + _symbols_and_comment(circuit, input_names, output_names)


def _encode(value: int) -> bytes:
    out = bytearray()
    while value >= 0x80:
        out.append(value & 0x7F | 0x80)
        value >>= 7
    out.append(value)
    return bytes(out)


def dump_aiger_binary(circuit: GateCircuit) -> bytes:
    """The circuit as binary AIGER (the ANDs of :func:`dump_aiger`, delta-encoded).

    >>> from sortcheck.model import Word, OutputWord
    >>> circuit = GateCircuit((Word("a", 2),), (Gate("s", "nand", ("a[0]", "a[1]")),),
    ...                       (OutputWord("y", ("s", "a[0]")),))
    >>> dump_aiger_binary(circuit)[:20]
    b'aig 3 2 0 2 1\\n7\\n2\\n\\x02\\x02'
    >>> [parse_aiger(dump_aiger_binary(circuit), width=2).evaluate([a]) for a in range(4)]
    [[1], [3], [1], [2]]
    """
    inputs, ands, outputs, input_names, output_names = _lower(circuit)
    text = f"aig {inputs + len(ands)} {inputs} 0 {len(outputs)} {len(ands)}\n"
    text += "".join(f"{literal}\n" for literal in outputs)
    body = b"".join(_encode(lhs - rhs0) + _encode(rhs0 - rhs1) for lhs, rhs0, rhs1 in ands)
    return text.encode("ascii") + body + _symbols_and_comment(circuit, input_names, output_names).encode("utf-8")
