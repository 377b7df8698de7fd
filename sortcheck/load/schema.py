"""Validate netlist data against the shipped JSON Schema, with messages for people.

The schema (``schema/netlist-v1.schema.json``) is the published contract of
the format's shape.  jsonschema does the validation; this module only picks
the most useful error and says it in the file's own terms, with the place
written as ``gates[2].in[1]``.
"""

from __future__ import annotations

import difflib
import itertools
import json
from functools import lru_cache
from importlib import resources
from typing import TYPE_CHECKING, Any, Iterable

from sortcheck.errors import NetlistError
from sortcheck.load.decode import NotAnInteger, TooLargeInteger

if TYPE_CHECKING:  # pragma: no cover
    import jsonschema

FORMAT_VERSION = 1
KINDS = ("comparator-network", "gate-circuit")


@lru_cache(maxsize=1)
def netlist_schema() -> dict:
    """The JSON Schema of netlist format version 1, as shipped in the package."""
    text = resources.files("sortcheck.load").joinpath("schema/netlist-v1.schema.json").read_text("utf-8")
    return json.loads(text)


@lru_cache(maxsize=1)
def _validator() -> jsonschema.protocols.Validator:
    import jsonschema  # imported here: reading AIGER and BLIF does not need it

    schema = netlist_schema()
    validator_class = jsonschema.validators.validator_for(schema)
    validator_class.check_schema(schema)
    return validator_class(schema)


def place(path: Iterable[Any]) -> str | None:
    """Write a JSON path as ``gates[2].in[1]``; None for the top level.

    >>> place(["gates", 2, "in", 1])
    'gates[2].in[1]'
    >>> place([]) is None
    True
    """
    text = ""
    for step in path:
        text += f"[{step}]" if isinstance(step, int) else (f".{step}" if text else str(step))
    return text or None


def _show(value: Any) -> str:
    if isinstance(value, (TooLargeInteger, NotAnInteger)):
        return repr(value)
    text = json.dumps(value, default=repr)
    return text if len(text) <= 40 else text[:37] + "..."


_TYPE_NAMES = {"integer": "an integer", "string": "a string", "array": "a list", "object": "an object",
               "boolean": "true or false", "number": "a number"}


def _describe(error: jsonschema.ValidationError) -> str:
    """One sentence for one jsonschema error."""
    value, keyword, schema = error.instance, error.validator, error.schema
    title = schema.get("title") if isinstance(schema, dict) else None
    if isinstance(value, TooLargeInteger):
        return f"integer too large ({value!r})"
    if keyword == "required":
        missing = [key for key in error.validator_value if key not in value]
        return f"missing key {missing[0]!r}"
    if keyword == "additionalProperties":
        allowed = ", ".join(sorted(schema.get("properties", {})))
        extra = sorted(set(value) - set(schema.get("properties", {})))
        return f"unknown key {extra[0]!r} (expected {allowed})"
    if title == "comparator" and keyword in ("type", "minItems", "maxItems"):
        return f"a comparator is a pair of channels [a, b], got {_show(value)}"
    if title == "channel" and keyword == "minimum":
        return f"channel {value} is negative"
    if title == "signal":
        if isinstance(value, int) and not isinstance(value, bool):
            return f"constant {value} is not 0 or 1"
        return f"a signal is a signal name or the constant 0 or 1, got {_show(value)}"
    if title == "op":
        return f"unknown op {_show(value)} (expected one of {', '.join(error.validator_value)})"
    if title == "identifier" and keyword == "pattern":
        return f"name {_show(value)} is not an identifier (letters, digits and _, not starting with a digit)"
    if keyword == "type":
        expected = error.validator_value
        expected = [expected] if isinstance(expected, str) else expected
        return f"expected {' or '.join(_TYPE_NAMES.get(e, e) for e in expected)}, got {_show(value)}"
    if keyword == "minimum":
        return f"{_show(value)} is below the minimum {error.validator_value}"
    if keyword == "maximum":
        return f"{_show(value)} is too large (at most {error.validator_value} is supported)"
    if keyword == "minItems":
        return f"expected at least {error.validator_value} item{'s' if error.validator_value != 1 else ''}, got {len(value)}"
    if keyword == "maxItems":
        return f"expected at most {error.validator_value} items, got {len(value)}"
    if keyword == "minLength":
        return "expected a non-empty string"
    if keyword == "enum":
        return f"expected one of {', '.join(_show(v) for v in error.validator_value)}, got {_show(value)}"
    if keyword == "const":
        return f"expected {_show(error.validator_value)}, got {_show(value)}"
    return error.message


