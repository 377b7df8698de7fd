"""A synthesized Verilog design as a gate circuit: cells to gates, registers to latency, ports to words.

Ports become words without guessing.  The data input ports (every input port
that is not a clock, reset or enable, see
:mod:`sortcheck.load.verilog.registers`) are taken in the order the module
declares them, each least significant bit first, and their bits are cut into
words: by default each port is one word (the ports must then have one width);
with ``words`` and ``width`` the concatenated bits are cut into ``words``
words of ``width`` bits, so a packed port ``input [N*W-1:0] keys`` gives word
0 from its least significant ``W`` bits.  Output ports are cut the same way into
words of the input width.  The model's ``origin`` records the mapping, the
latency, the clock, what was held, and which Yosys ran which script.
"""

from __future__ import annotations

from dataclasses import dataclass

from sortcheck.errors import NetlistError
from sortcheck.load.grouping import input_words, output_words
from sortcheck.load.verilog.origin import describe_origin
from sortcheck.load.verilog.registers import FlipFlop, classify_controls, flip_flop, split_src
from sortcheck.load.verilog.yosys import MEMORY_CELLS, Elaboration, Synthesized, VerilogError
from sortcheck.model import GateCircuit, Gate, Sorts
from sortcheck.model.graphs import find_cycle, topological_order

#: Yosys's fine-grained gate cells: input pins in order, and the gates computing the output ``Y``
#: as (op, operands), where an operand is a pin or the index of an earlier gate of the list.
GATE_CELLS: dict[str, tuple[tuple[str, ...], tuple[tuple[str, tuple], ...]]] = {
    "$_BUF_": (("A",), (("and", ("A", "A")),)),
    "$_NOT_": (("A",), (("not", ("A",)),)),
    "$_AND_": (("A", "B"), (("and", ("A", "B")),)),
    "$_NAND_": (("A", "B"), (("nand", ("A", "B")),)),
    "$_OR_": (("A", "B"), (("or", ("A", "B")),)),
    "$_NOR_": (("A", "B"), (("nor", ("A", "B")),)),
    "$_XOR_": (("A", "B"), (("xor", ("A", "B")),)),
    "$_XNOR_": (("A", "B"), (("xnor", ("A", "B")),)),
    "$_ANDNOT_": (("A", "B"), (("not", ("B",)), ("and", ("A", 0)))),
    "$_ORNOT_": (("A", "B"), (("not", ("B",)), ("or", ("A", 0)))),
    "$_MUX_": (("A", "B", "S"), (("mux", ("S", "A", "B")),)),
    "$_NMUX_": (("A", "B", "S"), (("mux", ("S", "A", "B")), ("not", (0,)))),
    "$_AOI3_": (("A", "B", "C"), (("and", ("A", "B")), ("nor", (0, "C")))),
    "$_OAI3_": (("A", "B", "C"), (("or", ("A", "B")), ("nand", (0, "C")))),
    "$_AOI4_": (("A", "B", "C", "D"), (("and", ("A", "B")), ("and", ("C", "D")), ("nor", (0, 1)))),
    "$_OAI4_": (("A", "B", "C", "D"), (("or", ("A", "B")), ("or", ("C", "D")), ("nand", (0, 1)))),
}
IGNORED_CELLS = ("$scopeinfo",)
CONSTANTS = ("0", "1", "x", "z")


@dataclass
class _Port:
    name: str
    bits: list
    signed: bool

    def bit_label(self, index: int) -> str:
        return self.name if len(self.bits) == 1 else f"{self.name}[{index}]"


