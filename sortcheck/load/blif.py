"""Read and write the combinational subset of BLIF (Berkeley Logic Interchange Format).

What is read: ``.model NAME`` (optional; names the circuit), ``.inputs`` and
``.outputs`` (each may be repeated; the order of the names is the bit order),
``.names IN... OUT`` followed by its cover rows, and ``.end`` (optional: the
end of the file also ends the model; after ``.end`` only blank lines and
comments may follow).  ``#`` starts a comment; a ``\\`` at the end of a line
joins the next line to it.  A cover row is an input pattern of ``0``, ``1``
and ``-`` (one character per input) and an output ``1`` (the row is part of
the on-set) or ``0`` (part of the off-set: the signal is 0 where a row
matches, 1 elsewhere); one cover uses one kind.  ``.names OUT`` with the row
``1`` is the constant 1, with no rows the constant 0.  Latches, subcircuits,
library gates and every other directive are refused with their line.

Each cover becomes gates named after its signal: one ``and`` per cube of two
or more literals, an ``or`` over the cubes (``nor``/``nand`` for an off-set),
one shared ``not`` per negated signal; a cover that just copies one signal
becomes ``and(s, s)``, and constant covers become the constants 0 and 1.
Primary inputs are renamed to the bits of the input words
(:mod:`sortcheck.load.grouping`); other signals keep their names unless one
would look like such a bit (``x3[0]``).

Examples
--------
>>> text = '''
... .model majority   # the majority of three bits
... .inputs a b c
... .outputs m
... .names a b c m
... 11- 1
... 1-1 1
... -11 1
... .end
... '''
>>> circuit = parse_blif(text, "majority.blif")
>>> circuit.name, [circuit.evaluate([a, b, c])[0] for a in (0, 1) for b in (0, 1) for c in (0, 1)]
('majority', [0, 0, 0, 1, 0, 1, 1, 1])
>>> parse_blif(".inputs a\\n.outputs q\\n.latch a q 0\\n", "counter.blif")  # doctest: +ELLIPSIS
Traceback (most recent call last):
...
sortcheck.errors.NetlistError: counter.blif: line 3: .latch: ... so latches are not supported
"""

from __future__ import annotations

import os
import re
from dataclasses import dataclass, field


from sortcheck.errors import NetlistError
from sortcheck.load.decode import decode_text, read_file_bytes
from sortcheck.load.grouping import (
    choose_grouping, describe_grouping, group_bits, read_sidecar, show_cycle,
)
from sortcheck.model import GateCircuit, Gate, Property
from sortcheck.model.circuit import Signal, bit_name
from sortcheck.model.graphs import adjacency, find_cycle, topological_order

#: Yosys's internal gate cells (its simulation library), as ``write_blif -icells`` writes them:
#: input pins in order, output pin, and the on-set rows of the equivalent cover.
YOSYS_CELLS: dict[str, tuple[tuple[str, ...], str, tuple[str, ...]]] = {
    "$_BUF_": (("A",), "Y", ("1",)),
    "$_NOT_": (("A",), "Y", ("0",)),
    "$_AND_": (("A", "B"), "Y", ("11",)),
    "$_NAND_": (("A", "B"), "Y", ("0-", "-0")),
    "$_OR_": (("A", "B"), "Y", ("1-", "-1")),
    "$_NOR_": (("A", "B"), "Y", ("00",)),
    "$_XOR_": (("A", "B"), "Y", ("10", "01")),
    "$_XNOR_": (("A", "B"), "Y", ("00", "11")),
    "$_ANDNOT_": (("A", "B"), "Y", ("10",)),       # A and not B
    "$_ORNOT_": (("A", "B"), "Y", ("1-", "-0")),   # A or not B
    "$_MUX_": (("A", "B", "S"), "Y", ("1-0", "-11")),   # S ? B : A
    "$_NMUX_": (("A", "B", "S"), "Y", ("0-0", "-01")),  # not (S ? B : A)
    "$_AOI3_": (("A", "B", "C"), "Y", ("0-0", "-00")),  # not ((A and B) or C)
    "$_OAI3_": (("A", "B", "C"), "Y", ("00-", "--0")),  # not ((A or B) and C)
    "$_AOI4_": (("A", "B", "C", "D"), "Y", ("0-0-", "0--0", "-00-", "-0-0")),  # not ((A and B) or (C and D))
    "$_OAI4_": (("A", "B", "C", "D"), "Y", ("00--", "--00")),  # not ((A or B) and (C or D))
}