def _document_order(error: jsonschema.ValidationError) -> tuple:
    """Shallow errors first (a missing key), then by position in the file."""
    path = tuple((0, step) if isinstance(step, int) else (1, str(step)) for step in error.absolute_path)
    return (len(path), path)


def check_header(data: Any, source: str) -> str:
    """Check the top level, the version and the kind; return the kind.

    >>> check_header({"sortcheck": 2, "kind": "gate-circuit"}, "net.json")
    Traceback (most recent call last):
    ...
    sortcheck.errors.NetlistError: net.json: sortcheck: unsupported format version 2 (this sortcheck reads version 1)
    """
    if not isinstance(data, dict):
        raise NetlistError(f"the top level must be a JSON object, got {_TYPE_NAMES.get(_json_type(data), 'null')}",
                           source)
    if "sortcheck" not in data:
        raise NetlistError('missing format version: add "sortcheck": 1', source)
    version = data["sortcheck"]
    if isinstance(version, bool) or version != FORMAT_VERSION:
        raise NetlistError(f"unsupported format version {_show(version)} (this sortcheck reads version "
                           f"{FORMAT_VERSION})", source, "sortcheck")
    if "kind" not in data:
        raise NetlistError(f"missing key 'kind' (one of {', '.join(KINDS)})", source)
    if data["kind"] not in KINDS:
        raise NetlistError(f"unknown kind {_show(data['kind'])} (expected one of {', '.join(KINDS)})",
                           source, "kind")
    return data["kind"]


def _json_type(value: Any) -> str:
    if isinstance(value, bool):
        return "boolean"
    if isinstance(value, int):
        return "integer"
    return {list: "array", str: "string", dict: "object", float: "number"}.get(type(value), "null")


_GATE_KEYS = {"out", "op", "in"}
_OPS = {"and", "or", "nand", "nor", "xor", "xnor", "not", "mux"}


def _is_comparator(item: Any) -> bool:
    return (type(item) is list and len(item) == 2 and type(item[0]) is int and type(item[1]) is int
            and item[0] >= 0 and item[1] >= 0)


def _is_signal(item: Any) -> bool:
    return (type(item) is str and item != "") or (type(item) is int and item in (0, 1))


def _is_gate(item: Any) -> bool:
    return (type(item) is dict and item.keys() == _GATE_KEYS and type(item["out"]) is str and item["out"] != ""
            and type(item["op"]) is str and item["op"] in _OPS and type(item["in"]) is list and len(item["in"]) > 0
            and all(map(_is_signal, item["in"])))


#: Fast exact equivalents of the schema's rules for the long arrays of a netlist.
#: jsonschema walks about 35,000 comparators a second; these predicates let it skip
#: arrays already known to satisfy the schema, and when one fails, jsonschema sees
#: the whole array and reports the error.  A test pins their equivalence.
BULK_ITEM_RULES = {
    "comparators": _is_comparator,
    "layers": lambda layer: type(layer) is list and all(map(_is_comparator, layer)),
    "gates": _is_gate,
}


def _without_valid_bulk(data: dict) -> dict:
    """A shallow copy of ``data`` whose long arrays are emptied where they are known to be valid."""
    slim = dict(data)
    for key, rule in BULK_ITEM_RULES.items():
        items = data.get(key)
        if type(items) is list and all(map(rule, items)):
            slim[key] = []
    return slim


TOP_LEVEL_KEYS = {
    "comparator-network": ("sortcheck", "kind", "name", "description", "property", "channels", "comparators",
                           "layers"),
    "gate-circuit": ("sortcheck", "kind", "name", "description", "property", "inputs", "gates", "outputs"),
}


def _check_top_level_keys(data: dict, source: str) -> None:
    """Refuse unknown top-level keys: a misspelt ``"property"`` must not silently change what is checked."""
    known = TOP_LEVEL_KEYS[data["kind"]]
    for key in data:
        if key not in known:
            close = difflib.get_close_matches(key, known, n=1)
            hint = f"did you mean {close[0]!r}?" if close else f"expected {', '.join(known)}"
            raise NetlistError(f"unknown key {key!r} for a {data['kind']} ({hint})", source)


def validate_shape(data: dict, source: str) -> None:
    """Validate ``data`` against the schema; raise the most useful error with its place."""
    _check_top_level_keys(data, source)
    if data.get("kind") == "comparator-network":
        has = [key for key in ("comparators", "layers") if key in data]
        if len(has) != 1:
            raise NetlistError("give exactly one of 'comparators' or 'layers'" +
                               (", not both" if has else ""), source)
    errors = list(itertools.islice(_validator().iter_errors(_without_valid_bulk(data)), 200))
    if errors:
        error = min(errors, key=_document_order)
        raise NetlistError(_describe(error), source, place(error.absolute_path))