def design_circuit(synthesized: Synthesized, elaboration: Elaboration, words: int | None = None,
                   width: int | None = None) -> GateCircuit:
    """The combinational function of a synthesized design, with its latency in ``origin``."""
    source = elaboration.files[0]
    _refuse_state(synthesized.state_cells)
    module = synthesized.module
    inputs, outputs = _ports(module, synthesized.top, source)
    gates, flip_flops = _cells(module)
    bit_names = {bit: port.bit_label(index) for port in inputs for index, bit in enumerate(port.bits)}
    readers = {bit for cell in gates for pin in GATE_CELLS[cell["type"]][0] for bit in cell["connections"][pin]}
    readers |= {ff.data for ff in flip_flops} | {bit for port in outputs for bit in port.bits}
    graph = _dependencies(gates, flip_flops)
    order = topological_order(graph)
    if order is None:  # before the control pins are judged: a register that feeds its own enable is feedback
        _raise_cycle(find_cycle(graph), gates, flip_flops, source)
    controls = classify_controls(flip_flops, bit_names, set(bit_names), readers)
    held_ports = {port.name for port in inputs if port.bits and all(
        bit_names[bit] in controls.held or bit_names[bit] == controls.clock for bit in port.bits)}
    data_ports = [port for port in inputs if port.name not in held_ports]
    side_inputs, side_outputs = _side_band(order, gates, flip_flops, data_ports, outputs, width)
    data_ports = [port for port in data_ports if port.name not in side_inputs]
    outputs = [port for port in outputs if port.name not in side_outputs]
    if not data_ports:
        raise VerilogError(f"module '{synthesized.top}' has no data input ports", source)
    latency = _latency(order, gates, flip_flops, data_ports, outputs, source)
    return _build(synthesized, elaboration, gates, flip_flops, data_ports, outputs, words, width, {
        "latency": latency, "clock": controls.clock,
        "held": {name: value for name, (value, _) in sorted(controls.held.items())},
        "held_roles": {name: role for name, (_, role) in sorted(controls.held.items())},
        "registers": len(flip_flops), "side_band": {"inputs": side_inputs, "outputs": side_outputs}})


def _ports(module: dict, top: str, source: str) -> tuple[list[_Port], list[_Port]]:
    """The input and output ports in declaration order."""
    if any(port["direction"] == "inout" for port in module["ports"].values()):
        raise VerilogError("inout ports are not supported", source)
    inputs = [_Port(name, port["bits"], bool(port.get("signed"))) for name, port in module["ports"].items()
              if port["direction"] == "input"]
    outputs = [_Port(name, port["bits"], False) for name, port in module["ports"].items()
               if port["direction"] == "output"]
    if not outputs:
        raise VerilogError(f"module '{top}' has no output ports", source)
    return inputs, outputs


def _side_band(order, gates, flip_flops, data_ports, outputs, width) -> tuple[list[str], list[str]]:
    """1-bit ports beside words of several bits that the words do not depend on: left out, and said so.

    A 1-bit output port (a valid or done flag) is not a word; a 1-bit input port (a valid flag, an unused
    input) is left out only if no bit of a word output depends on it, so leaving it out cannot hide
    anything the words compute.  With words of one bit nothing is left out.
    """
    if not any(len(port.bits) > 1 for port in data_ports) and (width or 1) == 1:
        return [], []
    side_outputs = [port.name for port in outputs if len(port.bits) == 1]
    narrow = [port for port in data_ports if len(port.bits) == 1]
    if not narrow:
        return [], side_outputs
    cone: dict = {port.bits[0]: 1 << index for index, port in enumerate(narrow)}
    for kind, index in order:
        if kind == "ff":
            cone[flip_flops[index].output] = cone.get(flip_flops[index].data, 0)
        else:
            cell = gates[index]
            mask = 0
            for pin in GATE_CELLS[cell["type"]][0]:
                mask |= cone.get(cell["connections"][pin][0], 0)
            cone[cell["connections"]["Y"][0]] = mask
    read = 0
    for port in outputs:
        if port.name not in side_outputs:
            for bit in port.bits:
                read |= cone.get(bit, 0)
    return [port.name for index, port in enumerate(narrow) if not read >> index & 1], side_outputs


