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
"""

from __future__ import annotations

import tomllib
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

from sortcheck.errors import UsageError
from sortcheck.load.grouping import is_sidecar
from sortcheck.load.property_text import parse_property
from sortcheck.model import Property

#: File name patterns a directory is searched for (grouping files beside circuits are left out).
NETLIST_PATTERNS = ("*.json", "*.aag", "*.aig", "*.blif", "*.bristol")

SETTINGS = ("property", "engine", "timeout", "words", "width")


@dataclass(frozen=True)
class CheckRequest:
    """One file to check and the settings that apply to it (None: the command's default)."""

    path: str
    prop: Property | None = None
    engine: str | None = None
    timeout: float | None = None
    words: int | None = None
    width: int | None = None


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
            own = _settings({k: v for k, v in entry.items() if k != "path"}, source, where, SETTINGS)
            path, settings = entry["path"], {**defaults, **own}
        elif isinstance(entry, str):
            path, settings = entry, defaults
        else:
            raise UsageError(f"expected a path or a table, got {entry!r}", source, where)
        base = CheckRequest(str(Path(directory) / path) if directory != "." else path, **settings)
        requests.extend(replace(base, path=file) for file in expand(base.path))
    return requests
