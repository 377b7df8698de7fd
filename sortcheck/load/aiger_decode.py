"""Decoding AIGER files into an and-inverter graph of literals, ASCII (``.aag``) and binary (``.aig``).

:func:`_parse_ascii` and :func:`_parse_binary` read the header, the input,
output and AND gate lines (in the binary form: the variable-length deltas),
the symbol table and the comment section into a :class:`_Graph`, checking
as they go that every literal is in range, defined once and that the AND
gates have no cycle; errors name the line or byte.
:mod:`sortcheck.load.aiger` builds the gate circuit from the graph and
describes the format.

>>> graph = _parse_binary(b"aig 3 2 0 1 1\\n6\\n\\x02\\x02i0 a\\n", "and.aig")
>>> graph.inputs, graph.outputs, graph.ands, graph.input_symbols
([2, 4], [6], [(6, 4, 2)], {0: 'a'})
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field


from sortcheck.errors import NetlistError
from sortcheck.load.grouping import show_cycle
from sortcheck.model.graphs import adjacency, find_cycle, topological_order

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
    index_of = {lhs // 2: index for index, (lhs, _, _) in enumerate(graph.ands)}
    dependencies = adjacency((rhs // 2, lhs // 2) for lhs, rhs0, rhs1 in graph.ands for rhs in (rhs0, rhs1)
                             if rhs // 2 in index_of)
    if topological_order(dependencies) is not None:
        return
    cycle = find_cycle(dependencies)
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
