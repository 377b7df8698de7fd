"""Write netlists as synthesizable Verilog modules, one port per word.

A comparator network becomes a word-level module with a parameter ``W``
(the word width; any width is right, as the network's verdict holds for
words of any values): ports ``input [W-1:0] x0`` ... and ``output [W-1:0]
y0`` ..., one per channel, and one compare-exchange per comparator, two
``assign`` statements that put the smaller word on the comparator's first
channel and the larger on its second.  Words compare unsigned, or as two's
complement (``$signed``) when asked.

A gate circuit becomes a bit-level module: a port per input word and per
output word, named after the words when every name is a plain Verilog
identifier (else ``x0``, ``x1``, ... and ``y0``, ``y1``, ...), bit 0 the
least significant; one ``assign`` per gate (``&``, ``|``, ``^``, their
negations, ``~`` and ``?:`` for a mux), on wires ``s0``, ``s1``, ...

Examples
--------
>>> from sortcheck.model import ComparatorNetwork
>>> print(dump_verilog(ComparatorNetwork(2, ((0, 1),), name="pair"), width=4), end="")
// pair: a comparator network on 2 channels, 1 comparators, words of W bits (unsigned)
module pair #(parameter W = 4) (
  input [W-1:0] x0,
  input [W-1:0] x1,
  output [W-1:0] y0,
  output [W-1:0] y1
);
  wire [W-1:0] c0_lo = (x1 < x0) ? x1 : x0;
  wire [W-1:0] c0_hi = (x1 < x0) ? x0 : x1;
  assign y0 = c0_lo;
  assign y1 = c0_hi;
endmodule
"""

from __future__ import annotations

import re

from sortcheck.model import ComparatorNetwork, GateCircuit, Netlist
from sortcheck.model.circuit import Gate, Signal, bit_name

DEFAULT_WIDTH = 8
"""The default value of a network module's parameter ``W`` when no width is given."""

_IDENTIFIER = re.compile(r"^[A-Za-z_][A-Za-z0-9_]*$")
_INTERNAL = re.compile(r"^s[0-9]+$")
#: Verilog-2005 keywords that a word name might be (a port may not be named so).
_KEYWORDS = frozenset("""always and assign automatic begin buf case casex casez cell config deassign default defparam
design disable edge else end endcase endconfig endfunction endgenerate endmodule endprimitive endspecify endtable
endtask event for force forever fork function generate genvar highz0 highz1 if ifnone incdir include initial inout
input instance integer join large liblist library localparam macromodule medium module nand negedge nmos nor
noshowcancelled not notif0 notif1 or output parameter pmos posedge primitive pull0 pull1 pulldown pullup
pulsestyle_onevent pulsestyle_ondetect rcmos real realtime reg release repeat rnmos rpmos rtran rtranif0 rtranif1
scalared showcancelled signed small specify specparam strong0 strong1 supply0 supply1 table task time tran
tranif0 tranif1 tri tri0 tri1 triand trior trireg unsigned use uwire vectored wait wand weak0 weak1 while wire
wor xnor xor""".split())


def module_name(netlist: Netlist, default: str = "sorter") -> str:
    """A Verilog identifier for the module: the netlist's name with other characters made ``_``.

    >>> module_name(ComparatorNetwork(4, (), name="merge-exchange-4")), module_name(ComparatorNetwork(2, ()))
    ('merge_exchange_4', 'sorter')
    """
    name = re.sub(r"[^A-Za-z0-9_]", "_", netlist.name or default)
    if not _IDENTIFIER.match(name) or name in _KEYWORDS:
        name = "m_" + name
    return name


def dump_verilog(netlist: Netlist, width: int | None = None, signed: bool = False, name: str | None = None) -> str:
    """The netlist as a Verilog module (see the module documentation).

    Parameters
    ----------
    netlist : ComparatorNetwork or GateCircuit
    width : int or None
        A network module's default ``W`` (:data:`DEFAULT_WIDTH` when None); unused for a gate circuit.
    signed : bool
        A network module compares two's complement words; unused for a gate circuit.
    name : str or None
        The module name (default: :func:`module_name`).
    """
    name = name or module_name(netlist)
    if isinstance(netlist, ComparatorNetwork):
        return _network_module(netlist, width or DEFAULT_WIDTH, signed, name)
    if isinstance(netlist, GateCircuit):
        return _circuit_module(netlist, name)
    raise TypeError(f"not a netlist: {type(netlist).__name__}")


