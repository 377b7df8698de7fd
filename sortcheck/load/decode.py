"""Turn the bytes or text of a netlist into plain JSON data, safely.

Guards against what a hostile or broken file can do to a JSON parser:
non-UTF-8 bytes, empty files, duplicate keys, ``NaN``, integers with
thousands of digits, numbers with a fraction or exponent, and nesting deep
enough to exhaust the stack.  Nothing is ever evaluated.
"""

from __future__ import annotations

import json
import os
import re
from pathlib import Path
from typing import Any

from sortcheck.errors import NetlistError

#: Files larger than this are refused before they are read.
MAX_FILE_BYTES = 256 * 1024 * 1024

#: The deepest nesting a valid netlist needs is 4 (layers > layer > comparator);
#: anything far beyond that is refused before further checks walk it.
MAX_NESTING = 32

#: Integers with more digits than this are refused (no count in the format comes close).
MAX_INTEGER_DIGITS = 18


class TooLargeInteger:
    """Stands in for an integer literal too long to be meaningful, so the place can be reported."""

    def __init__(self, literal: str):
        self.literal = literal

    def __repr__(self) -> str:
        return f"an integer of {len(self.literal.lstrip('-'))} digits"


class NotAnInteger:
    """Stands in for a number written with a fraction or an exponent (``4.5``, ``4.0``, ``1e3``).

    Every number in the format is an integer.  JSON Schema counts ``4.0`` as
    the integer 4, which would let a float reach the model; keeping such
    numbers out of the data lets the schema check refuse them with their place.
    """

    def __init__(self, literal: str):
        self.literal = literal

    def __repr__(self) -> str:
        return self.literal


#: A run of more digits than an integer may have: text without one holds no integer too long to take.
_LONG_DIGITS = re.compile(r"[0-9]{%d}" % (MAX_INTEGER_DIGITS + 1))


def _parse_int(literal: str) -> int | TooLargeInteger:
    if len(literal.lstrip("-")) > MAX_INTEGER_DIGITS:
        return TooLargeInteger(literal)
    return int(literal)


def _reject_constant(name: str) -> None:
    raise ValueError(f"{name} is not a JSON number")


def _unique_keys(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    result: dict[str, Any] = {}
    for key, value in pairs:
        if key in result:
            raise ValueError(f"duplicate key {key!r}")
        result[key] = value
    return result


def decode_text(data: bytes | str, source: str) -> str:
    """Decode file contents as UTF-8 (a leading byte-order mark is allowed).

    >>> decode_text(b"\\xff{}", "net.json")
    Traceback (most recent call last):
    ...
    sortcheck.errors.NetlistError: net.json: byte 0: not UTF-8 text (0xff)
    """
    if isinstance(data, str):
        return data.removeprefix("\ufeff")
    try:
        return data.decode("utf-8-sig")
    except UnicodeDecodeError as error:
        bad = data[error.start:error.start + 1].hex()
        raise NetlistError(f"not UTF-8 text (0x{bad})", source, f"byte {error.start}") from None


def load_json(text: str, source: str) -> Any:
    """Parse JSON text into Python data, with the guards described above.

    >>> load_json('{"a": [1, 2]}', "net.json")
    {'a': [1, 2]}
    >>> load_json('{"a": 1,}', "net.json")
    Traceback (most recent call last):
    ...
    sortcheck.errors.NetlistError: net.json: line 1, column 9: not JSON: expecting property name enclosed in double quotes
    """
    if not text.strip():
        raise NetlistError("empty file", source)
    try:
        # Without a long run of digits anywhere, _parse_int would return int(literal) for every integer: the
        # parser's own integers then give the same data several times faster (files of millions of comparators).
        parse_int = _parse_int if _LONG_DIGITS.search(text) else int
        data = json.loads(text, parse_int=parse_int, parse_float=NotAnInteger, parse_constant=_reject_constant,
                          object_pairs_hook=_unique_keys)
    except json.JSONDecodeError as error:
        reason = error.msg[0].lower() + error.msg[1:]
        raise NetlistError(f"not JSON: {reason}", source, f"line {error.lineno}, column {error.colno}") from None
    except RecursionError:
        raise NetlistError(f"nesting too deep (a netlist needs at most {MAX_NESTING} levels)", source) from None
    except ValueError as error:
        raise NetlistError(f"not JSON: {error}", source) from None
    where = _too_deep(data)
    if where is not None:
        raise NetlistError(f"nesting too deep (a netlist needs at most {MAX_NESTING} levels)", source, where)
    return data


def _too_deep(data: Any) -> str | None:
    """Return the place of the first value nested deeper than ``MAX_NESTING``, or None."""
    stack: list[tuple[Any, str, int]] = [(data, "", 0)]
    while stack:
        value, where, depth = stack.pop()
        if depth > MAX_NESTING:
            return where or None
        if isinstance(value, dict):
            stack.extend((item, f"{where}.{key}" if where else key, depth + 1) for key, item in value.items())
        elif isinstance(value, list):
            if depth >= 2 and all(not isinstance(item, (list, dict)) for item in value):
                continue  # a flat list (a comparator, a bit list) adds no depth worth walking
            if 1 <= depth < MAX_NESTING and {type(item) for item in value} == {list} and not (
                    {type(x) for item in value for x in item} & {list, dict}):
                continue  # flat lists one level down (a layer, the comparators): each would be skipped there
            stack.extend((item, f"{where}[{index}]", depth + 1) for index, item in enumerate(value))
    return None


def read_file_bytes(path: str | os.PathLike) -> bytes:
    """Read a netlist file's bytes; refuse directories and files over :data:`MAX_FILE_BYTES`."""
    source = str(path)
    file = Path(path)
    try:
        if file.is_dir():
            raise NetlistError("is a directory, not a netlist file", source)
        size = file.stat().st_size
        if size > MAX_FILE_BYTES:
            raise NetlistError(f"file of {size} bytes is larger than the {MAX_FILE_BYTES} bytes supported", source)
        return file.read_bytes()
    except FileNotFoundError:
        raise NetlistError("no such file", source) from None
    except PermissionError:
        raise NetlistError("permission denied", source) from None
    except OSError as error:
        raise NetlistError(f"cannot read: {error.strerror or error}", source) from None