_UNSUPPORTED = {
    ".subckt": "subcircuits (hierarchical BLIF) are not supported, except Yosys's gate cells ($_AND_, $_MUX_, ...)",
    ".gate": "library gates are not supported; write the logic as .names covers",
    ".mlatch": "sortcheck checks combinational circuits only, so latches are not supported",
    ".exdc": "external don't-care networks are not supported",
    ".search": "reading other files is not supported",
    ".clock": "sortcheck checks combinational circuits only, so clocks are not supported",
}
_LATCH = "sortcheck checks combinational circuits only, so latches are not supported"
_SHADOWS = re.compile(r"^x[0-9]+\[[0-9]+\]$")  # names like the bits of input words x0, x1, ...
_ROW = re.compile(r"^[01-]*$")
_SAFE_NAME = re.compile(r"^[^\s#\\.=][^\s#\\=]*$")


@dataclass
class _Cover:
    """One ``.names``: its signals, its line, and its rows (input patterns) and output kind."""

    inputs: list[str]
    out: str
    line: int
    patterns: list[str] = field(default_factory=list)
    value: str | None = None  # "1" (on-set) or "0" (off-set), from the first row


@dataclass
class _Model:
    name: str | None = None
    inputs: list[tuple[str, int]] = field(default_factory=list)
    outputs: list[tuple[str, int]] = field(default_factory=list)
    covers: list[_Cover] = field(default_factory=list)


# --- reading ---------------------------------------------------------------------------------

def _logical_lines(text: str):
    """Yield ``(line number, tokens)`` with comments removed and continued lines joined."""
    pending, start = "", None
    for number, line in enumerate(text.split("\n"), start=1):
        line = line.removesuffix("\r").split("#", 1)[0].rstrip()
        if start is None:
            start = number
        if line.endswith("\\"):
            pending += line[:-1] + " "
            continue
        tokens = (pending + line).split()
        if tokens:
            yield start, tokens
        pending, start = "", None
    if pending.split():
        yield start, pending.split()


def _read_model(text: str, source: str) -> _Model:
    model, cover, ended = _Model(), None, None
    defined: dict[str, str] = {}
    for number, tokens in _logical_lines(text):
        where, head = f"line {number}", tokens[0]
        if ended is not None:
            raise NetlistError(f"text after .end (line {ended}); sortcheck reads one model per file", source, where)
        if not head.startswith("."):
            if cover is None:
                raise NetlistError(f"expected a directive such as .names, got {' '.join(tokens)!r}", source, where)
            _add_row(cover, tokens, source, where)
            continue
        cover = None
        if head == ".model":
            if model.name is not None or model.inputs or model.outputs or model.covers:
                raise NetlistError(".model must come first, and only once: sortcheck reads one model per file",
                                   source, where)
            model.name = tokens[1] if len(tokens) > 1 else ""
        elif head in (".inputs", ".outputs"):
            for name in tokens[1:]:
                if head == ".inputs":
                    _define(name, f"an input on line {number}", defined, source, where)
                    model.inputs.append((name, number))
                else:
                    model.outputs.append((name, number))
        elif head == ".names":
            if len(tokens) < 2:
                raise NetlistError(".names needs at least its output signal", source, where)
            _define(tokens[-1], f"the .names on line {number}", defined, source, where)
            cover = _Cover(tokens[1:-1], tokens[-1], number)
            model.covers.append(cover)
        elif head == ".subckt" and len(tokens) > 1 and tokens[1] in YOSYS_CELLS:
            cover = _cell_cover(tokens, number, source, where)
            _define(cover.out, f"the .subckt on line {number}", defined, source, where)
            model.covers.append(cover)
            cover = None
        elif head == ".end":
            ended = number
        elif head == ".latch":
            raise NetlistError(f".latch: {_LATCH}", source, where)
        elif head in _UNSUPPORTED:
            raise NetlistError(f"{head}: {_UNSUPPORTED[head]}", source, where)
        else:
            raise NetlistError(f"unknown directive {head!r} (sortcheck reads .model, .inputs, .outputs, .names, "
                               "Yosys's gate cells as .subckt, and .end)", source, where)
    if model.name is None and not (model.inputs or model.outputs or model.covers):
        raise NetlistError("no BLIF model in the file (only comments and blank lines)", source)
    return model