def _refuse_state(state_cells) -> None:
    for cell in state_cells:
        file, line = split_src(cell["src"])
        if cell["type"] in MEMORY_CELLS:
            raise VerilogError(f"memory '{cell['name']}' is not supported: sortcheck checks combinational logic "
                               "and feed-forward flip-flop pipelines (write the array as separate registers)",
                               file, line)
        raise VerilogError(f"'{cell['name']}' is a latch ({cell['type']}): sortcheck checks combinational logic "
                           "and flip-flop pipelines only (a latch is usually an incomplete always @* block)",
                           file, line)


def _cells(module: dict) -> tuple[list[dict], list[FlipFlop]]:
    gates, flip_flops = [], []
    for name, cell in module.get("cells", {}).items():
        kind = cell["type"]
        if kind in GATE_CELLS:
            gates.append(cell)
            continue
        if kind in IGNORED_CELLS:
            continue
        label = _cell_label(name, cell, module)
        ff = flip_flop(label, cell)
        if ff is None:
            file, line = split_src(str(cell.get("attributes", {}).get("src", "")).split("|")[0])
            raise VerilogError(f"cell '{label}' of type {kind} is not supported after synthesis", file, line)
        flip_flops.append(ff)
    return gates, flip_flops


def _cell_label(name: str, cell: dict, module: dict) -> str:
    """A register's name for messages: the wire its output drives (``stage1[3]``), else the cell's name."""
    output = cell.get("connections", {}).get("Q", [None])[0]
    ports = module.get("ports", {})
    wires = sorted(module.get("netnames", {}).items(), key=lambda item: item[0] in ports)  # registers first
    for wire, net in wires:
        if not net.get("hide_name") and output in net["bits"]:
            index = net["bits"].index(output)
            return wire if len(net["bits"]) == 1 else f"{wire}[{index + net.get('offset', 0)}]"
    return name.lstrip("\\")


def _dependencies(gates, flip_flops) -> dict:
    """Which cells read each cell's output: gates and flip-flops, a flip-flop's control pins included."""
    graph: dict = {}
    producers: dict = {}
    for index, cell in enumerate(gates):
        node = ("gate", index)
        producers[cell["connections"]["Y"][0]] = node
        graph[node] = []
    for index, ff in enumerate(flip_flops):
        producers[ff.output] = ("ff", index)
        graph[("ff", index)] = []
    for index, cell in enumerate(gates):
        for pin in GATE_CELLS[cell["type"]][0]:
            producer = producers.get(cell["connections"][pin][0])
            if producer is not None:
                graph[producer].append(("gate", index))
    for index, ff in enumerate(flip_flops):
        for bit in (ff.data, *(bit for bit, _ in ff.controls.values())):
            producer = producers.get(bit)
            if producer is not None:
                graph[producer].append(("ff", index))
    return graph


def _latency(order, gates, flip_flops, data_ports, outputs, source) -> int:
    """The register stages on every input-to-output path (``order``: the cells in dependency order).

    Raises where two paths of different register counts meet, at a gate or among the outputs.
    """
    stage: dict = {bit: (0, None) for port in data_ports for bit in port.bits}
    for kind, index in order:
        if kind == "ff":
            ff = flip_flops[index]
            before = stage.get(ff.data)
            stage[ff.output] = None if before is None else (before[0] + 1, ff)
            continue
        cell = gates[index]
        seen = [stage[bit] for pin in GATE_CELLS[cell["type"]][0] for bit in cell["connections"][pin]
                if stage.get(bit) is not None]
        if len({depth for depth, _ in seen}) > 1:
            _raise_unbalanced(seen, str(cell.get("attributes", {}).get("src", "")).split("|")[0], source)
        stage[cell["connections"]["Y"][0]] = max(seen, key=lambda item: item[0]) if seen else None
    found = [(port, stage[bit]) for port in outputs for bit in port.bits if stage.get(bit) is not None]
    depths = sorted({depth for _, (depth, _) in found})
    if len(depths) > 1:
        early = next(item for item in found if item[1][0] == depths[0])
        late = next(item for item in found if item[1][0] == depths[-1])
        file, line = split_src(early[1][1].src) if early[1][1] is not None else (source, None)
        raise VerilogError(f"unbalanced pipeline: output '{late[0].name}' comes {_stages(late[1])} after the "
                           f"inputs but output '{early[0].name}' {_stages(early[1])}; every input-to-output path "
                           "must pass the same number of registers", file or source, line)
    return depths[0] if depths else 0


