"""Parse netlist format version 1 into the model, checking its meaning.

:func:`parse_netlist` is pure: text in, model out.  :func:`read_netlist` is
the thin wrapper that reads a file.  Every problem is a
:class:`~sortcheck.errors.NetlistError` naming the file and the place.
"""

from __future__ import annotations

import os
import re
from pathlib import Path
from typing import Any

import numpy as np

from sortcheck.errors import NetlistError
from sortcheck.load.aiger import read_aiger
from sortcheck.load.blif import read_blif
from sortcheck.load.bristol import SUFFIX as BRISTOL_SUFFIX, read_bristol
from sortcheck.load.decode import decode_text, load_json, read_file_bytes
from sortcheck.load.schema import check_header, validate_shape
from sortcheck.load.verilog import VERILOG_SUFFIXES, Elaboration, read_verilog_design
from sortcheck.model.graphs import find_cycle, topological_order
from sortcheck.model import (
    OP_ARITY, ComparatorNetwork, GateCircuit, Gate, Netlist, OutputWord, Word, bit_name, property_from_json,
)

_BIT_PATTERN = re.compile(r"^([A-Za-z_][A-Za-z0-9_]*)\[(\d+)\]$")


def parse_netlist(text: str | bytes, source: str = "<netlist>") -> Netlist:
    """Parse the text of a netlist (format version 1) into a model.

    Parameters
    ----------
    text : str or bytes
        The JSON document; bytes must be UTF-8.
    source : str
        Name of the file the text came from, used in error messages.

    Returns
    -------
    ComparatorNetwork or GateCircuit

    Raises
    ------
    NetlistError
        When the text is not a valid netlist; the message names ``source``
        and the place.

    Examples
    --------
    >>> net = parse_netlist('{"sortcheck": 1, "kind": "comparator-network", "channels": 2, '
    ...                     '"comparators": [[0, 1]]}')
    >>> net.channels, net.comparators
    (2, ((0, 1),))
    >>> parse_netlist('{"sortcheck": 1, "kind": "comparator-network", "channels": 8, '
    ...               '"comparators": [[0, 9]]}', source="net.json")
    Traceback (most recent call last):
    ...
    sortcheck.errors.NetlistError: net.json: comparators[0]: channel 9 is out of range for 8 channels
    """
    data = load_json(decode_text(text, source), source)
    kind = check_header(data, source)
    claim = property_from_json(data["property"], source, where="property") if "property" in data else None
    validate_shape(data, source)
    metadata = {"name": data.get("name"), "description": data.get("description"), "claim": claim}
    if kind == "comparator-network":
        return _build_network(data, source, metadata)
    return _build_circuit(data, source, metadata)


def read_netlist(path: str | os.PathLike, words: int | None = None, width: int | None = None,
                 elaboration: Elaboration | None = None) -> Netlist:
    """Read and parse a netlist file; errors name the file as given.

    ``.aag``/``.aig`` (AIGER) and ``.blif`` files are bit-level circuits: their
    bits are grouped into ``words`` words of ``width`` bits (from the
    arguments, else from a grouping file beside the circuit, see
    :mod:`sortcheck.load.grouping`).  ``.bristol`` files (Bristol Fashion,
    :mod:`sortcheck.load.bristol`) have their declared values as words unless
    a grouping is given.  ``.v`` and ``.sv`` files are Verilog, synthesized by
    Yosys (:mod:`sortcheck.load.verilog`): ``elaboration`` gives the design's
    files, top module and parameters (default: this file alone, its top found
    by Yosys).  Every other file is read as format version 1 JSON, for which
    ``words`` and ``width`` mean nothing.
    """
    suffix = Path(path).suffix.lower()
    if elaboration is not None or suffix in VERILOG_SUFFIXES:
        return read_verilog_design(elaboration or Elaboration((str(path),)), words, width)
    if suffix in (".aag", ".aig"):
        return read_aiger(path, words, width)
    if suffix == ".blif":
        return read_blif(path, words, width)
    if suffix == BRISTOL_SUFFIX:
        return read_bristol(path, words, width)
    return parse_netlist(read_file_bytes(path), str(path))


def _build_network(data: dict, source: str, metadata: dict) -> ComparatorNetwork:
    channels = data["channels"]
    comparators: list[tuple[int, int]] = []
    if "comparators" in data:
        if _valid_pairs(data["comparators"], channels, False):
            return ComparatorNetwork(channels, tuple(map(tuple, data["comparators"])), **metadata)
        for i, pair in enumerate(data["comparators"]):
            comparators.append(_comparator(pair, channels, source, f"comparators[{i}]"))
        return ComparatorNetwork(channels, tuple(comparators), **metadata)
    for layer_index, layer in enumerate(data["layers"]):
        if _valid_pairs(layer, channels, True):
            comparators.extend(map(tuple, layer))
            continue
        used: dict[int, str] = {}
        for i, pair in enumerate(layer):
            where = f"layers[{layer_index}][{i}]"
            comparators.append(_comparator(pair, channels, source, where))
            for channel in pair:
                if channel in used:
                    raise NetlistError(f"channel {channel} is used twice in layer {layer_index} "
                                       f"(also by {used[channel]})", source, where)
                used[channel] = where
    return ComparatorNetwork(channels, tuple(comparators), **metadata)


