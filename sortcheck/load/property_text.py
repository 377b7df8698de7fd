"""Properties written on the command line: a short form or a JSON object.

The JSON object goes through the same guarded decoder as netlist files
(duplicate keys, ``NaN``, deep nesting and huge integers are refused).
"""

from __future__ import annotations

from typing import Any

from sortcheck.errors import NetlistError, PropertyError
from sortcheck.load.decode import load_json
from sortcheck.model.properties import PROPERTY_NAMES, Property, property_from_json

_SHORT_FLAGS = {"sorts": {"asc", "desc", "signed"}, "merges": {"signed"}, "selects": {"sorted", "signed"},
                "median": {"signed"}, "partial-sort": {"stable", "signed"}}
_SHORT_NUMBER = {"merges": "split", "selects": "count", "partial-sort": "key_bits"}
_SHORT_NUMBER_NOUN = {"split": "a split position", "count": "a count", "key_bits": "a number of key bits"}
_MAX_SHORT_DIGITS = 18  # no count in a property comes close; longer digit strings would be slow to convert


def parse_property(text: str, source: str = "--property") -> Property:
    """Parse a property given on the command line: a short form or a JSON object.

    Examples
    --------
    >>> parse_property("sorts:desc").to_json()
    {'name': 'sorts', 'order': 'descending', 'signed': False}
    >>> parse_property("selects:3:sorted").to_json()
    {'name': 'selects', 'count': 3, 'sorted': True}
    >>> parse_property('{"name": "median"}')
    Median(signed=False)
    >>> parse_property("merges")
    Traceback (most recent call last):
    ...
    sortcheck.errors.PropertyError: --property: 'merges' needs a split position, as in merges:4
    """
    text = text.strip()
    if text.startswith("{"):
        try:
            data = load_json(text, source)
        except NetlistError as error:
            raise PropertyError(error.message, source, error.where) from None
        return property_from_json(data, source, where=None)
    name, *parts = text.split(":")
    if name not in PROPERTY_NAMES:
        raise PropertyError(f"unknown property {name!r} (expected one of {', '.join(PROPERTY_NAMES)})", source)
    data: dict[str, Any] = {"name": name}
    if name in _SHORT_NUMBER:
        key = _SHORT_NUMBER[name]
        number = parts[0] if parts else ""
        if not (number.isascii() and number.isdigit()):
            raise PropertyError(f"{name!r} needs {_SHORT_NUMBER_NOUN[key]}, as in {name}:4", source)
        if len(number) > _MAX_SHORT_DIGITS:
            raise PropertyError(f"{key} of {len(number)} digits is too large", source)
        data[key] = int(parts.pop(0))
    for flag in parts:
        if flag not in _SHORT_FLAGS[name]:
            allowed = ", ".join(sorted(_SHORT_FLAGS[name]))
            raise PropertyError(f"unknown option {flag!r} in {text!r} (allowed for {name}: {allowed})", source)
        if flag in ("asc", "desc"):
            data["order"] = "ascending" if flag == "asc" else "descending"
        else:
            data[flag] = True
    return property_from_json(data, source, where=None)