def _stages(entry) -> str:
    depth, last = entry
    noun = "register stage" if depth == 1 else "register stages"
    if last is None:
        return f"{depth} {noun}"
    return f"{depth} {noun} (last register '{last.name}', line {split_src(last.src)[1]})"


def _raise_unbalanced(seen, src: str, source: str) -> None:
    low, high = min(seen, key=lambda item: item[0]), max(seen, key=lambda item: item[0])
    file, line = split_src(src)
    raise VerilogError(f"unbalanced pipeline: a signal {_stages(high)} after the inputs meets one "
                       f"{_stages(low)} after them; every input-to-output path must pass the same number of "
                       "registers", file or source, line)


def _raise_cycle(cycle, gates, flip_flops, source: str) -> None:
    registers = [flip_flops[index] for kind, index in cycle if kind == "ff"]
    if registers:
        ff = registers[0]
        file, line = split_src(ff.src)
        others = f" (through {len(registers) - 1} more)" if len(registers) > 1 else ""
        raise VerilogError(f"register '{ff.name}' feeds back into itself{others}: the design holds state, and "
                           "sortcheck checks feed-forward pipelines only", file or source, line)
    cell = gates[cycle[0][1]]
    file, line = split_src(str(cell.get("attributes", {}).get("src", "")).split("|")[0])
    raise VerilogError("combinational loop", file or source, line)


def _build(synthesized: Synthesized, elaboration: Elaboration, cells, flip_flops, data_ports, outputs,
           words, width, figures: dict) -> GateCircuit:
    source = elaboration.files[0]
    input_bits = [(port, index, bit) for port in data_ports for index, bit in enumerate(port.bits)]
    if words is None and width is None:
        if len(data_ports) == 1 and len(data_ports[0].bits) > 1:
            raise VerilogError(f"the one data input port '{data_ports[0].name}' ({len(data_ports[0].bits)} bits) "
                               "would be a single word; give --words N --width W to cut it into words (word 0 in "
                               "its least significant bits)", source)
        widths = sorted({len(port.bits) for port in data_ports})
        if len(widths) > 1:
            listed = ", ".join(f"{port.name} {len(port.bits)}" for port in data_ports)
            raise VerilogError(f"the data input ports have different widths ({listed} bits); give --words N "
                               "--width W to cut their bits into words", source)
        width = widths[0]
    try:
        inputs, names = input_words(len(input_bits), words, width, source)
    except NetlistError as error:  # the grouping's message, said in terms of ports
        raise VerilogError(f"{error.message} (data input ports: "
                           f"{', '.join(f'{port.name} {len(port.bits)}' for port in data_ports)} bits)", source) \
            from None
    naming = _Naming(synthesized.module, {bit: name for (_, _, bit), name in zip(input_bits, names)})
    aliases = {ff.output: ff.data for ff in flip_flops}
    gates, places = [], {}
    for cell in cells:
        made = _cell_gates(cell, naming, aliases)
        gates += made
        file, line = split_src(str(cell.get("attributes", {}).get("src", "")).split("|")[0])
        if file and line:
            places.update((gate.out, f"{file}:{line}") for gate in made)
    output_bits = [(port, index, bit) for port in outputs for index, bit in enumerate(port.bits)]
    try:
        output = output_words([naming.signal(bit, aliases) for _, _, bit in output_bits], inputs[0].width, source)
    except NetlistError as error:
        raise VerilogError(f"{error.message} (output ports: "
                           f"{', '.join(f'{port.name} {len(port.bits)}' for port in outputs)} bits)", source) \
            from None
    width_of = inputs[0].width
    origin = {
        "format": "verilog", "files": list(elaboration.files), "top": synthesized.top,
        "parameters": dict(elaboration.parameters), "yosys": synthesized.yosys, "script": synthesized.script,
        "cached": synthesized.cached, **figures, "undriven_bits": naming.undriven,
        "inputs": _mapping([(port, index) for port, index, _ in input_bits], "x", width_of),
        "outputs": _mapping([(port, index) for port, index, _ in output_bits], "y", width_of),
        "signed_ports": all(port.signed for port in data_ports),
    }
    claim = Sorts(signed=True) if origin["signed_ports"] else None
    return GateCircuit(inputs, tuple(gates), output, name=synthesized.top, description=describe_origin(origin),
                       claim=claim, origin=origin, source_places=places)


