"""Find the line of a place (``comparators[7]``, ``gates[2].in[1]``) in the text of a netlist.

Python's JSON parser keeps no positions, so this module walks the text
itself, only along the requested path, jumping over everything else.  It is
used to point reports (SARIF) at the offending line.
"""

from __future__ import annotations

import re

_STEP = re.compile(r"\[(\d+)\]|\.?([A-Za-z_][A-Za-z0-9_-]*)")
_LINE_COLUMN = re.compile(r"^line (\d+), column \d+$")
_STRUCTURE = re.compile(r'["\[\]{}\\]')
_WHITESPACE = re.compile(r"[ \t\r\n]*")


def parse_place(where: str) -> list[str | int] | None:
    """Split a place into JSON path steps; None when it is not a path.

    >>> parse_place("gates[2].in[1]")
    ['gates', 2, 'in', 1]
    >>> parse_place("line 3, column 5") is None
    True
    """
    steps: list[str | int] = []
    position = 0
    while position < len(where):
        match = _STEP.match(where, position)
        if not match or (match.group(2) and position and not where.startswith(".", position)):
            return None
        steps.append(int(match.group(1)) if match.group(1) is not None else match.group(2))
        position = match.end()
    return steps or None


def _skip_string(text: str, start: int) -> int:
    """Index just after the string literal that starts at ``start`` (a quote)."""
    position = start + 1
    while True:
        quote = text.find('"', position)
        if quote < 0:
            return len(text)
        backslashes = 0
        while text[quote - 1 - backslashes] == "\\":
            backslashes += 1
        if backslashes % 2 == 0:
            return quote + 1
        position = quote + 1


def _skip_value(text: str, start: int) -> int:
    """Index just after the JSON value that starts at ``start``."""
    if text[start] == '"':
        return _skip_string(text, start)
    if text[start] not in "[{":
        end = start
        while end < len(text) and text[end] not in ",]} \t\r\n":
            end += 1
        return end
    depth, position = 0, start
    while True:
        match = _STRUCTURE.search(text, position)
        if match is None:
            return len(text)
        char = match.group()
        if char == '"':
            position = _skip_string(text, match.start())
            continue
        depth += 1 if char in "[{" else -1 if char in "]}" else 0
        position = match.end()
        if depth == 0:
            return position


def _skip_space(text: str, position: int) -> int:
    return _WHITESPACE.match(text, position).end()


def _child(text: str, start: int, step: str | int) -> int | None:
    """Start index of member ``step`` of the container at ``start``, or None."""
    opener = text[start]
    position = _skip_space(text, start + 1)
    index = 0
    while position < len(text) and text[position] not in "]}":
        if opener == "{":
            key_end = _skip_string(text, position)
            key = text[position + 1:key_end - 1]
            position = _skip_space(text, key_end)
            position = _skip_space(text, position + 1)  # past the colon
            if key == step:
                return position
        elif index == step:
            return position
        position = _skip_space(text, _skip_value(text, position))
        if position < len(text) and text[position] == ",":
            position = _skip_space(text, position + 1)
        index += 1
    return None


def line_of(text: str, where: str | None) -> int | None:
    """The 1-based line where the value at ``where`` starts, or None if it is not found.

    Places of the form ``line N, column M`` give N directly.

    >>> text = '{\\n  "channels": 4,\\n  "comparators": [\\n    [0, 1],\\n    [2, 9]\\n  ]\\n}'
    >>> line_of(text, "comparators[1]"), line_of(text, "channels"), line_of(text, "gates[0]")
    (5, 2, None)
    """
    if where is None:
        return None
    found = _LINE_COLUMN.match(where)
    if found:
        return int(found.group(1))
    steps = parse_place(where)
    if steps is None:
        return None
    try:
        position = _skip_space(text, 0)
        for step in steps:
            if text[position] not in "[{" or (text[position] == "{") != isinstance(step, str):
                return None
            child = _child(text, position, step)
            if child is None:
                return None
            position = child
    except IndexError:
        return None
    return text.count("\n", 0, position) + 1