def _cell_cover(tokens: list[str], number: int, source: str, where: str) -> _Cover:
    """The cover of one Yosys gate cell, ``.subckt $_MUX_ A=a B=b S=s Y=y``."""
    kind = tokens[1]
    pins, output, rows = YOSYS_CELLS[kind]
    connections: dict[str, str] = {}
    for token in tokens[2:]:
        pin, equals, net = token.partition("=")
        if not equals or not net or pin in connections:
            raise NetlistError(f"{kind}: expected one PIN=SIGNAL for each of its pins, got {token!r}", source, where)
        connections[pin] = net
    if set(connections) != {*pins, output}:
        wanted = ", ".join(f"{pin}=..." for pin in (*pins, output))
        raise NetlistError(f"{kind} connects pins {', '.join(sorted(connections))}; it has {wanted}", source, where)
    return _Cover([connections[pin] for pin in pins], connections[output], number, list(rows), "1")


def _define(name: str, what: str, defined: dict[str, str], source: str, where: str) -> None:
    if name in defined:
        raise NetlistError(f"signal {name!r} is defined twice (also {defined[name]})", source, where)
    defined[name] = what


def _add_row(cover: _Cover, tokens: list[str], source: str, where: str) -> None:
    count = len(cover.inputs)
    expected = (f"an input pattern of {count} character{'s' if count != 1 else ''} (0, 1, -) and an output 0 or 1"
                if count else "only an output 0 or 1, as the .names has no inputs")
    pattern, value = (tokens[0], tokens[1]) if len(tokens) == 2 else ("", tokens[0])
    if len(tokens) != (2 if count else 1) or len(pattern) != count:
        raise NetlistError(f"cover row {' '.join(tokens)!r} does not fit the .names on line {cover.line} "
                           f"with {count} input{'s' if count != 1 else ''}: expected {expected}", source, where)
    if not _ROW.match(pattern):
        raise NetlistError(f"cover row {pattern!r} may hold only 0, 1 and -", source, where)
    if value not in ("0", "1"):
        raise NetlistError(f"the output of a cover row must be 0 or 1, got {value!r}", source, where)
    if cover.value is not None and value != cover.value:
        raise NetlistError(f"the cover of {cover.out!r} mixes on-set rows (output 1) and off-set rows (output 0)",
                           source, where)
    cover.value = value
    cover.patterns.append(pattern)


def _drop_dangling(model: _Model, source: str) -> None:
    """Leave out the covers that read, directly or not, a signal nothing defines, when no output needs them.

    Yosys's ``write_blif`` (without ``-noalias``) writes a copy for every
    public wire that aliases another, also for wires whose driver ABC
    absorbed: such a copy reads an undefined signal and drives nothing the
    outputs read.  An undefined signal that an output needs is an error.
    """
    defined = {name for name, _ in model.inputs} | {cover.out for cover in model.covers}
    if all(name in defined for cover in model.covers for name in cover.inputs):
        for name, number in model.outputs:
            if name not in defined:
                raise NetlistError(f"undefined signal {name!r}", source, f"line {number}")
        return
    by_out = {cover.out: cover for cover in model.covers}
    needed: set[str] = set()
    stack = [name for name, _ in model.outputs]
    while stack:
        name = stack.pop()
        if name in needed:
            continue
        needed.add(name)
        cover = by_out.get(name)
        if cover is not None:
            stack.extend(cover.inputs)
    uses = [(name, cover.line) for cover in model.covers if cover.out in needed for name in cover.inputs]
    for name, number in uses + model.outputs:
        if name not in defined:
            raise NetlistError(f"undefined signal {name!r}", source, f"line {number}")
    readers: dict[str, list[_Cover]] = {}
    for cover in model.covers:
        for name in cover.inputs:
            readers.setdefault(name, []).append(cover)
    dangling: set[str] = set()
    stack = [name for cover in model.covers for name in cover.inputs if name not in defined]
    while stack:
        for cover in readers.get(stack.pop(), ()):
            if cover.out not in dangling:
                dangling.add(cover.out)
                stack.append(cover.out)
    model.covers = [cover for cover in model.covers if cover.out not in dangling]


def _check_references(model: _Model, source: str) -> None:
    _drop_dangling(model, source)
    graph = adjacency((name, cover.out) for cover in model.covers for name in cover.inputs)
    if topological_order(graph) is not None:
        return
    cycle = find_cycle(graph)
    line_of = {cover.out: cover.line for cover in model.covers}
    start = min(range(len(cycle)), key=lambda i: line_of[cycle[i]])
    cycle = cycle[start:] + cycle[:start]
    raise NetlistError(f"combinational cycle through signals {show_cycle(cycle)}",
                       source, f"line {line_of[cycle[0]]}")