class _Naming:
    """Signal names of a design's bits: input word bits, constants, and wire names for the rest."""

    def __init__(self, module: dict, input_names: dict):
        self.names: dict = dict(input_names)
        self.undriven = 0
        taken = set(input_names.values())
        for wire, net in sorted(module.get("netnames", {}).items(), key=lambda item: item[1].get("hide_name", 0)):
            label = wire.lstrip("\\").replace(" ", "_")
            for offset, bit in enumerate(net["bits"]):
                if bit in self.names or not isinstance(bit, int):
                    continue
                name = label if len(net["bits"]) == 1 else f"{label}[{offset + net.get('offset', 0)}]"
                if net.get("hide_name") or name in taken or _looks_like_word_bit(name):
                    continue  # named below, once every wire's own name is taken
                taken.add(name)
                self.names[bit] = name
        self.taken = taken

    def signal(self, bit, aliases: dict):
        while bit in aliases:  # a register's output is its input, one stage later
            bit = aliases[bit]
        if bit in ("0", "1"):
            return int(bit)
        if bit in ("x", "z"):
            self.undriven += 1
            return 0
        return self.defined(bit)

    def defined(self, bit) -> str:
        """The name of a bit; a bit without a wire name of its own gets ``n<bit>`` (made unique)."""
        if bit not in self.names:
            self.names[bit] = self.fresh(f"n{bit}")
        return self.names[bit]

    def fresh(self, base: str) -> str:
        """``base``, or ``base`` with underscores after it, whichever no signal has yet; now taken."""
        name = base
        while name in self.taken:
            name += "_"
        self.taken.add(name)
        return name


def _looks_like_word_bit(name: str) -> bool:
    head, _, rest = name.partition("[")
    return head[:1] in ("x", "y") and head[1:].isdigit() and rest.rstrip("]").isdigit()


def _cell_gates(cell: dict, naming: _Naming, aliases: dict) -> list[Gate]:
    pins, steps = GATE_CELLS[cell["type"]]
    operand = {pin: naming.signal(cell["connections"][pin][0], aliases) for pin in pins}
    out = naming.defined(cell["connections"]["Y"][0])
    names = [naming.fresh(f"{out}_{index}") for index in range(len(steps) - 1)] + [out]
    gates = []
    for index, (op, arguments) in enumerate(steps):
        values = tuple(names[argument] if isinstance(argument, int) else operand[argument] for argument in arguments)
        gates.append(Gate(names[index], op, values))
    return gates


def _mapping(bits: list, prefix: str, width: int) -> list[dict]:
    """Which port bits form each word: ``[{"word": "x0", "bits": "keys[7:0]"}, ...]``."""
    words = []
    for start in range(0, len(bits), width):
        chunk = bits[start:start + width]
        words.append({"word": f"{prefix}{start // width}", "bits": _ranges(chunk)})
    return words


def _ranges(chunk: list) -> str:
    parts, index = [], 0
    while index < len(chunk):
        port, low = chunk[index]
        high = low
        while index + 1 < len(chunk) and chunk[index + 1][0] is port and chunk[index + 1][1] == high + 1:
            index += 1
            high += 1
        whole = low == 0 and high == len(port.bits) - 1
        parts.append(port.name if whole else (f"{port.name}[{low}]" if low == high else
                                              f"{port.name}[{high}:{low}]"))
        index += 1
    return " ".join(reversed(parts))
