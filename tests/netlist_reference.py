"""An evaluator of BLIF and AIGER files for tests, written without sortcheck's loaders.

The files are parsed here from their text (BLIF: ``.inputs``, ``.outputs``,
``.names`` covers with on-set or off-set rows; AIGER: the ASCII and binary
forms with their symbol tables) and evaluated bit-parallel with Python
integers: every signal is one integer whose bit ``j`` is its value on input
``j``, so a cover row is an AND of masks and a cover an OR of rows.  Word
values are packed into and unpacked from such lanes with numpy, and the
claimed properties are judged on whole arrays with ``numpy.sort``; single
inputs are judged again with Python's ``sorted`` by the tests.

Nothing here imports sortcheck.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np


@dataclass
class BitNetlist:
    """A combinational netlist of single bits: primary inputs and outputs in file order, and its nodes.

    A node is ``(name, fanins, function)`` where ``function(values, mask)`` takes the lane integers
    of its fanins and returns its own; ``nodes`` is in an order where fanins come first.
    """

    inputs: list[str]
    outputs: list[str]
    output_sources: list[str]
    nodes: list[tuple[str, tuple[str, ...], object]] = field(default_factory=list)
    constants: dict[str, int] = field(default_factory=dict)

    def evaluate(self, input_lanes: list[int], lanes: int) -> list[int]:
        """The lane integers of the outputs, given one lane integer per input bit (``lanes`` lanes)."""
        mask = (1 << lanes) - 1
        values = {name: lane & mask for name, lane in zip(self.inputs, input_lanes, strict=True)}
        values.update({name: mask if value else 0 for name, value in self.constants.items()})
        for name, fanins, function in self.nodes:
            values[name] = function([values[fanin] for fanin in fanins], mask)
        return [values[name] for name in self.output_sources]


def _topological(definitions: dict[str, tuple[tuple[str, ...], object]], primary: set[str]) -> list:
    """Definitions in an order where every fanin comes first (a depth-first walk without recursion)."""
    order, state = [], {}
    for root in definitions:
        stack = [(root, False)]
        while stack:
            name, expanded = stack.pop()
            if name in primary or state.get(name) == "done":
                continue
            if expanded:
                state[name] = "done"
                order.append((name, *definitions[name]))
                continue
            if state.get(name) == "open":
                raise ValueError(f"combinational cycle through {name}")
            if name not in definitions:
                raise ValueError(f"undefined signal {name}")
            state[name] = "open"
            stack.append((name, True))
            stack.extend((fanin, False) for fanin in definitions[name][0])
    return order


# --- BLIF ------------------------------------------------------------------------------------

def _cover_function(rows: list[str], onset: bool):
    """The function of a ``.names`` cover: OR over rows of the AND of its literals, negated for an off-set."""

    def function(values, mask):
        total = 0
        for row in rows:
            cube = mask
            for value, character in zip(values, row):
                if character == "1":
                    cube &= value
                elif character == "0":
                    cube &= ~value & mask
            total |= cube
        return total if onset else ~total & mask

    return function


def read_blif(path: str | Path) -> BitNetlist:
    """Parse the combinational part of a BLIF file (one model) into a :class:`BitNetlist`."""
    text = Path(path).read_text(encoding="utf-8")
    text = re.sub(r"\\\r?\n", " ", text)
    inputs: list[str] = []
    outputs: list[str] = []
    covers: list[tuple[list[str], str, list[str], list[str]]] = []  # fanins, name, rows, row outputs
    for raw in text.splitlines():
        tokens = raw.split("#", 1)[0].split()
        if not tokens:
            continue
        head = tokens[0]
        if head == ".inputs":
            inputs += tokens[1:]
        elif head == ".outputs":
            outputs += tokens[1:]
        elif head == ".names":
            covers.append((tokens[1:-1], tokens[-1], [], []))
        elif head in (".model", ".end"):
            continue
        elif head.startswith("."):
            raise ValueError(f"{path}: directive {head} is not combinational logic")
        else:
            fanins, name, rows, row_outputs = covers[-1]
            row, value = (tokens[0], tokens[1]) if fanins else ("", tokens[0])
            rows.append(row)
            row_outputs.append(value)
    definitions: dict[str, tuple[tuple[str, ...], object]] = {}
    constants: dict[str, int] = {}
    for fanins, name, rows, row_outputs in covers:
        if name in definitions or name in constants or name in inputs:
            raise ValueError(f"{path}: {name} is defined twice")
        if len(set(row_outputs)) > 1:
            raise ValueError(f"{path}: the cover of {name} mixes on-set and off-set rows")
        onset = not row_outputs or row_outputs[0] == "1"
        if not fanins:
            constants[name] = int(bool(rows) == onset)  # no rows: 0; a row "1": 1; a row "0": 0
        else:
            definitions[name] = (tuple(fanins), _cover_function(rows, onset))
    netlist = BitNetlist(inputs, outputs, list(outputs), constants=constants)
    netlist.nodes = _topological(definitions, set(inputs) | set(constants))
    return netlist


# --- AIGER -----------------------------------------------------------------------------------

def _and_function(negate0: bool, negate1: bool):
    def function(values, mask):
        first = ~values[0] & mask if negate0 else values[0]
        second = ~values[1] & mask if negate1 else values[1]
        return first & second
    return function


def _decode_number(data: bytes, position: int) -> tuple[int, int]:
    value, shift = 0, 0
    while True:
        byte = data[position]
        position += 1
        value |= (byte & 0x7F) << shift
        shift += 7
        if byte < 0x80:
            return value, position


def read_aiger(path: str | Path) -> BitNetlist:
    """Parse an AIGER file, ASCII (``aag``) or binary (``aig``), without latches, into a :class:`BitNetlist`.

    Signals are named by variable: ``v7`` is variable 7 and ``v7'`` its negation (added as nodes where
    used); inputs keep the names of the symbol table when it has them (``i0 name``).
    """
    data = Path(path).read_bytes()
    header_end = data.index(b"\n")
    magic, *numbers = data[:header_end].decode("ascii").split()
    maximum, input_count, latches, output_count, and_count = (int(n) for n in numbers[:5])
    if latches:
        raise ValueError(f"{path}: latches")
    position = header_end + 1

    def line() -> str:
        nonlocal position
        end = data.index(b"\n", position)
        text = data[position:end].decode("ascii")
        position = end + 1
        return text

    if magic == "aag":
        input_literals = [int(line()) for _ in range(input_count)]
    else:
        input_literals = [2 * (k + 1) for k in range(input_count)]
    output_literals = [int(line()) for _ in range(output_count)]
    ands: list[tuple[int, int, int]] = []
    if magic == "aag":
        for _ in range(and_count):
            lhs, rhs0, rhs1 = (int(n) for n in line().split())
            ands.append((lhs, rhs0, rhs1))
    else:
        for k in range(and_count):
            lhs = 2 * (input_count + 1 + k)
            delta0, position = _decode_number(data, position)
            delta1, position = _decode_number(data, position)
            ands.append((lhs, lhs - delta0, lhs - delta0 - delta1))
    symbols = {"i": {}, "o": {}}
    for raw in data[position:].decode("utf-8", errors="replace").splitlines():
        if raw == "c":
            break
        match = re.match(r"^([io])([0-9]+) (.+)$", raw)
        if match:
            symbols[match.group(1)][int(match.group(2))] = match.group(3)
    assert maximum >= input_count + and_count
    input_names = [symbols["i"].get(k, f"v{literal // 2}") for k, literal in enumerate(input_literals)]
    name_of = {literal // 2: name for literal, name in zip(input_literals, input_names)}
    definitions: dict[str, tuple[tuple[str, ...], object]] = {}

    def signal(literal: int) -> str:
        variable = literal // 2
        if variable == 0:
            return "false"
        base = name_of.get(variable, f"v{variable}")
        return base if literal % 2 == 0 else base + "'"

    for lhs, rhs0, rhs1 in ands:
        definitions[f"v{lhs // 2}"] = ((signal(rhs0 & ~1), signal(rhs1 & ~1)), _and_function(rhs0 & 1, rhs1 & 1))
    used_negations = {literal for literal in output_literals if literal % 2 and literal > 1}
    for literal in used_negations:
        definitions[signal(literal)] = ((signal(literal & ~1),), lambda values, mask: ~values[0] & mask)
    output_names = [symbols["o"].get(k, f"o{k}") for k in range(output_count)]
    netlist = BitNetlist(input_names, output_names, [signal(literal) if literal > 1 else
                                                     ("true" if literal else "false") for literal in output_literals],
                         constants={"false": 0, "true": 1})
    netlist.nodes = _topological(definitions, set(input_names) | {"false", "true"})
    return netlist


def read_netlist(path: str | Path) -> BitNetlist:
    """A BLIF or AIGER file by its suffix."""
    return read_blif(path) if str(path).endswith(".blif") else read_aiger(path)


# --- words in and out of lanes ---------------------------------------------------------------

def _bits_to_lane(bits: np.ndarray) -> int:
    """A 0/1 array of lanes as one integer (lane j in bit j)."""
    return int.from_bytes(np.packbits(bits.astype(np.uint8), bitorder="little").tobytes(), "little")


def _lane_to_bits(value: int, lanes: int) -> np.ndarray:
    raw = np.frombuffer(value.to_bytes((lanes + 7) // 8, "little"), dtype=np.uint8)
    return np.unpackbits(raw, bitorder="little")[:lanes]


def run_words(netlist: BitNetlist, inputs: np.ndarray, width: int) -> np.ndarray:
    """Output words for each row of unsigned input words (an array of shape lanes x words).

    Input bit ``k`` of the file is bit ``k % width`` of word ``k // width``, and likewise the outputs.
    """
    inputs = np.asarray(inputs, dtype=np.int64)
    lanes, words = inputs.shape
    if words * width != len(netlist.inputs):
        raise ValueError(f"{len(netlist.inputs)} input bits are not {words} words of {width} bits")
    input_lanes = [_bits_to_lane((inputs[:, k // width] >> (k % width)) & 1) for k in range(words * width)]
    output_lanes = netlist.evaluate(input_lanes, lanes)
    result = np.zeros((lanes, len(output_lanes) // width), dtype=np.int64)
    for k, value in enumerate(output_lanes):
        result[:, k // width] |= _lane_to_bits(value, lanes).astype(np.int64) << (k % width)
    return result


def every_input(words: int, width: int) -> np.ndarray:
    """Every input of ``words`` words of ``width`` bits, as rows (input j has bit k of its bits equal to bit k of j)."""
    count = 1 << (words * width)
    index = np.arange(count, dtype=np.int64)
    return np.stack([(index >> (width * word)) & ((1 << width) - 1) for word in range(words)], axis=1)


def as_signed(values: np.ndarray, width: int) -> np.ndarray:
    """Two's complement values of ``width`` bits, from their unsigned encodings."""
    return np.where(values >= 1 << (width - 1), values - (1 << width), values)