def _constant(cover: _Cover) -> int | None:
    """The constant a cover is written as (no rows, or a row of only ``-``), or None."""
    if not cover.patterns:
        return 0
    if any(set(pattern) <= {"-"} for pattern in cover.patterns):
        return 1 if cover.value == "1" else 0
    return None


class _Names:
    """Fresh signal names that clash with no signal of the file and no input bit of the model."""

    def __init__(self, taken):
        self.taken = set(taken)

    def fresh(self, base: str) -> str:
        name, count = base, 0
        while name in self.taken or _SHADOWS.match(name):
            count += 1
            name = f"{base}_{count}"
        self.taken.add(name)
        return name


def _build(model: _Model, source: str, words: int | None, width: int | None, claim: Property | None) -> GateCircuit:
    input_names = [name for name, _ in model.inputs]
    output_names = [name for name, _ in model.outputs]
    names = _Names(input_names + [cover.out for cover in model.covers])
    signal_of: dict[str, Signal] = {}
    for cover in model.covers:  # fresh names are never bit-like, so they cannot meet an input bit
        value = _constant(cover)
        signal_of[cover.out] = value if value is not None else (
            names.fresh(cover.out) if _SHADOWS.match(cover.out) else cover.out)
    grouped = group_bits(input_names, [signal_of.get(name, name) for name in output_names], words, width, source)
    signal_of.update(grouped.renaming)
    gates: list[Gate] = []
    negations: dict[str, str] = {}

    def literal(name: str, polarity: str) -> Signal:
        signal = signal_of[name]
        if polarity == "1":
            return signal
        if isinstance(signal, int):
            return 1 - signal
        if signal not in negations:
            negations[signal] = names.fresh(f"{signal.replace('[', '_').replace(']', '')}_not")
            gates.append(Gate(negations[signal], "not", (signal,)))
        return negations[signal]

    for cover in model.covers:
        if not isinstance(signal_of[cover.out], int):
            _cover_gates(cover, signal_of[cover.out], literal, names, gates)
    description = describe_grouping("BLIF", input_names, output_names, grouped.inputs[0].width)
    return GateCircuit(grouped.inputs, tuple(gates), grouped.outputs, name=model.name or None,
                       description=description, claim=claim)


def _cover_gates(cover: _Cover, out: str, literal, names: _Names, gates: list[Gate]) -> None:
    """Append the gates that compute a (non-constant) cover to ``gates``; the last one defines ``out``."""
    cubes = [[literal(name, bit) for name, bit in zip(cover.inputs, pattern) if bit != "-"]
             for pattern in cover.patterns]
    offset = cover.value == "0"
    if len(cubes) == 1:
        cube = cubes[0]
        if len(cube) == 1:
            gates.append(Gate(out, "not", (cube[0],)) if offset else Gate(out, "and", (cube[0], cube[0])))
        else:
            gates.append(Gate(out, "nand" if offset else "and", tuple(cube)))
        return
    terms: list[Signal] = []
    for cube in cubes:
        if len(cube) == 1:
            terms.append(cube[0])
        else:
            terms.append(names.fresh(f"{out}_cube"))
            gates.append(Gate(terms[-1], "and", tuple(cube)))
    gates.append(Gate(out, "nor" if offset else "or", tuple(terms)))


def parse_blif(text: str | bytes, source: str = "<blif>", words: int | None = None, width: int | None = None,
               claim: Property | None = None) -> GateCircuit:
    """Parse a combinational BLIF model into a gate circuit.

    Parameters
    ----------
    text : str or bytes
        The file contents (bytes must be UTF-8).
    source : str
        The file name, for error messages.
    words, width : int or None
        How to group the input and output bits into words (:mod:`sortcheck.load.grouping`).
    claim : Property or None
        The property the circuit claims (from its grouping file).

    Raises
    ------
    NetlistError
        With the place ``line N`` (the first line of a continued line).
    """
    text = decode_text(text, source)
    if not text.strip():
        raise NetlistError("empty file", source)
    model = _read_model(text, source)
    _check_references(model, source)
    return _build(model, source, words, width, claim)


def read_blif(path: str | os.PathLike, words: int | None = None, width: int | None = None) -> GateCircuit:
    """Read a BLIF file and its grouping file (``FILE.words``, if any); ``words``/``width`` override it."""
    grouping = choose_grouping(read_sidecar(path), words, width)
    return parse_blif(read_file_bytes(path), str(path), grouping.words, grouping.width, grouping.claim)


# --- writing --------------------------------------------------------------------------------

