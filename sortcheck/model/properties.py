"""Properties a netlist can be checked for, with their two spellings.

A property is written as a JSON object in a netlist file (or on the command
line) or in a short form on the command line:

=========================  ==============================================
short form                 JSON object
=========================  ==============================================
``sorts``                  ``{"name": "sorts", "order": "ascending", "signed": false}``
``sorts:desc``             ``{"name": "sorts", "order": "descending", ...}``
``sorts:signed``           ``{"name": "sorts", ..., "signed": true}``
``merges:m``               ``{"name": "merges", "split": m}``
``selects:t[:sorted]``     ``{"name": "selects", "count": t, "sorted": false}``
``median``                 ``{"name": "median"}``
``partial-sort:k[:stable]`` ``{"name": "partial-sort", "key_bits": k, "stable": false}``
=========================  ==============================================

Any short form also takes a ``:signed`` suffix.  Parsing checks the shape of a
property; :func:`check_fits` checks it against a netlist.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from typing import Any

from sortcheck.errors import PropertyError
from sortcheck.model.circuit import GateCircuit
from sortcheck.model.network import ComparatorNetwork

PROPERTY_NAMES = ("sorts", "merges", "selects", "median", "partial-sort")


@dataclass(frozen=True)
class Property:
    """Base of all properties; ``signed`` says values compare as two's complement."""

    signed: bool = False

    name = "property"

    def to_json(self) -> dict[str, Any]:
        """The normalised JSON object of this property."""
        data = {"name": self.name, **self._parameters()}
        if self.signed:
            data["signed"] = True
        return data

    def _parameters(self) -> dict[str, Any]:
        return {}

    def describe(self) -> str:
        """A short phrase for people: ``sorts ascending``, ``merges runs 0..3 and 4..7``."""
        return self.name

    def short(self) -> str:
        """The command-line short form of this property."""
        return self.name + (":signed" if self.signed else "")


@dataclass(frozen=True)
class Sorts(Property):
    """The outputs are the input values in order, position 0 first."""

    order: str = "ascending"
    name = "sorts"

    def to_json(self) -> dict[str, Any]:
        return {"name": "sorts", "order": self.order, "signed": self.signed}

    def describe(self) -> str:
        return f"sorts {self.order}" + (" (signed)" if self.signed else "")

    def short(self) -> str:
        return "sorts" + (":desc" if self.order == "descending" else "") + (":signed" if self.signed else "")


@dataclass(frozen=True)
class Merges(Property):
    """Inputs whose positions ``0..split-1`` and ``split..n-1`` are each ascending come out ascending."""

    split: int = 1
    name = "merges"

    def _parameters(self) -> dict[str, Any]:
        return {"split": self.split}

    def describe(self) -> str:
        return f"merges two ascending runs split at {self.split}"

    def short(self) -> str:
        return f"merges:{self.split}" + (":signed" if self.signed else "")


@dataclass(frozen=True)
class Selects(Property):
    """The first ``count`` outputs hold the ``count`` smallest inputs (ascending when ``sorted``)."""

    count: int = 1
    sorted: bool = False
    name = "selects"

    def _parameters(self) -> dict[str, Any]:
        return {"count": self.count, "sorted": self.sorted}

    def describe(self) -> str:
        order = ", in order" if self.sorted else ""
        return f"selects the {self.count} smallest into the first {self.count} outputs{order}"

    def short(self) -> str:
        return f"selects:{self.count}" + (":sorted" if self.sorted else "") + (":signed" if self.signed else "")


@dataclass(frozen=True)
class Median(Property):
    """The median input is at output ``(n-1)/2`` (or at a gate circuit's only output word)."""

    name = "median"

    def describe(self) -> str:
        return "takes the median"


@dataclass(frozen=True)
class PartialSort(Property):
    """The outputs are a permutation of the inputs whose ``key_bits`` most significant bits ascend."""

    key_bits: int = 1
    stable: bool = False
    name = "partial-sort"

    def _parameters(self) -> dict[str, Any]:
        return {"key_bits": self.key_bits, "stable": self.stable}

    def describe(self) -> str:
        return f"sorts by the {self.key_bits} most significant bits" + (", stably" if self.stable else "")

    def short(self) -> str:
        return f"partial-sort:{self.key_bits}" + (":stable" if self.stable else "") + (":signed" if self.signed else "")


DEFAULT_PROPERTY = Sorts()

_ALLOWED_KEYS = {
    "sorts": {"order", "signed"},
    "merges": {"split", "signed"},
    "selects": {"count", "sorted", "signed"},
    "median": {"signed"},
    "partial-sort": {"key_bits", "stable", "signed"},
}


def _show(value: Any) -> str:
    """A value as the user wrote it (JSON where it is JSON; a loader's placeholder shows its literal)."""
    try:
        return json.dumps(value)
    except TypeError:
        return repr(value)


def _fail(message: str, where: str | None, source: str | None) -> PropertyError:
    return PropertyError(message, source, where)


def _join(where: str | None, key: str) -> str:
    return f"{where}.{key}" if where else key


def _positive_int(data: dict, key: str, where: str | None, source: str | None) -> int:
    if key not in data:
        raise _fail(f"missing key {key!r}", where, source)
    value = data[key]
    if isinstance(value, bool) or not isinstance(value, int):
        raise _fail(f"{key} must be an integer, got {_show(value)}", _join(where, key), source)
    if value < 1:
        raise _fail(f"{key} must be at least 1, got {value}", _join(where, key), source)
    return value