def _valid_pairs(pairs: list, channels: int, layer: bool) -> bool:
    """Whether every pair (already of the schema's shape) is in range and joins two channels, and, in a layer,
    no channel is used twice: checked with numpy at once; when False, the loop finds the first problem and
    its place."""
    if len(pairs) < 64:
        return False
    array = np.asarray(pairs, dtype=np.int64)
    if array.ndim != 2 or array.shape[1] != 2 or array.max() >= channels or (array[:, 0] == array[:, 1]).any():
        return False
    return not layer or np.unique(array).size == 2 * len(pairs)


def _comparator(pair: list[int], channels: int, source: str, where: str) -> tuple[int, int]:
    a, b = pair
    for channel in (a, b):
        if channel >= channels:
            raise NetlistError(f"channel {channel} is out of range for {channels} channels", source, where)
    if a == b:
        raise NetlistError(f"comparator [{a}, {b}] joins channel {a} to itself", source, where)
    return a, b


def _build_circuit(data: dict, source: str, metadata: dict) -> GateCircuit:
    inputs = _input_words(data["inputs"], source)
    widths = {word.name: word.width for word in inputs}
    defined: dict[str, str] = {}  # signal -> where it is defined
    for word in inputs:
        for i in range(word.width):
            defined[bit_name(word.name, i)] = "an input bit"
    gates = []
    for index, item in enumerate(data["gates"]):
        where = f"gates[{index}]"
        out = item["out"]
        match = _BIT_PATTERN.match(out)
        if out in defined:
            what = defined[out] if defined[out] == "an input bit" else f"already defined by {defined[out]}"
            raise NetlistError(f"gate output {out!r} is {what}", source, f"{where}.out")
        if match and match.group(1) in widths:
            raise NetlistError(f"gate output {out!r} shadows a bit of input word {match.group(1)!r}",
                               source, f"{where}.out")
        fewest, most = OP_ARITY[item["op"]]
        count = len(item["in"])
        if count < fewest or (most is not None and count > most):
            expected = f"exactly {fewest}" if fewest == most else f"at least {fewest}"
            raise NetlistError(f"{item['op']!r} takes {expected} input{'s' if fewest > 1 else ''}, got {count}",
                               source, f"{where}.in")
        defined[out] = where
        gates.append(Gate(out, item["op"], tuple(item["in"])))
    for index, gate in enumerate(gates):
        for position, signal in enumerate(gate.inputs):
            _check_reference(signal, defined, widths, source, f"gates[{index}].in[{position}]")
    outputs = []
    names: dict[str, int] = {}
    for index, item in enumerate(data["outputs"]):
        if item["name"] in names:
            raise NetlistError(f"duplicate output word {item['name']!r} (also outputs[{names[item['name']]}])",
                               source, f"outputs[{index}].name")
        names[item["name"]] = index
        for position, signal in enumerate(item["bits"]):
            _check_reference(signal, defined, widths, source, f"outputs[{index}].bits[{position}]")
        outputs.append(OutputWord(item["name"], tuple(item["bits"])))
    circuit = GateCircuit(tuple(inputs), tuple(gates), tuple(outputs), **metadata)
    _check_acyclic(circuit, source)
    return circuit


def _input_words(items: list[dict], source: str) -> list[Word]:
    words: list[Word] = []
    seen: dict[str, int] = {}
    for index, item in enumerate(items):
        if item["name"] in seen:
            raise NetlistError(f"duplicate input word {item['name']!r} (also inputs[{seen[item['name']]}])",
                               source, f"inputs[{index}].name")
        seen[item["name"]] = index
        words.append(Word(item["name"], item["width"]))
    return words


def _check_reference(signal: Any, defined: dict[str, str], widths: dict[str, int], source: str, where: str) -> None:
    if isinstance(signal, bool) or (isinstance(signal, int) and signal not in (0, 1)):
        raise NetlistError(f"constant {signal!r} is not 0 or 1", source, where)
    if isinstance(signal, int) or signal in defined:
        return
    match = _BIT_PATTERN.match(signal)
    if match and match.group(1) in widths:
        word, bit = match.group(1), int(match.group(2))
        raise NetlistError(f"bit {bit} is out of range for input word {word!r} of width {widths[word]}",
                           source, where)
    raise NetlistError(f"undefined signal {signal!r}", source, where)


def _check_acyclic(circuit: GateCircuit, source: str) -> None:
    graph = circuit.signal_graph
    if topological_order(graph) is not None:
        return
    order = {gate.out: index for index, gate in enumerate(circuit.gates)}
    cycle = find_cycle(graph)
    start = min(range(len(cycle)), key=lambda i: order[cycle[i]])
    cycle = cycle[start:] + cycle[:start]
    path = " -> ".join(cycle + [cycle[0]])
    raise NetlistError(f"combinational cycle through signals {path}", source, f"gates[{order[cycle[0]]}]")