# --- properties on arrays --------------------------------------------------------------------

def failing_rows(claim: dict, inputs: np.ndarray, outputs: np.ndarray, width: int) -> np.ndarray:
    """A boolean array: which rows (input, output) break the claimed property, judged with ``numpy.sort``.

    ``claim`` is the property as in a grouping file; values are unsigned encodings of ``width`` bits.
    """
    if claim.get("signed"):
        inputs, outputs = as_signed(inputs, width), as_signed(outputs, width)
    name = claim["name"]
    ordered = np.sort(inputs, axis=1)
    if name == "sorts":
        expected = ordered[:, ::-1] if claim.get("order") == "descending" else ordered
        return np.any(outputs != expected, axis=1)
    if name == "merges":
        split = claim["split"]
        runs_ascend = np.all(np.diff(inputs[:, :split], axis=1) >= 0, axis=1) & \
            np.all(np.diff(inputs[:, split:], axis=1) >= 0, axis=1)
        return runs_ascend & np.any(outputs != ordered, axis=1)
    if name == "selects":
        count = claim["count"]
        head = outputs[:, :count] if claim.get("sorted") else np.sort(outputs[:, :count], axis=1)
        return np.any(head != ordered[:, :count], axis=1)
    if name == "median":
        middle = (inputs.shape[1] - 1) // 2
        position = (outputs.shape[1] - 1) // 2
        return outputs[:, position] != ordered[:, middle]
    if name == "partial-sort":
        shift = width - claim["key_bits"]
        keys = outputs >> shift  # an arithmetic shift keeps the order of signed values
        permutation = np.all(np.sort(outputs, axis=1) == ordered, axis=1)
        return ~permutation | np.any(np.diff(keys, axis=1) < 0, axis=1)
    raise ValueError(f"unknown property {claim}")
