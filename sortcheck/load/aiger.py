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
the file (``and gate 0`` is the first).

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
import re
from dataclasses import dataclass, field

import networkx as nx

from sortcheck.errors import NetlistError
from sortcheck.load.decode import decode_text, read_file_bytes
from sortcheck.load.grouping import choose_grouping, describe_grouping, input_words, output_words, read_sidecar
from sortcheck.load.grouping import show_cycle, some_cycle
from sortcheck.model import GateCircuit, Gate, Property
from sortcheck.model.circuit import Signal, bit_name

_NUMBER = re.compile(r"^[0-9]{1,18}$")
_SYMBOL = re.compile(r"^([ilobcjf])([0-9]{1,18}) (.+)$")
_EXTRA_FIELDS = ("bad-state properties", "invariant constraints", "justice properties", "fairness constraints")


@dataclass
class _Graph:
    """An and-inverter graph as read: literals, with the place each item came from."""

    inputs: list[int] = field(default_factory=list)
    outputs: list[int] = field(default_factory=list)
    ands: list[tuple[int, int, int]] = field(default_factory=list)
    places: dict[str, list[str]] = field(default_factory=lambda: {"inputs": [], "outputs": [], "ands": []})
    input_symbols: dict[int, str] = field(default_factory=dict)
    output_symbols: dict[int, str] = field(default_factory=dict)


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


def _count(count: int, noun: str) -> str:
    """``count`` and ``noun``, in the plural unless the count is 1.

    >>> _count(1, "latch"), _count(2, "latch"), _count(0, "input")
    ('1 latch', '2 latches', '0 inputs')
    """
    if count == 1:
        return f"1 {noun}"
    return f"{count} {noun}{'es' if noun.endswith('ch') else 's'}"


def _number(token: str, what: str, source: str, where: str) -> int:
    if not _NUMBER.match(token):
        raise NetlistError(f"expected {what} (an unsigned decimal number), got {token!r}", source, where)
    return int(token)


def _header(line: str, magic: str, source: str) -> tuple[int, int, int, int]:
    tokens = line.split()
    if not tokens or tokens[0] != magic:
        found = repr(tokens[0]) if tokens else "an empty line"
        raise NetlistError(f"expected the header '{magic} M I L O A', got {found}", source, "line 1")
    names = ("M", "I", "L", "O", "A", "B", "C", "J", "F")
    if not 6 <= len(tokens) <= 10:
        raise NetlistError(f"the header must be '{magic} M I L O A' (5 to 9 numbers), got {len(tokens) - 1} "
                           f"number{'s' if len(tokens) != 2 else ''}", source, "line 1")
    values = [_number(token, f"header field {name}", source, "line 1") for token, name in zip(tokens[1:], names)]
    maximum, inputs, latches, outputs, ands = values[:5]
    if latches:
        raise NetlistError(f"the header declares {_count(latches, 'latch')}; sortcheck checks "
                           "combinational circuits only, so latches are not supported", source, "line 1")
    for what, count in zip(_EXTRA_FIELDS, values[5:]):
        if count:
            raise NetlistError(f"the header declares {count} {what}; sortcheck checks combinational circuits "
                               "with outputs only", source, "line 1")
    if magic == "aig" and maximum != inputs + ands:
        raise NetlistError(f"in binary AIGER M must be I + L + A = {inputs + ands}, got M = {maximum}",
                           source, "line 1")
    if maximum < inputs + ands:
        raise NetlistError(f"M = {maximum} is smaller than I + L + A = {inputs + ands}", source, "line 1")
    return maximum, inputs, outputs, ands


def _literal(token: str, maximum: int, source: str, where: str) -> int:
    literal = _number(token, "a literal", source, where)
    if literal > 2 * maximum + 1:
        raise NetlistError(f"literal {literal} is out of range: M = {maximum} allows literals up to "
                           f"{2 * maximum + 1}", source, where)
    return literal


