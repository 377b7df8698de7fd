"""Which files to check, and how: paths on the command line, directories, and ``[tool.sortcheck]``.

A directory stands for every netlist file below it (:data:`NETLIST_PATTERNS`), in sorted
order.  With no path on the command line, ``sortcheck check`` reads the
``[tool.sortcheck]`` table of ``pyproject.toml`` in the working directory::

    [tool.sortcheck]
    paths = ["netlists", {path = "rtl/median.json", property = "median", timeout = 120}]
    engine = "auto"      # defaults for every path: property, engine, timeout, width
    timeout = 60

Each entry of ``paths`` is a path or a table with ``path`` and any of the
per-path settings; relative paths are relative to the ``pyproject.toml``.
``words`` and ``width`` group the bits of AIGER and BLIF files into words;
``width`` is also the word width of word-level engines (``smt``).

A Verilog path (``*.v``, ``*.sv``) is one design; its table may name the
``top`` module, ``parameters`` (a table of names and values) and further
``files`` of the design (paths relative to the ``pyproject.toml`` too)::

    paths = [{path = "rtl/sorter.v", top = "sorter", parameters = {N = 16, W = 8}, files = ["rtl/cas.v"]}]
"""

from __future__ import annotations

import re
import tomllib
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

from sortcheck.errors import UsageError
from sortcheck.load.grouping import is_sidecar
from sortcheck.load.property_text import parse_property
from sortcheck.load.verilog import VERILOG_SUFFIXES, Elaboration
from sortcheck.model import Property

#: File name patterns a directory is searched for (grouping files beside circuits are left out).
NETLIST_PATTERNS = ("*.json", "*.aag", "*.aig", "*.blif", "*.bristol")

SETTINGS = ("property", "engine", "timeout", "words", "width")
DESIGN_SETTINGS = ("top", "parameters", "files")

_IDENTIFIER = re.compile(r"^[A-Za-z_][A-Za-z0-9_$]*$")
_PARAMETER_VALUE = re.compile(r"^(-?[0-9]+|[0-9]*'[sS]?[bBoOdDhH][0-9a-fA-FxXzZ_?]+|\"[^\"\\\s]*\")$")


@dataclass(frozen=True)
class CheckRequest:
    """One file to check and the settings that apply to it (None: the command's default)."""

    path: str
    prop: Property | None = None
    engine: str | None = None
    timeout: float | None = None
    words: int | None = None
    width: int | None = None
    elaboration: Elaboration | None = None


def parameter_value(text: str, where: str, source: str | None = None) -> tuple[str, str]:
    """``NAME=VALUE`` of a Verilog parameter, checked so that it cannot reach Yosys as anything else.

    >>> parameter_value("W=8", "--param"), parameter_value("INIT=4'b1010", "--param")
    (('W', '8'), ('INIT', "4'b1010"))
    """
    name, equals, value = text.partition("=")
    name, value = name.strip(), value.strip()
    if not equals or not _IDENTIFIER.match(name) or not _PARAMETER_VALUE.match(value):
        raise UsageError(f"expected NAME=VALUE with a Verilog parameter name and a number or a sized literal, "
                         f"got {text!r}", source, where)
    return name, value


def verilog_design(files: list[str], top: str | None, parameters: list[tuple[str, str]]) -> Elaboration:
    """The elaboration of Verilog files, the top checked to be an identifier."""
    if top is not None and not _IDENTIFIER.match(top):
        raise UsageError(f"expected a module name, got {top!r}", None, "--top")
    return Elaboration(tuple(files), top, tuple(parameters))


def is_verilog(path: str) -> bool:
    return Path(path).suffix.lower() in VERILOG_SUFFIXES


def expand(path: str) -> list[str]:
    """The netlist files a command-line path stands for (itself, or those below a directory).

    A path that does not exist is kept, so that it is reported as an error result.
    """
    directory = Path(path)
    if not directory.is_dir():
        return [path]
    found = sorted({file for pattern in NETLIST_PATTERNS for file in directory.rglob(pattern)
                    if file.is_file() and not is_sidecar(file)})
    return [str(file) for file in found]


