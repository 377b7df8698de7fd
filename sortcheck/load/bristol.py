"""Read and write Bristol Fashion, the text format of AND/XOR/INV circuits used in secure computation.

A Bristol Fashion file (suffix ``.bristol`` for sortcheck) is::

    G W                 number of gates, number of wires
    niv n_1 ... n_niv   number of input values, then the bits of each
    nov m_1 ... m_nov   number of output values, then the bits of each
    gate lines          one gate a line, in an order that evaluates (every wire defined before it is read)

A gate line is the number of input wires, the number of output wires, the
input wires, the output wires and the operation: ``2 1 a b c XOR`` and
``2 1 a b c AND`` (``c = a op b``), ``1 1 a c INV`` (``NOT`` too) and
``1 1 a c EQW`` (``c = a``), ``1 1 v c EQ`` (the constant ``v``, 0 or 1,
into ``c``), and ``2k k a_1 b_1 ... a_k b_k c_1 ... c_k MAND`` (k ANDs,
``c_i = a_i AND b_i``).  The inputs occupy the first wires, value 1 first;
the outputs are the last ``m_1 + ... + m_nov`` wires, value 1 first.
**Within a value the first wire is the least significant bit** (wire 0 is bit
0 of input value 1): in the published 64-bit adder of the format, the first
output wire is the XOR of wires 0 and 64 with no carry, which only the least
significant bit is.  Blank lines are ignored.

Reading: every declared input value becomes an input word ``x0``, ``x1``,
... of its own width, every output value an output word ``y0``, ``y1``, ...
With a grouping (``--words``/``--width``, or a grouping file ``FILE.words``
as for AIGER and BLIF, :mod:`sortcheck.load.grouping`) the input bits of
all values, in wire order, are grouped into words instead, and the output
bits likewise: so a circuit whose one input value packs ``N`` words of ``W``
bits is read with ``--words N --width W``.  XOR, AND and INV become
``xor``, ``and`` and ``not`` gates named ``w<wire>``; EQW and EQ give no gate
(the wire stands for the signal copied, or the constant).  Errors name the
line: wrong counts, wires out of range, wires read before anything defines
them, wires defined twice, unknown operations.

Writing (:func:`dump_bristol`): a gate circuit is rewritten with AND, XOR and
NOT (:func:`sortcheck.model.and_xor.to_and_xor`), each input word an input
value and each output word an output value; a comparator network is first
lowered to a gate circuit on words of a given width
(:func:`sortcheck.model.lowering.lower_network`).  Constants are written with
EQ and output bits that are inputs, constants or repeated with EQW.

Examples
--------
>>> text = '''3 5
... 2 1 1
... 1 2
...
... 2 1 0 1 2 AND
... 2 1 0 1 3 XOR
... 1 1 2 4 EQW
... '''
>>> circuit = parse_bristol(text, "half-adder.bristol")
>>> [circuit.evaluate([a, b]) for a in (0, 1) for b in (0, 1)]
[[0], [1], [1], [2]]
>>> print(dump_bristol(circuit), end="")  # the copy is gone: the AND writes its output wire itself
2 4
2 1 1
1 2
<BLANKLINE>
2 1 0 1 3 AND
2 1 0 1 2 XOR

>>> parse_bristol("1 3\\n2 1 1\\n1 1\\n2 1 0 5 2 AND\\n", "bad.bristol")
Traceback (most recent call last):
...
sortcheck.errors.NetlistError: bad.bristol: line 4: wire 5 is out of range (the header gives 3 wires, 0 to 2)
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field

from sortcheck.errors import NetlistError
from sortcheck.load.decode import decode_text, read_file_bytes
from sortcheck.load.grouping import choose_grouping, group_bits, read_sidecar
from sortcheck.model import ComparatorNetwork, GateCircuit, Gate, Netlist, OutputWord, Property, Word, bit_name
from sortcheck.model.and_xor import to_and_xor
from sortcheck.model.circuit import Signal
from sortcheck.model.lowering import lower_network

SUFFIX = ".bristol"
"""The file suffix sortcheck reads as Bristol Fashion."""

#: Operation -> (input wires, output wires) of the fixed-size gates.
_SHAPES = {"AND": (2, 1), "XOR": (2, 1), "INV": (1, 1), "NOT": (1, 1), "EQW": (1, 1), "EQ": (1, 1)}
_OPS = {"AND": "and", "XOR": "xor", "INV": "not", "NOT": "not"}


@dataclass
class _Header:
    gates: int
    wires: int
    inputs: list[int]
    outputs: list[int]
    line: int  # the line of the output sizes, where missing outputs are reported


@dataclass
class _Reading:
    """What the gate lines have built so far: a signal per defined wire, the gates, and where wires came from."""

    header: _Header
    signal: dict[int, Signal] = field(default_factory=dict)
    defined_on: dict[int, int] = field(default_factory=dict)  # wire -> line of the gate that defines it
    gates: list[Gate] = field(default_factory=list)


# --- reading ---------------------------------------------------------------------------------

def _numbered_lines(text: str):
    """Yield ``(line number, tokens)`` of the lines that are not blank."""
    for number, line in enumerate(text.split("\n"), start=1):
        tokens = line.split()
        if tokens:
            yield number, tokens


def _integers(tokens: list[str], source: str, where: str, what: str) -> list[int]:
    if not all(token.isascii() and token.isdigit() for token in tokens):
        raise NetlistError(f"expected {what} (whole numbers), got {' '.join(tokens)!r}", source, where)
    return [int(token) for token in tokens]


def _sizes(tokens: list[str], kind: str, source: str, where: str) -> list[int]:
    numbers = _integers(tokens, source, where, f"the number of {kind} values and the bits of each")
    if numbers[0] == 0:
        raise NetlistError(f"the circuit has no {kind} values", source, where)
    if len(numbers) != numbers[0] + 1:
        raise NetlistError(f"{numbers[0]} {kind} values need {numbers[0]} sizes, got {len(numbers) - 1}",
                           source, where)
    for index, size in enumerate(numbers[1:], start=1):
        if size == 0:
            raise NetlistError(f"{kind} value {index} has 0 bits", source, where)
    return numbers[1:]


def _read_header(lines, source: str) -> _Header:
    found = []
    for number, tokens in lines:
        found.append((number, tokens))
        if len(found) == 3:
            break
    if len(found) < 3:
        raise NetlistError("expected three header lines (gates and wires, input sizes, output sizes)", source,
                           f"line {found[-1][0]}" if found else None)
    (first, counts), (second, inputs), (third, outputs) = found
    numbers = _integers(counts, source, f"line {first}", "the number of gates and the number of wires")
    if len(numbers) != 2:
        raise NetlistError(f"expected the number of gates and the number of wires, got {len(numbers)} numbers",
                           source, f"line {first}")
    header = _Header(numbers[0], numbers[1], _sizes(inputs, "input", source, f"line {second}"),
                     _sizes(outputs, "output", source, f"line {third}"), third)
    if sum(header.inputs) + sum(header.outputs) > header.wires:
        raise NetlistError(f"{sum(header.inputs)} input wires and {sum(header.outputs)} output wires do not fit "
                           f"in {header.wires} wires", source, f"line {first}")
    return header


def _gate_line(tokens: list[str], reading: _Reading, number: int, source: str) -> None:
    where = f"line {number}"
    op = tokens[-1]
    if op not in _SHAPES and op != "MAND":
        raise NetlistError(f"unknown gate {op!r} (Bristol Fashion has XOR, AND, INV, EQ, EQW and MAND)",
                           source, where)
    numbers = _integers(tokens[:-1], source, where, "wire counts and wires before the gate's name")
    if len(numbers) < 2:
        raise NetlistError(f"expected the number of input and output wires before {op}", source, where)
    ins, outs = numbers[:2]
    shape = _SHAPES.get(op) or (2 * outs, outs)
    if (ins, outs) != shape or outs == 0:
        expected = "2k k for some k of at least 1" if op == "MAND" else f"{shape[0]} {shape[1]}"
        raise NetlistError(f"{op} takes {expected} (input and output wires), got {ins} {outs}", source, where)
    if len(numbers) != 2 + ins + outs:
        raise NetlistError(f"{ins} input and {outs} output wires need {ins + outs} wire numbers, "
                           f"got {len(numbers) - 2}", source, where)
    read, written = numbers[2:2 + ins], numbers[2 + ins:]
    if op == "EQ":
        if read[0] not in (0, 1):
            raise NetlistError(f"EQ assigns a constant 0 or 1, got {read[0]}", source, where)
        _define(written[0], read[0], reading, number, source)
        return
    sources = [_read_wire(wire, reading, source, where) for wire in read]
    if op == "EQW":
        _define(written[0], sources[0], reading, number, source)
        return
    pairs = [(sources[2 * k], sources[2 * k + 1]) for k in range(outs)] if op == "MAND" else [tuple(sources)]
    for out, inputs in zip(written, pairs):
        _define(out, f"w{out}", reading, number, source)
        reading.gates.append(Gate(f"w{out}", _OPS.get(op, "and"), inputs))


def _check_range(wire: int, reading: _Reading, source: str, where: str) -> None:
    if wire >= reading.header.wires:
        raise NetlistError(f"wire {wire} is out of range (the header gives {reading.header.wires} wires, "
                           f"0 to {reading.header.wires - 1})", source, where)


def _read_wire(wire: int, reading: _Reading, source: str, where: str) -> Signal:
    _check_range(wire, reading, source, where)
    if wire not in reading.signal:
        raise NetlistError(f"wire {wire} is read before any gate defines it (gates must come in an order "
                           "that evaluates)", source, where)
    return reading.signal[wire]


def _define(wire: int, signal: Signal, reading: _Reading, number: int, source: str) -> None:
    where = f"line {number}"
    _check_range(wire, reading, source, where)
    if wire in reading.signal:
        previous = reading.defined_on.get(wire)
        what = f"by the gate on line {previous}" if previous else "as an input wire"
        raise NetlistError(f"wire {wire} is defined twice (also {what})", source, where)
    reading.signal[wire] = signal
    reading.defined_on[wire] = number


def parse_bristol(text: str | bytes, source: str = "<bristol>", words: int | None = None,
                  width: int | None = None, claim: Property | None = None) -> GateCircuit:
    """Parse a Bristol Fashion circuit into a gate circuit (see the module documentation).

    Parameters
    ----------
    text : str or bytes
        The file contents (bytes must be UTF-8).
    source : str
        The file name, for error messages.
    words, width : int or None
        Group the input and output bits into words of ``width`` bits instead of taking the declared
        values as words (:mod:`sortcheck.load.grouping`); None for both: the declared values.
    claim : Property or None
        The property the circuit claims (from its grouping file).

    Raises
    ------
    NetlistError
        With the place ``line N``.
    """
    text = decode_text(text, source)
    lines = _numbered_lines(text)
    header = _read_header(lines, source)
    input_bits = [bit_name(f"x{index}", bit) for index, size in enumerate(header.inputs) for bit in range(size)]
    reading = _Reading(header, signal=dict(enumerate(input_bits)))
    count, last = 0, header.line
    for number, tokens in lines:
        count, last = count + 1, number
        if count > header.gates:
            raise NetlistError(f"more gate lines than the {header.gates} gates the header gives", source,
                               f"line {number}")
        _gate_line(tokens, reading, number, source)
    if count < header.gates:
        raise NetlistError(f"the header gives {header.gates} gates, the file has {count} gate lines", source,
                           f"line {last}")
    return _build(reading, source, words, width, claim)


def _build(reading: _Reading, source: str, words: int | None, width: int | None,
           claim: Property | None) -> GateCircuit:
    header = reading.header
    first_output = header.wires - sum(header.outputs)
    bits: list[Signal] = []
    for wire in range(first_output, header.wires):
        if wire not in reading.signal:
            raise NetlistError(f"output wire {wire} is never defined (the outputs are the last "
                               f"{sum(header.outputs)} wires, {first_output} to {header.wires - 1})",
                               source, f"line {header.line}")
        bits.append(reading.signal[wire])
    sizes = f"input values of {', '.join(map(str, header.inputs))} bits"
    if words is None and width is None:
        inputs = tuple(Word(f"x{index}", size) for index, size in enumerate(header.inputs))
        outputs, start = [], 0
        for index, size in enumerate(header.outputs):
            outputs.append(OutputWord(f"y{index}", tuple(bits[start:start + size])))
            start += size
        how = f"Bristol Fashion: {sizes} are words x0..x{len(inputs) - 1}, output values y0..y{len(outputs) - 1}"
        return GateCircuit(inputs, tuple(reading.gates), tuple(outputs), description=how + " (low bit first).",
                           claim=claim)
    names = [bit_name(f"x{index}", bit) for index, size in enumerate(header.inputs) for bit in range(size)]
    grouped = group_bits(names, bits, words, width, source)
    gates = tuple(Gate(gate.out, gate.op, tuple(_renamed(s, grouped.renaming) for s in gate.inputs))
                  for gate in reading.gates)
    how = (f"Bristol Fashion: {sizes}, their bits in wire order grouped into {len(grouped.inputs)} words of "
           f"{grouped.inputs[0].width} bits (low bit first).")
    return GateCircuit(grouped.inputs, gates, grouped.outputs, description=how, claim=claim)


def _renamed(signal: Signal, renaming: dict[str, str]) -> Signal:
    return renaming.get(signal, signal) if isinstance(signal, str) else signal


def read_bristol(path: str | os.PathLike, words: int | None = None, width: int | None = None) -> GateCircuit:
    """Read a Bristol Fashion file and its grouping file (``FILE.words``, if any); ``words``/``width`` override it."""
    grouping = choose_grouping(read_sidecar(path), words, width)
    return parse_bristol(read_file_bytes(path), str(path), grouping.words, grouping.width, grouping.claim)


# --- writing --------------------------------------------------------------------------------

def as_gate_circuit(netlist: Netlist, width: int | None, style: str = "xor", signed: bool = False) -> GateCircuit:
    """The netlist as a gate circuit: itself, or a comparator network lowered to ``width``-bit words.

    Raises
    ------
    ValueError
        For a comparator network without a width (or a bad width or style).
    """
    if isinstance(netlist, GateCircuit):
        return netlist
    if not isinstance(netlist, ComparatorNetwork):
        raise TypeError(f"not a netlist: {type(netlist).__name__}")
    if width is None:
        raise ValueError("a comparator network needs a word width to become a gate circuit")
    return lower_network(netlist, width, style=style, signed=signed)


def _wires(circuit: GateCircuit) -> tuple[dict[Signal, int], dict[int, int], int]:
    """Wire numbers: of the input bits, of every gate output, and of the constants gates read.

    Returns the wire of each signal, the output position each gate output goes to straight (the first
    output bit it is, when it is one), and the number of wires.
    """
    output_bits = [bit for word in circuit.outputs for bit in word.bits]
    gate_outputs = {gate.out for gate in circuit.gates}
    straight: dict[Signal, int] = {}
    for position, bit in enumerate(output_bits):
        if bit in gate_outputs and bit not in straight:
            straight[bit] = position
    wire: dict[Signal, int] = {}
    for word in circuit.inputs:
        for index in range(word.width):
            wire[bit_name(word.name, index)] = len(wire)
    constants = sorted({signal for gate in circuit.gates for signal in gate.inputs if isinstance(signal, int)})
    inner = len(wire) + len(constants) + len(gate_outputs) - len(straight)
    total = inner + len(output_bits)
    following = len(wire)
    for signal in constants + [gate.out for gate in circuit.gates]:
        if signal in straight:
            wire[signal] = inner + straight[signal]
        else:
            wire[signal], following = following, following + 1
    return wire, straight, total


def dump_bristol(netlist: Netlist, width: int | None = None, style: str = "xor", signed: bool = False) -> str:
    """The netlist as a Bristol Fashion circuit of AND, XOR and INV gates (see the module documentation).

    Parameters
    ----------
    netlist : ComparatorNetwork or GateCircuit
    width, style, signed
        For a comparator network: the word width, the lowering style (``xor`` by default: the fewest AND
        gates) and whether words compare as two's complement; unused for a gate circuit.

    Examples
    --------
    >>> print(dump_bristol(ComparatorNetwork(2, ((0, 1),)), width=1), end="")
    6 8
    2 1 1
    2 1 1
    <BLANKLINE>
    2 1 0 1 2 AND
    2 1 0 2 3 XOR
    2 1 0 1 4 XOR
    2 1 3 4 5 AND
    2 1 0 5 6 XOR
    2 1 1 5 7 XOR
    """
    circuit = to_and_xor(as_gate_circuit(netlist, width, style, signed))
    wire, straight, total = _wires(circuit)
    lines: list[str] = []
    for signal in sorted({s for gate in circuit.gates for s in gate.inputs if isinstance(s, int)}):
        lines.append(f"1 1 {signal} {wire[signal]} EQ")
    for gate in circuit.gates:
        if gate.op == "not":
            lines.append(f"1 1 {wire[gate.inputs[0]]} {wire[gate.out]} INV")
        else:
            first, second = (wire[signal] for signal in gate.inputs)
            lines.append(f"2 1 {first} {second} {wire[gate.out]} {gate.op.upper()}")
    output_bits = [bit for word in circuit.outputs for bit in word.bits]
    first_output = total - len(output_bits)
    for position, bit in enumerate(output_bits):
        if straight.get(bit) == position:
            continue
        if isinstance(bit, int):
            lines.append(f"1 1 {bit} {first_output + position} EQ")
        else:
            lines.append(f"1 1 {wire[bit]} {first_output + position} EQW")
    head = [f"{len(lines)} {total}",
            " ".join(map(str, [len(circuit.inputs), *(word.width for word in circuit.inputs)])),
            " ".join(map(str, [len(circuit.outputs), *(word.width for word in circuit.outputs)])), ""]
    return "\n".join(head + lines) + "\n"