#: Wider XOR gates are written as a chain, so that no cover has more than 2^(MAX_XOR_INPUTS - 1) rows.
MAX_XOR_INPUTS = 6


def _parity_rows(count: int, odd: bool) -> list[str]:
    return [format(k, f"0{count}b") for k in range(1 << count) if (bin(k).count("1") % 2 == 1) == odd]


def _gate_rows(op: str, count: int) -> tuple[list[str], str]:
    """The cover rows (input patterns) and the output value of one op on ``count`` inputs."""
    if op in ("and", "nand"):
        return ["1" * count], "1" if op == "and" else "0"
    if op in ("or", "nor"):
        return ["-" * k + "1" + "-" * (count - k - 1) for k in range(count)], "1" if op == "or" else "0"
    if op in ("xor", "xnor"):
        return _parity_rows(count, True), "1" if op == "xor" else "0"
    if op == "not":
        return ["0"], "1"
    if op == "mux":  # inputs: select, when0, when1
        return ["01-", "1-1"], "1"
    raise ValueError(f"unknown op {op!r}")


def dump_blif(circuit: GateCircuit) -> str:
    """The circuit as BLIF: one ``.names`` per gate (wide XORs as a chain), inputs and outputs bit by bit.

    >>> from sortcheck.model import Word, OutputWord
    >>> circuit = GateCircuit((Word("a", 1), Word("b", 1)), (Gate("lo", "and", ("a[0]", "b[0]")),
    ...                       Gate("hi", "or", ("a[0]", "b[0]"))), (OutputWord("y", ("lo", "hi")),), name="cas")
    >>> print(dump_blif(circuit), end="")
    .model cas
    .inputs a[0] b[0]
    .outputs lo hi
    .names a[0] b[0] lo
    11 1
    .names a[0] b[0] hi
    1- 1
    -1 1
    .end
    >>> parse_blif(dump_blif(circuit), width=1).evaluate([1, 0])
    [0, 1]
    """
    input_bits = [bit_name(word.name, i) for word in circuit.inputs for i in range(word.width)]
    names = _Names([])
    blif_name: dict[Signal, str] = {signal: _safe(signal, names) for signal in input_bits}
    blif_name.update({gate.out: _safe(gate.out, names) for gate in circuit.gates})
    body: list[str] = []

    def name_of(signal: Signal) -> str:
        if signal not in blif_name:  # a constant, written once when first needed
            blif_name[signal] = _safe(f"const{signal}", names)
            body.append(f".names {blif_name[signal]}" + ("\n1" if signal == 1 else ""))
        return blif_name[signal]

    for gate in circuit.gates:
        _write_cover(gate.op, [name_of(signal) for signal in gate.inputs], blif_name[gate.out], names, body)
    outputs: list[str] = []
    listed, inputs = set(), set(input_bits)
    for word in circuit.outputs:
        for index, bit in enumerate(word.bits):
            name = name_of(bit)
            if bit in inputs or isinstance(bit, int) or name in listed:
                copy = _safe(bit_name(word.name, index), names)
                body.append(f".names {name} {copy}\n1 1")
                name = copy
            outputs.append(name)
            listed.add(name)
    model = _safe(circuit.name or "circuit", _Names([]))
    head = [f".model {model}", ".inputs " + " ".join(blif_name[bit] for bit in input_bits),
            ".outputs " + " ".join(outputs)]
    return "\n".join(head + body + [".end"]) + "\n"


def _safe(signal: str, names: _Names) -> str:
    """A BLIF-safe, fresh name for ``signal`` (no spaces, ``#``, ``\\``, ``=``, no leading dot)."""
    base = signal if _SAFE_NAME.match(signal) else "s_" + re.sub(r"[\s#\\=.]", "_", signal)
    name, count = base, 0
    while name in names.taken:
        count += 1
        name = f"{base}_{count}"
    names.taken.add(name)
    return name


def _write_cover(op: str, inputs: list[str], out: str, names: _Names, body: list[str]) -> None:
    """Append the ``.names`` of one gate, given the BLIF names of its inputs and output."""
    while op in ("xor", "xnor") and len(inputs) > MAX_XOR_INPUTS:
        partial = _safe(f"{out}_part", names)
        _write_cover("xor", inputs[:MAX_XOR_INPUTS], partial, names, body)
        inputs = [partial] + inputs[MAX_XOR_INPUTS:]
    rows, value = _gate_rows(op, len(inputs))
    body.append(f".names {' '.join(inputs)} {out}\n" + "\n".join(f"{row} {value}" for row in rows))