def _definition(literal: int, what: str, defined: dict[int, str], source: str, where: str) -> None:
    """Check that ``literal`` can define a new variable (an input or an AND output), and record it."""
    if literal < 2:
        raise NetlistError(f"{what} literal {literal} is a constant, not a variable", source, where)
    if literal % 2:
        raise NetlistError(f"{what} literal {literal} is negated; {what}s must be even literals", source, where)
    if literal // 2 in defined:
        raise NetlistError(f"variable {literal // 2} (literal {literal}) is defined twice "
                           f"(also {defined[literal // 2]})", source, where)
    defined[literal // 2] = where


def _parse_ascii(text: str, source: str) -> _Graph:
    if not text.strip():
        raise NetlistError("empty file", source)
    lines = [line.removesuffix("\r") for line in text.split("\n")]
    maximum, inputs, outputs, ands = _header(lines[0], "aag", source)
    graph, defined = _Graph(), {}
    sections = (("input", inputs, 1), ("output", outputs, 1), ("and gate", ands, 3))
    number = 1
    for what, count, width in sections:
        for index in range(count):
            number += 1
            where = f"line {number}"
            if number > len(lines) or (number == len(lines) and not lines[-1]):
                raise NetlistError(f"the file ends before {what} {index} of the {count} the header declares",
                                   source, where)
            tokens = lines[number - 1].split()
            if len(tokens) != width:
                shape = "one literal" if width == 1 else "three literals 'lhs rhs0 rhs1'"
                raise NetlistError(f"{what} {index}: expected {shape}, got {lines[number - 1].strip()!r}",
                                   source, where)
            literals = [_literal(token, maximum, source, where) for token in tokens]
            if what == "input":
                _definition(literals[0], "input", defined, source, where)
                graph.inputs.append(literals[0])
            elif what == "output":
                graph.outputs.append(literals[0])
            else:
                _definition(literals[0], "and gate output", defined, source, where)
                graph.ands.append((literals[0], literals[1], literals[2]))
            graph.places[what.split()[0] + "s"].append(where)
    rest = ((f"line {number + 1 + index}", line) for index, line in enumerate(lines[number:]))
    _read_symbols(rest, inputs, outputs, ands, graph, source)
    _check_defined(graph, defined, source)
    _check_acyclic(graph, source)
    return graph


def _read_symbols(lines, inputs: int, outputs: int, ands: int, graph: _Graph, source: str) -> None:
    """Read the symbol table from ``(place, line)`` pairs, stopping at the comment section (line ``c``)."""
    limits = {"i": ("input", inputs, graph.input_symbols), "o": ("output", outputs, graph.output_symbols)}
    for where, line in lines:
        match = _SYMBOL.match(line)
        if line == "c" or line.startswith("c ") and not match:
            return
        if not line.strip():
            continue
        if not match:
            raise NetlistError(f"expected a symbol ('i0 name', 'o0 name') or the comment line 'c', got {line!r}; "
                               f"does the file hold more than the {_count(inputs, 'input')}, "
                               f"{_count(outputs, 'output')} and {_count(ands, 'and gate')} the header declares?",
                               source, where)
        kind, position, name = match.group(1), int(match.group(2)), match.group(3)
        what, count, table = limits.get(kind, ("latch" if kind == "l" else "property or constraint", 0, {}))
        if position >= count:
            raise NetlistError(f"symbol for {what} {position}, but the header declares {_count(count, what)}",
                               source, where)
        if position in table:
            raise NetlistError(f"a second symbol for {what} {position} (already named {table[position]!r})",
                               source, where)
        table[position] = name


def _check_defined(graph: _Graph, defined: dict[int, str], source: str) -> None:
    uses = [(literal, place) for (_, *rhs), place in zip(graph.ands, graph.places["ands"]) for literal in rhs]
    uses += list(zip(graph.outputs, graph.places["outputs"]))
    for literal, place in uses:
        if literal >= 2 and literal // 2 not in defined:
            raise NetlistError(f"literal {literal} is undefined: variable {literal // 2} is neither an input "
                               "nor an and gate output", source, place)


def _check_acyclic(graph: _Graph, source: str) -> None:
    seen = {literal // 2 for literal in graph.inputs} | {0}
    for lhs, rhs0, rhs1 in graph.ands:  # fast path: most files list every AND after what it reads
        if rhs0 // 2 not in seen or rhs1 // 2 not in seen:
            break
        seen.add(lhs // 2)
    else:
        return
    dependencies = nx.DiGraph()
    index_of = {lhs // 2: index for index, (lhs, _, _) in enumerate(graph.ands)}
    for lhs, rhs0, rhs1 in graph.ands:
        dependencies.add_edges_from((rhs // 2, lhs // 2) for rhs in (rhs0, rhs1) if rhs // 2 in index_of)
    if nx.is_directed_acyclic_graph(dependencies):
        return
    cycle = some_cycle(dependencies)
    start = min(range(len(cycle)), key=lambda i: index_of[cycle[i]])
    cycle = cycle[start:] + cycle[:start]
    path = show_cycle([str(2 * variable) for variable in cycle])
    first = index_of[cycle[0]]
    raise NetlistError(f"combinational cycle through and gate outputs {path} (and gate {first} is the first)",
                       source, graph.places["ands"][first])


def _read_line(data: bytes, position: int, source: str, what: str) -> tuple[str, int]:
    end = data.find(b"\n", position)
    if end < 0:
        raise NetlistError(f"the file ends inside {what}", source, f"byte {position}")
    try:
        return data[position:end].decode("ascii").removesuffix("\r"), end + 1
    except UnicodeDecodeError:
        raise NetlistError(f"{what} is not ASCII text", source, f"byte {position}") from None


def _varint(data: bytes, position: int, source: str, where: str) -> tuple[int, int]:
    value, shift = 0, 0
    while True:
        if position >= len(data):
            raise NetlistError("the file ends inside the and gates", source, where)
        byte = data[position]
        position += 1
        value |= (byte & 0x7F) << shift
        if not byte & 0x80:
            return value, position
        shift += 7
        if shift > 63:
            raise NetlistError("a delta of more than 64 bits", source, where)


def _binary_tail(data: bytes, position: int, source: str):
    """The lines after the and gates, as ``(place, text)``; each is decoded only when reached."""
    while position < len(data):
        end = data.find(b"\n", position)
        end = len(data) if end < 0 else end
        try:
            line = data[position:end].decode("utf-8").removesuffix("\r")
        except UnicodeDecodeError as error:
            raise NetlistError("a symbol is not UTF-8 text", source, f"byte {position + error.start}") from None
        yield f"byte {position}", line
        position = end + 1


def _parse_binary(data: bytes, source: str) -> _Graph:
    header, position = _read_line(data, 0, source, "the header")
    maximum, inputs, outputs, ands = _header(header, "aig", source)
    graph = _Graph(inputs=[2 * (k + 1) for k in range(inputs)])
    graph.places["inputs"] = ["line 1"] * inputs
    for index in range(outputs):
        where = f"line {index + 2}"
        line, position = _read_line(data, position, source, f"output {index}")
        if len(line.split()) != 1:
            raise NetlistError(f"output {index}: expected one literal, got {line.strip()!r}", source, where)
        graph.outputs.append(_literal(line.strip(), maximum, source, where))
        graph.places["outputs"].append(where)
    for index in range(ands):
        where = f"and gate {index}, byte {position}"
        lhs = 2 * (inputs + index + 1)
        delta0, position = _varint(data, position, source, where)
        delta1, position = _varint(data, position, source, where)
        if delta0 == 0:
            raise NetlistError(f"and gate {index} reads its own output literal {lhs}", source, where)
        if delta0 > lhs:
            raise NetlistError(f"first difference {delta0} is larger than the output literal {lhs}", source, where)
        if delta1 > lhs - delta0:
            raise NetlistError(f"second difference {delta1} is larger than the first input literal {lhs - delta0}",
                               source, where)
        graph.ands.append((lhs, lhs - delta0, lhs - delta0 - delta1))
        graph.places["ands"].append(where)
    _read_symbols(_binary_tail(data, position, source), inputs, outputs, ands, graph, source)
    _check_defined(graph, {k + 1: "input" for k in range(inputs + ands)}, source)
    return graph


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