def _network_module(network: ComparatorNetwork, width: int, signed: bool, name: str) -> str:
    kind = "two's complement" if signed else "unsigned"
    lines = [f"// {network.name or name}: a comparator network on {network.channels} channels, {network.size} "
             f"comparators, words of W bits ({kind})",
             f"module {name} #(parameter W = {width}) ("]
    ports = [f"  input [W-1:0] x{c}" for c in range(network.channels)]
    ports += [f"  output [W-1:0] y{c}" for c in range(network.channels)]
    lines += [",\n".join(ports), ");"]
    current = [f"x{c}" for c in range(network.channels)]
    for index, (a, b) in enumerate(network.comparators):
        first, second = current[a], current[b]
        less = f"$signed({second}) < $signed({first})" if signed else f"{second} < {first}"
        lines.append(f"  wire [W-1:0] c{index}_lo = ({less}) ? {second} : {first};")
        lines.append(f"  wire [W-1:0] c{index}_hi = ({less}) ? {first} : {second};")
        current[a], current[b] = f"c{index}_lo", f"c{index}_hi"
    lines += [f"  assign y{c} = {signal};" for c, signal in enumerate(current)]
    return "\n".join(lines + ["endmodule"]) + "\n"


def port_names(circuit: GateCircuit) -> tuple[list[str], list[str]]:
    """The port names of the input and output words: their own names if all are usable, else x<i> and y<i>.

    >>> from sortcheck.model.circuit import OutputWord, Word
    >>> port_names(GateCircuit((Word("a", 1),), (), (OutputWord("out", ("a[0]",)),)))
    (['a'], ['out'])
    >>> port_names(GateCircuit((Word("a", 1),), (), (OutputWord("wire", ("a[0]",)),)))
    (['x0'], ['y0'])
    """
    inputs = [word.name for word in circuit.inputs]
    outputs = [word.name for word in circuit.outputs]
    names = inputs + outputs
    if len(set(names)) == len(names) and all(_IDENTIFIER.match(n) and n not in _KEYWORDS
                                              and not _INTERNAL.match(n) for n in names):
        return inputs, outputs
    return [f"x{i}" for i in range(len(inputs))], [f"y{i}" for i in range(len(outputs))]


def _expression(gate: Gate, term) -> str:
    operands = [term(signal) for signal in gate.inputs]
    if gate.op == "not":
        return f"~{operands[0]}"
    if gate.op == "mux":
        select, when0, when1 = operands
        return f"{select} ? {when1} : {when0}"
    symbol = {"and": "&", "nand": "&", "or": "|", "nor": "|", "xor": "^", "xnor": "^"}[gate.op]
    joined = f" {symbol} ".join(operands)
    return f"~({joined})" if gate.op in ("nand", "nor", "xnor") else joined


def _circuit_module(circuit: GateCircuit, name: str) -> str:
    inputs, outputs = port_names(circuit)
    verilog: dict[Signal, str] = {0: "1'b0", 1: "1'b1"}
    for word, port in zip(circuit.inputs, inputs):
        for index in range(word.width):
            verilog[bit_name(word.name, index)] = f"{port}[{index}]"
    order = circuit.gate_order
    for index, gate in enumerate(order):
        verilog[gate.out] = f"s{index}"
    lines = [f"// {circuit.name or name}: a gate circuit of {circuit.words} input words and {len(circuit.outputs)} "
             f"output words, {len(circuit.gates)} gates; bit 0 of every port is the least significant",
             f"module {name} ("]
    ports = [f"  input [{word.width - 1}:0] {port}" for word, port in zip(circuit.inputs, inputs)]
    ports += [f"  output [{word.width - 1}:0] {port}" for word, port in zip(circuit.outputs, outputs)]
    lines += [",\n".join(ports), ");"]
    lines += [f"  wire s{index} = {_expression(gate, verilog.__getitem__)};" for index, gate in enumerate(order)]
    for word, port in zip(circuit.outputs, outputs):
        bits = ", ".join(verilog[bit] for bit in reversed(word.bits))
        lines.append(f"  assign {port} = {{{bits}}};")
    return "\n".join(lines + ["endmodule"]) + "\n"