def _setting(table: dict[str, Any], key: str, source: str, where: str) -> Any:
    value = table[key]
    place = f"{where}.{key}"
    if key == "property":
        if not isinstance(value, str):
            raise UsageError("expected a property such as \"sorts\" or \"merges:4\"", source, place)
        return parse_property(value, source=f"{source}: {place}")
    if key == "engine":
        if not isinstance(value, str):
            raise UsageError("expected an engine name", source, place)
        return value
    if key == "timeout":
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not 0 < value < float("inf"):
            raise UsageError(f"expected a positive number of seconds, got {value!r}", source, place)
        return float(value)
    if key == "words":
        if isinstance(value, bool) or not isinstance(value, int) or not 1 <= value <= 65536:
            raise UsageError(f"expected a number of words from 1 to 65536, got {value!r}", source, place)
        return value
    if isinstance(value, bool) or not isinstance(value, int) or not 1 <= value <= 4096:
        raise UsageError(f"expected a width from 1 to 4096 bits, got {value!r}", source, place)
    return value


def _settings(table: dict[str, Any], source: str, where: str, allowed: tuple[str, ...]) -> dict[str, Any]:
    for key in table:
        if key not in allowed:
            raise UsageError(f"unknown key {key!r} (expected {', '.join(allowed)})", source, f"{where}.{key}")
    names = {"property": "prop"}
    return {names.get(key, key): _setting(table, key, source, where) for key in SETTINGS if key in table}


def read_project_config(directory: str | Path = ".") -> list[CheckRequest]:
    """The check requests of ``[tool.sortcheck]`` in ``directory/pyproject.toml``."""
    file = Path(directory) / "pyproject.toml"
    source = str(file)
    try:
        document = tomllib.loads(file.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise UsageError("no paths given and no pyproject.toml here to read [tool.sortcheck] from") from None
    except (OSError, UnicodeDecodeError) as error:
        raise UsageError(f"cannot read: {error}", source) from None
    except tomllib.TOMLDecodeError as error:
        raise UsageError(f"not TOML: {error}", source) from None
    table = document.get("tool", {}).get("sortcheck")
    if not isinstance(table, dict):
        raise UsageError("no paths given and no [tool.sortcheck] table to read them from", source)
    defaults = _settings({k: v for k, v in table.items() if k != "paths"}, source, "tool.sortcheck", SETTINGS)
    entries = table.get("paths")
    if not isinstance(entries, list) or not entries:
        raise UsageError("expected a non-empty list of paths", source, "tool.sortcheck.paths")
    requests: list[CheckRequest] = []
    for index, entry in enumerate(entries):
        where = f"tool.sortcheck.paths[{index}]"
        if isinstance(entry, dict):
            if not isinstance(entry.get("path"), str):
                raise UsageError("a table in paths needs a 'path' string", source, where)
            own = _settings({k: v for k, v in entry.items() if k not in ("path",) + DESIGN_SETTINGS}, source, where,
                            SETTINGS)
            path, settings = entry["path"], {**defaults, **own}
            design = _design(entry, directory, source, where)
            if design is not None:
                requests.append(CheckRequest(_relative(directory, path), **settings,
                                             elaboration=replace(design, files=(_relative(directory, path),)
                                                                 + design.files)))
                continue
        elif isinstance(entry, str):
            path, settings = entry, defaults
        else:
            raise UsageError(f"expected a path or a table, got {entry!r}", source, where)
        if is_verilog(path):
            file = _relative(directory, path)
            requests.append(CheckRequest(file, **settings, elaboration=Elaboration((file,))))
            continue
        base = CheckRequest(_relative(directory, path), **settings)
        requests.extend(replace(base, path=file) for file in expand(base.path))
    return requests


def _relative(directory: str | Path, path: str) -> str:
    return str(Path(directory) / path) if directory != "." else path


def _design(entry: dict, directory: str | Path, source: str, where: str) -> Elaboration | None:
    """The Verilog design of a table in ``paths`` (its ``top``, ``parameters``, ``files``), None for netlists."""
    if not is_verilog(entry["path"]):
        for key in DESIGN_SETTINGS:
            if key in entry:
                raise UsageError("only Verilog paths (*.v, *.sv) take this key", source, f"{where}.{key}")
        return None
    top = entry.get("top")
    if top is not None and (not isinstance(top, str) or not _IDENTIFIER.match(top)):
        raise UsageError(f"expected a module name, got {top!r}", source, f"{where}.top")
    table = entry.get("parameters", {})
    if not isinstance(table, dict):
        raise UsageError("expected a table of parameter values", source, f"{where}.parameters")
    parameters = [parameter_value(f"{name}={value}",
                                  f"{where}.parameters.{name}", source)
                  for name, value in table.items()]
    files = entry.get("files", [])
    if not isinstance(files, list) or not all(isinstance(file, str) for file in files):
        raise UsageError("expected a list of Verilog file paths", source, f"{where}.files")
    return Elaboration(tuple(_relative(directory, file) for file in files), top, tuple(parameters))