def _flag(data: dict, key: str, where: str | None, source: str | None) -> bool:
    value = data.get(key, False)
    if not isinstance(value, bool):
        raise _fail(f"{key} must be true or false, got {_show(value)}", _join(where, key), source)
    return value


def property_from_json(data: Any, source: str | None = None, where: str | None = "property") -> Property:
    """Build a property from its JSON object, checking its shape.

    Examples
    --------
    >>> property_from_json({"name": "merges", "split": 4})
    Merges(signed=False, split=4)
    >>> property_from_json({"name": "sorts", "oder": "descending"}, "net.json")
    Traceback (most recent call last):
    ...
    sortcheck.errors.PropertyError: net.json: property: unknown key 'oder' for sorts (expected order, signed)
    """
    if not isinstance(data, dict):
        raise _fail(f"a property must be an object, got {_show(data)}", where, source)
    name = data.get("name")
    if name not in PROPERTY_NAMES:
        expected = ", ".join(PROPERTY_NAMES)
        if name is None:
            raise _fail(f"missing key 'name' (one of {expected})", where, source)
        raise _fail(f"unknown property {_show(name)} (expected one of {expected})", _join(where, "name"), source)
    unknown = sorted(set(data) - _ALLOWED_KEYS[name] - {"name"})
    if unknown:
        allowed = ", ".join(sorted(_ALLOWED_KEYS[name]))
        raise _fail(f"unknown key {unknown[0]!r} for {name} (expected {allowed})", where, source)
    signed = _flag(data, "signed", where, source)
    if name == "sorts":
        order = data.get("order", "ascending")
        if order not in ("ascending", "descending"):
            raise _fail(f"order must be \"ascending\" or \"descending\", got {_show(order)}", _join(where, "order"), source)
        return Sorts(signed=signed, order=order)
    if name == "merges":
        return Merges(signed=signed, split=_positive_int(data, "split", where, source))
    if name == "selects":
        return Selects(signed=signed, count=_positive_int(data, "count", where, source),
                       sorted=_flag(data, "sorted", where, source))
    if name == "median":
        return Median(signed=signed)
    return PartialSort(signed=signed, key_bits=_positive_int(data, "key_bits", where, source),
                       stable=_flag(data, "stable", where, source))


def check_fits(prop: Property, netlist: ComparatorNetwork | GateCircuit, source: str | None,
               where: str | None = "property") -> None:
    """Raise :class:`PropertyError` when ``prop`` cannot apply to ``netlist``.

    Examples
    --------
    >>> check_fits(Median(), ComparatorNetwork(4, ()), "net.json")
    Traceback (most recent call last):
    ...
    sortcheck.errors.PropertyError: net.json: property: median needs an odd number of values, got 4 channels
    """
    if isinstance(netlist, ComparatorNetwork):
        _check_fits_network(prop, netlist.channels, source, where)
    else:
        _check_fits_circuit(prop, netlist, source, where)


def _check_count(prop: Property, count: int, noun: str, source: str | None, where: str | None) -> None:
    if isinstance(prop, Merges) and not 1 <= prop.split < count:
        raise _fail(f"split {prop.split} must lie inside 1..{count - 1} for {count} {noun}",
                    _join(where, "split"), source)
    if isinstance(prop, Selects) and prop.count > count:
        raise _fail(f"count {prop.count} exceeds the {count} {noun}", _join(where, "count"), source)
    if isinstance(prop, Median) and count % 2 == 0:
        raise _fail(f"median needs an odd number of values, got {count} {noun}", where, source)


def _check_fits_network(prop: Property, channels: int, source: str | None, where: str | None) -> None:
    if isinstance(prop, PartialSort):
        raise _fail("partial-sort applies to gate circuits only (a comparator network moves whole values)",
                    where, source)
    _check_count(prop, channels, "channels", source, where)


def _check_fits_circuit(prop: Property, circuit: GateCircuit, source: str | None, where: str | None) -> None:
    words, widths = circuit.words, circuit.widths
    for index, word in enumerate(circuit.inputs):
        if word.width != widths[0]:
            raise _fail(f"{prop.name} compares words of one width, but input {word.name!r} has width "
                        f"{word.width} and {circuit.inputs[0].name!r} has {widths[0]}", f"inputs[{index}].width", source)
    _check_count(prop, words, "input words", source, where)
    width = widths[0]
    if isinstance(prop, PartialSort) and prop.key_bits > width:
        raise _fail(f"key_bits {prop.key_bits} exceeds the word width {width}", _join(where, "key_bits"), source)
    allowed_counts = {words}
    if isinstance(prop, Selects):
        allowed_counts = set(range(prop.count, words + 1))
    elif isinstance(prop, Median):
        allowed_counts = {1, words}
    if len(circuit.outputs) not in allowed_counts:
        expected = " or ".join(str(c) for c in sorted(allowed_counts)) if len(allowed_counts) < 3 else \
            f"{min(allowed_counts)} to {max(allowed_counts)}"
        raise _fail(f"{prop.name} needs {expected} output words for {words} input words, got {len(circuit.outputs)}",
                    "outputs", source)
    for index, word in enumerate(circuit.outputs):
        if word.width != width:
            raise _fail(f"output {word.name!r} has {word.width} bits but the input words have {width}",
                        f"outputs[{index}].bits", source)
