"""The command line: parse arguments, call the library, print a report, return the exit status.

``main(argv)`` never raises for bad input or bad options; it returns the exit
status (0 proved, 1 refuted, 2 error, 3 unknown).
"""

from __future__ import annotations

import argparse
import atexit
import os
import sys
from dataclasses import replace
from pathlib import Path
from typing import Sequence, TextIO

from sortcheck import __version__
from sortcheck.engines import ENGINE_NAMES, Budget, Options, redundant_comparators
from sortcheck.engines.base import interruption, interrupted_words
from sortcheck.engines.runners.distribute import InProcess, default_jobs, make_runner
from sortcheck.engines.runners.interrupts import catching_signals
from sortcheck.engines.runners.processes import ending_children, run_calls
from sortcheck.engines.equivalence import equivalent
from sortcheck.errors import SortcheckError, UsageError
from sortcheck.explain import diagnose_network
from sortcheck.explain.draw import draw_network, parse_input_values
from sortcheck.explain.lifted import lifted_view
from sortcheck.explain.gate_repair import repair_circuit
from sortcheck.explain.repair import repair_network
from sortcheck.load import dump_netlist, parse_property, read_netlist
from sortcheck.load.bristol import dump_bristol
from sortcheck.load.verilog.write import dump_verilog
from sortcheck.load.config import CheckRequest, expand, is_verilog, parameter_value, read_project_config, verilog_design

from sortcheck.model import DEFAULT_PROPERTY, ComparatorNetwork, GateCircuit, check_fits
from sortcheck.model.circuit_builds import build_circuit
from sortcheck.model.and_xor import mpc_costs
from sortcheck.model.cost import cost_counts
from sortcheck.model.families import FAMILIES, build_family
from sortcheck.model.lowering import STYLES
from sortcheck.report import (
    EXIT_ERROR, EXIT_PROVED, FileResult, check_file, check_report, dumps, exit_status, format_text, kind_of,
    stats_report, summarise,
)
from sortcheck.report.results import interrupted_result
from sortcheck.report.equivalence_report import equivalence_exit, equivalence_json, format_equivalence
from sortcheck.certify.check import certify_file_result
from sortcheck.report.export import FORMATS as EXPORT_FORMATS, export_text
from sortcheck.report.junit import junit_report
from sortcheck.report.progress import for_file as progress_line
from sortcheck.report.sarif import sarif_report
from sortcheck.report.text import describe_netlist, format_repair


class _Parser(argparse.ArgumentParser):
    """An argument parser that raises instead of exiting, so ``main`` returns the status."""

    def error(self, message: str) -> None:  # type: ignore[override]
        raise UsageError(message)


def _positive_seconds(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a number of seconds, got {text!r}") from None
    if not value > 0 or value == float("inf"):
        raise argparse.ArgumentTypeError(f"expected a positive number of seconds, got {text!r}")
    return value


def _width(text: str) -> int:
    if not text.isascii() or not text.isdigit() or not 1 <= int(text) <= 4096:
        raise argparse.ArgumentTypeError(f"expected a width from 1 to 4096 bits, got {text!r}")
    return int(text)


def _words(text: str) -> int:
    if not text.isascii() or not text.isdigit() or not 1 <= int(text) <= 65536:
        raise argparse.ArgumentTypeError(f"expected a number of words from 1 to 65536, got {text!r}")
    return int(text)


def _jobs(text: str) -> int:
    if not text.isascii() or not text.isdigit() or not 1 <= int(text) <= 1024:
        raise argparse.ArgumentTypeError(f"expected a number of processes from 1 to 1024, got {text!r}")
    return int(text)


def _size(text: str) -> int:
    if not text.isdigit():
        raise argparse.ArgumentTypeError(f"expected a whole number, got {text!r}")
    return int(text)


def _add_design_options(parser: argparse.ArgumentParser) -> None:
    """``--top`` and ``--param``, for commands that read Verilog."""
    parser.add_argument("--top", metavar="MODULE", help="Verilog: the top module (default: the one module no other "
                        "instantiates)")
    parser.add_argument("--param", action="append", default=[], metavar="NAME=VALUE",
                        help="Verilog: a parameter of the top module (repeatable)")


#: Default time budget of ``repair``, in seconds (a one-change repair of merge exchange 256 takes under 10 s;
#: a search of two changes in a large network can take hours).
REPAIR_SECONDS = 300.0


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(prog="sortcheck", description="Prove that comparator networks and sorting circuits "
                     "sort, merge, select or take the median, or find an input that breaks them.")
    parser.add_argument("--version", action="version", version=f"sortcheck {__version__}")
    commands = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)

    check = commands.add_parser("check", help="prove a property of netlists or find a counterexample")
    check.add_argument("paths", nargs="*", metavar="PATH",
                       help="netlist files or directories (every *.json, *.aag, *.aig, *.blif below), or the "
                            "Verilog files (*.v, *.sv) of one design; none: the [tool.sortcheck] table of "
                            "./pyproject.toml")
    check.add_argument("--property", metavar="SPEC",
                       help="property to check: sorts, sorts:desc, merges:M, selects:T[:sorted], median, "
                            "partial-sort:K[:stable], or a JSON object (default: the file's own, else sorts)")
    check.add_argument("--engine", choices=ENGINE_NAMES, help="engine to use (default: auto)")
    check.add_argument("--timeout", type=_positive_seconds, metavar="SECONDS",
                       help="time budget per file; a check that runs out is 'unknown' (exit 3)")
    check.add_argument("--words", type=_words, metavar="N",
                       help="AIGER, BLIF, Bristol and Verilog: group the input and output bits into N words (Verilog: the "
                            "data ports' bits in declaration order, low bit first; default: one word a port)")
    check.add_argument("--width", type=_width, metavar="BITS",
                       help="AIGER, BLIF, Bristol and Verilog: bits per word; comparator networks with --engine smt: the "
                            "word width (default: the smallest that separates the channels' values)")
    _add_design_options(check)
    check.add_argument("--count", action="store_true",
                       help="count every failing 0-1 input instead of stopping at the first (enumerate)")
    check.add_argument("--no-minimize", action="store_true",
                       help="report the engine's first counterexample instead of a provably smallest one")
    check.add_argument("--quiet", action="store_true", help="no progress display on standard error")
    check.add_argument("--certify", metavar="DIR",
                       help="write each verdict's certificate to DIR (CNFs and DRUP proofs of SAT calls, digests "
                            "of enumerations, counterexamples) and check it independently; the report says "
                            "whether each verdict is certified")
    check.add_argument("--jobs", type=_jobs, default=None, metavar="N",
                       help="worker processes: a large check is split into pieces run on N processes, and "
                            "several files are checked N at a time (default: the number of cores)")
    check.add_argument("--cluster", metavar="ADDRESS",
                       help="run the pieces of large checks on a Dask scheduler (tcp://host:8786); needs "
                            "pip install 'sortcheck[cluster]'")
    check.add_argument("--format", choices=REPORT_FORMATS, default="text", help="report format")
    check.add_argument("--output", metavar="FILE", help="write the report to FILE (a text report still "
                                                        "goes to the terminal)")

    stats = commands.add_parser("stats", help="print size, depth and other figures of netlists")
    stats.add_argument("paths", nargs="+", metavar="PATH", help="netlist files or directories")
    stats.add_argument("--redundant", action="store_true",
                       help="comparator networks: find the comparators that never swap on any input (proved)")
    stats.add_argument("--timeout", type=_positive_seconds, metavar="SECONDS", help="time budget per file "
                       "for --redundant")
    stats.add_argument("--words", type=_words, metavar="N", help="AIGER, BLIF, Bristol and Verilog files: number of words")
    stats.add_argument("--width", type=_width, metavar="BITS", help="AIGER, BLIF, Bristol and Verilog files: bits per word")
    _add_design_options(stats)
    stats.add_argument("--format", choices=("text", "json"), default="text")

    build = commands.add_parser("build", help="write a reference comparator network or sorting circuit")
    build.add_argument("family", choices=sorted(FAMILIES) + ["counting"], metavar="FAMILY",
                       help=f"one of {', '.join(sorted(FAMILIES))} (comparator networks, or gate circuits with "
                            f"--width), or counting (a counting-sort circuit, needs --width)")
    build.add_argument("channels", type=_size, metavar="N", help="number of channels (words)")
    build.add_argument("--width", type=_width, metavar="BITS", help="build a gate circuit on words of BITS bits")
    build.add_argument("--style", choices=sorted(STYLES), help="how comparators become gates (default: and-or)")
    build.add_argument("--key-bits", type=_width, metavar="K", help="compare only the K most significant bits")
    build.add_argument("--signed", action="store_true", help="compare two's complement words")
    build.add_argument("--output", metavar="FILE", help="write to FILE instead of standard output")
    build.add_argument("--format", choices=("json", "bristol", "verilog"),
                       help="json (netlist format), bristol (Bristol Fashion AND/XOR/INV gates: needs --width; "
                            "comparators in the xor style unless --style says otherwise) or verilog (a module with "
                            "a port per word); default: by the suffix of --output (.bristol, .v), else json")

    draw = commands.add_parser("draw", help="draw a comparator network (or a gate circuit that lifts to one) as "
                               "SVG, with a counterexample on it")
    draw.add_argument("path", metavar="PATH")
    draw.add_argument("--output", metavar="FILE.svg", required=True)
    draw.add_argument("--input", metavar="VALUES", help="values to follow through the network: comma-separated "
                      "integers or a string of 0s and 1s (default: the smallest counterexample, if any)")
    draw.add_argument("--property", metavar="SPEC", help="property to judge the outputs by (default: the file's)")
    draw.add_argument("--timeout", type=_positive_seconds, metavar="SECONDS")
    draw.add_argument("--words", type=_words, metavar="N", help="AIGER, BLIF, Bristol and Verilog files: number of words")
    draw.add_argument("--width", type=_width, metavar="BITS", help="AIGER, BLIF, Bristol and Verilog files: bits per word")
    _add_design_options(draw)

    export = commands.add_parser("export", help="write the verification condition: a CNF or SMT-LIB 2 script "
                                 "that is unsatisfiable exactly when the property holds")
    export.add_argument("path", metavar="PATH")
    export.add_argument("--to", choices=EXPORT_FORMATS, required=True,
                        help="dimacs (CNF) or smtlib (SMT-LIB 2); or the netlist itself: bristol (Bristol Fashion "
                             "AND/XOR/INV gates) or verilog (a synthesizable module, a port per word)")
    export.add_argument("--width", type=_width, metavar="BITS",
                        help="comparator networks: the word width to lower them to gates for bristol (needed), "
                             "and the default of the verilog module's parameter W (default 8); AIGER, BLIF, "
                             "Bristol and Verilog files: bits per word")
    export.add_argument("--style", choices=sorted(STYLES),
                        help="comparator networks to bristol: how comparators become gates (default: xor, the "
                             "fewest AND gates)")
    export.add_argument("--property", metavar="SPEC", help="property to state (default: the file's, else sorts)")
    export.add_argument("--output", metavar="FILE", help="write to FILE instead of standard output")
    export.add_argument("--words", type=_words, metavar="N",
                        help="AIGER, BLIF, Bristol and Verilog files: number of words (their --width: bits per word)")
    _add_design_options(export)

    repair = commands.add_parser("repair", help="find the smallest change that makes a network (comparators) or "
                                 "a gate circuit (gate ops) meet its property, proved by re-checking; gate "
                                 "circuits also get ranked suspect gates")
    repair.add_argument("path", metavar="PATH")
    repair.add_argument("--output", metavar="FIXED.json", help="write the repaired netlist here")
    repair.add_argument("--property", metavar="SPEC")
    repair.add_argument("--timeout", type=_positive_seconds, default=REPAIR_SECONDS, metavar="SECONDS",
                        help=f"time budget of the whole search (default: {REPAIR_SECONDS:g} s); when it runs out "
                             "the outcome says so (exit 3) and nothing is offered as a repair")
    repair.add_argument("--format", choices=("text", "json"), default="text")
    repair.add_argument("--jobs", type=_jobs, default=None, metavar="N",
                        help="worker processes for the search of two changes in a network, split into pieces "
                             "of first changes (default: the number of cores)")
    repair.add_argument("--cluster", metavar="ADDRESS",
                        help="run that search's pieces on a Dask scheduler (tcp://host:8786)")
    repair.add_argument("--quiet", action="store_true", help="no progress display on standard error")
    repair.add_argument("--words", type=_words, metavar="N", help="AIGER, BLIF, Bristol and Verilog files: number of words")
    repair.add_argument("--width", type=_width, metavar="BITS", help="AIGER, BLIF, Bristol and Verilog files: bits per word")
    _add_design_options(repair)

    equiv = commands.add_parser("equiv", help="prove that two netlists compute the same function, or find an "
                                "input they disagree on")
    equiv.add_argument("paths", nargs=2, metavar="PATH")
    equiv.add_argument("--signed", action="store_true", help="a comparator network beside a gate circuit: compare "
                       "two's complement words")
    equiv.add_argument("--words", type=_words, metavar="N", help="AIGER, BLIF, Bristol and Verilog files: number of words")
    equiv.add_argument("--width", type=_width, metavar="BITS", help="AIGER, BLIF, Bristol and Verilog files: bits per word")
    equiv.add_argument("--timeout", type=_positive_seconds, metavar="SECONDS")
    equiv.add_argument("--format", choices=("text", "json"), default="text")
    _add_design_options(equiv)
    return parser


def _write(path: str, text: str) -> None:
    """Write ``text`` to ``path`` whole or not at all: a file beside it, renamed over it when complete."""
    target = Path(path)
    partial = target.with_name(f".{target.name}.{os.getpid()}.partial")
    try:
        descriptor = os.open(partial, os.O_WRONLY | os.O_CREAT | os.O_TRUNC, 0o666)
        with open(descriptor, "w", encoding="utf-8") as stream:
            stream.write(text)
        os.replace(partial, target)
    except OSError as error:
        partial.unlink(missing_ok=True)
        raise UsageError(f"cannot write: {error.strerror or error}", path) from None


def _report_errors(results: Sequence[FileResult], stderr: TextIO) -> None:
    for result in results:
        if result.error is not None:
            print(f"error: {result.error}", file=stderr)


REPORT_FORMATS = ("text", "json", "junit", "sarif")


def _requests(args: argparse.Namespace) -> list[CheckRequest]:
    """The files to check with their settings; command-line options override the configuration."""
    if args.paths:
        requests = []
        design = _design(args, [path for path in args.paths if is_verilog(path)])
        if design is not None:
            requests.append(CheckRequest(design.files[0], elaboration=design))
        for path in args.paths:
            if is_verilog(path):
                continue
            files = expand(path)
            if not files:
                raise UsageError("no netlist files (*.json, *.aag, *.aig, *.blif, *.bristol) below this directory",
                                 path)
            requests.extend(CheckRequest(file) for file in files)
    else:
        requests = read_project_config(".")
    overrides = {"prop": parse_property(args.property) if args.property is not None else None,
                 "engine": args.engine, "timeout": args.timeout, "words": args.words, "width": args.width}
    return [replace(request, **{key: value for key, value in overrides.items() if value is not None})
            for request in requests]


def _check_request(request: CheckRequest, count: bool, minimize: bool, progress=None,
                   certify: str | None = None, runner=None) -> FileResult:
    options = Options(width=request.width, count=count, certify=certify is not None)
    result = check_file(request.path, request.prop, request.engine or "auto", request.timeout, options, progress,
                        minimize, request.words, runner, request.elaboration)
    if certify is not None:
        if interruption.requested():
            result = replace(result, certification={"certified": False, "certificate": {
                "method": "none", "files": [], "checked_by": [],
                "scope": "not certified: the run was interrupted before the certificate was checked"}})
        else:
            result = certify_file_result(result, certify, request.words, request.width, request.elaboration)
    return result


def _check_request_in_worker(*arguments) -> FileResult:
    """:func:`_check_request` in a worker process, which catches SIGINT and SIGTERM as its parent does."""
    with catching_signals():
        return _check_request(*arguments)


#: Seconds the workers checking a file each get to report what they covered when the run is interrupted.
REPORT_GRACE = 1.5


def _check_on_workers(requests: list[CheckRequest], args: argparse.Namespace, stderr: TextIO) -> list[FileResult]:
    """Check the files ``--jobs`` at a time, one a worker process; an interruption reaches the workers too."""
    workers = min(args.jobs, len(requests))
    where = InProcess(f"one of {workers} local processes checking a file each", splits=False)
    calls = [(_check_request_in_worker, (request, args.count, not args.no_minimize, None, args.certify, where))
             for request in requests]
    progress = progress_line(stderr, f"{len(requests)} files", args.quiet)

    def waiting(running: list[int], finished: int) -> None:
        if progress is not None:
            progress(finished, len(requests), "checking " + ", ".join(requests[number].path for number in running))

    try:
        answers = run_calls(calls, workers, interruption.requested, waiting, grace=REPORT_GRACE)
    finally:
        if progress is not None:
            progress.clear()
    results = []
    for request, answer in zip(requests, answers):
        if answer is None or answer[0] == "unfinished":
            results.append(interrupted_result(request.path, request.prop, started=answer is not None))
        elif answer[0] == "error":
            detail = answer[1].strip().splitlines()[-1]
            results.append(FileResult(request.path, error=SortcheckError(f"internal error (please report): {detail}",
                                                                           request.path)))
        else:
            results.append(answer[1])
    return results


def _check_all(requests: list[CheckRequest], args: argparse.Namespace, stderr: TextIO) -> list[FileResult]:
    if args.jobs is None:
        args.jobs = default_jobs()
    if args.jobs > 1 and len(requests) > 1 and not args.cluster:
        return _check_on_workers(requests, args, stderr)
    results = []
    with make_runner(args.jobs, args.cluster) as runner:
        for request in requests:
            if interruption.requested():
                results.append(interrupted_result(request.path, request.prop, started=False))
                continue
            progress = progress_line(stderr, request.path, args.quiet)
            try:
                results.append(_check_request(request, args.count, not args.no_minimize, progress, args.certify,
                                              runner))
            finally:
                if progress is not None:
                    progress.clear()
    return results


def _formatted(results: list[FileResult], report_format: str) -> str:
    if report_format == "json":
        return dumps(check_report(results))
    if report_format == "junit":
        return junit_report(results)
    if report_format == "sarif":
        return sarif_report(results)
    return format_text(results)


def run_check(args: argparse.Namespace, stdout: TextIO, stderr: TextIO) -> int:
    results = _check_all(_requests(args), args, stderr)
    _report_errors(results, stderr)
    report = _formatted(results, args.format)
    if args.output:
        _write(args.output, report)
        stdout.write(format_text(results))
    else:
        stdout.write(report)
    return exit_status(summarise(results))


def _design(args: argparse.Namespace, files: list[str]):
    """The Verilog design the command line names: its files, ``--top`` and ``--param`` (None without files)."""
    if not files:
        if args.top or args.param:
            raise UsageError("--top and --param apply to Verilog files (*.v, *.sv), and none was given")
        return None
    parameters = [parameter_value(text, "--param") for text in args.param]
    return verilog_design(files, args.top, parameters)


def _read(path: str, args: argparse.Namespace):
    """Read one netlist file of a command, a Verilog file as a design of its own with ``--top`` and ``--param``."""
    design = _design(args, [path]) if is_verilog(path) else None
    return read_netlist(path, args.words, args.width, design)


def _stats_result(path: str, args: argparse.Namespace, design=None) -> FileResult:
    try:
        netlist = read_netlist(path, args.words, args.width, design) if design else _read(path, args)
    except SortcheckError as error:
        return FileResult(path, error=error)
    stats = netlist.stats()
    if isinstance(netlist, GateCircuit):
        stats["costs"] = cost_counts(netlist)
        stats.update(mpc_costs(netlist))
    elif args.redundant:
        stats.update(_redundancy(netlist, args.timeout))
    return FileResult(path, kind_of(netlist), stats=stats)


def _redundancy(network: ComparatorNetwork, timeout: float | None) -> dict:
    redundant = redundant_comparators(network, Budget.of(timeout))
    if redundant is None:
        return {"redundant": None, "pruned_size": None}
    return {"redundant": redundant, "pruned_size": network.size - len(redundant)}


def _stats_line(result: FileResult) -> str:
    if result.error is not None:
        return f"ERROR    {result.error}"
    stats = result.stats
    line = f"{result.path}: {result.kind}, {describe_netlist(stats, result.kind)}"
    if result.kind == "gate-circuit":
        line += " (" + ", ".join(f"{op} {count}" for op, count in stats["ops"].items()) + ")"
        costs = stats["costs"]
        line += f"; as 2-input gates: {costs['and']} AND, {costs['or']} OR, {costs['xor']} XOR, {costs['not']} NOT"
        line += f"; as AND/XOR/NOT: {stats['and_count']} AND, AND depth {stats['and_depth']}"
    elif stats["reversed_comparators"]:
        line += f" ({stats['reversed_comparators']} reversed)"
    if "redundant" in stats:
        if stats["redundant"] is None:
            line += "; redundant comparators: undecided (time budget)"
        else:
            shown = ", ".join(map(str, stats["redundant"][:20])) + (", ..." if len(stats["redundant"]) > 20 else "")
            line += (f"; {len(stats['redundant'])} comparators never swap"
                     f"{' (' + shown + ')' if stats['redundant'] else ''}, pruned size {stats['pruned_size']}")
    return line


def run_stats(args: argparse.Namespace, stdout: TextIO, stderr: TextIO) -> int:
    design = _design(args, [path for path in args.paths if is_verilog(path)])
    results = [_stats_result(design.files[0], args, design)] if design else []
    paths = [file for path in args.paths if not is_verilog(path) for file in expand(path)]
    results += [_stats_result(path, args) for path in paths]
    _report_errors(results, stderr)
    if args.format == "json":
        stdout.write(dumps(stats_report(results)))
    else:
        stdout.write("".join(_stats_line(result) + "\n" for result in results))
    return EXIT_ERROR if any(result.error for result in results) else EXIT_PROVED


def run_build(args: argparse.Namespace, stdout: TextIO, stderr: TextIO) -> int:
    args.format = args.format or {".bristol": "bristol", ".v": "verilog"}.get(Path(args.output or "").suffix, "json")
    if args.format == "bristol" and args.width is None:
        raise UsageError("--width is needed for Bristol Fashion (its gates work on bits)", "build")
    if args.format == "bristol" and args.style is None and args.family != "counting":
        args.style = "xor"  # the fewest AND gates, what secure computation pays for
    if args.width is None:
        if args.family == "counting" or args.style or args.key_bits or args.signed:
            raise UsageError("--width is needed for gate circuits (counting, --style, --key-bits, --signed)",
                             "build")
        netlist = build_family(args.family, args.channels)
        figures = f"{netlist.channels} channels, {netlist.size} comparators, depth {netlist.depth}"
    else:
        netlist = build_circuit(args.family, args.channels, args.width, style=args.style, key_bits=args.key_bits,
                                signed=args.signed)
        figures = f"{netlist.words} words of {netlist.width} bits, {len(netlist.gates)} gates, depth {netlist.depth}"
    text = _build_text(netlist, args)
    if args.output:
        _write(args.output, text)
        print(f"wrote {args.output}: {netlist.name}, {figures}", file=stderr)
    else:
        stdout.write(text)
    return EXIT_PROVED


def _build_text(netlist, args: argparse.Namespace) -> str:
    if args.format == "bristol":
        return dump_bristol(netlist)
    if args.format == "verilog":
        return dump_verilog(netlist)
    return dump_netlist(netlist)


def run_draw(args: argparse.Namespace, stdout: TextIO, stderr: TextIO) -> int:
    netlist = _read(args.path, args)
    prop = parse_property(args.property) if args.property else netlist.claim or DEFAULT_PROPERTY
    check_fits(prop, netlist, args.path, where="--property" if args.property else "property")
    positions = netlist.channels if isinstance(netlist, ComparatorNetwork) else netlist.words
    diagnosis = None
    if args.input:
        try:
            noun = "the network has {} channels" if isinstance(netlist, ComparatorNetwork) else \
                "the circuit has {} input words"
            values = parse_input_values(args.input, positions, noun)
        except ValueError as error:
            raise UsageError(str(error), "--input") from None
        if isinstance(netlist, ComparatorNetwork) and set(values) <= {0, 1}:
            diagnosis = diagnose_network(netlist, prop, values)
    else:
        result = check_file(args.path, prop if args.property else None, timeout=args.timeout, words=args.words,
                            options=Options(width=args.width), elaboration=_design(args, [args.path])
                            if is_verilog(args.path) else None)
        example = result.verdict.counterexample if result.verdict else None
        values = example.input if example is not None else None
        diagnosis = result.diagnosis
    title, notes, shown = None, [], "" if values is None else f" with input {' '.join(map(str, values))}"
    if isinstance(netlist, GateCircuit):
        view = lifted_view(netlist, prop, values, Budget.of(args.timeout), args.path)
        network, values, diagnosis, prop = view.network, view.values, view.diagnosis, view.prop
        title = f"{netlist.name or Path(args.path).name}, lifted to a comparator network"
        notes = [f"A gate circuit of {netlist.words} words of {netlist.width} bits whose {len(view.lifting.blocks)} "
                 f"compare-and-swap blocks were proved to be min/max ({view.lifting.order.describe()}); the values "
                 "are the words' order keys."]
    else:
        network = netlist
    _write(args.output, draw_network(network, values, diagnosis, title, prop=prop, notes=notes))
    print(f"wrote {args.output}: {network.channels} channels, {network.size} comparators{shown}", file=stderr)
    return EXIT_PROVED


def run_repair(args: argparse.Namespace, stdout: TextIO, stderr: TextIO) -> int:
    network = _read(args.path, args)
    prop = parse_property(args.property) if args.property else None
    if prop is not None:
        check_fits(prop, network, args.path, where="--property")
    progress = progress_line(stderr, args.path, args.quiet)
    budget = Budget.of(args.timeout, progress)
    try:
        if isinstance(network, GateCircuit):
            text = Path(args.path).read_text(encoding="utf-8") if args.path.endswith(".json") else None
            outcome = repair_circuit(network, prop, budget, text=text)
        else:
            with make_runner(args.jobs, args.cluster) as runner:
                outcome = repair_network(network, prop, budget, runner=runner)
    finally:
        if progress is not None:
            progress.clear()
    if interruption.requested() and outcome.status in ("budget", "unknown"):
        outcome = replace(outcome, status="interrupted",
                          reason=f"interrupted by {interruption.signal}: {interrupted_words(outcome.reason)}")
    if outcome.network is not None and args.output and outcome.status == "repaired":
        _write(args.output, dump_netlist(outcome.network))
    report = {"sortcheck_report": 1, "results": [{"path": args.path, "kind": kind_of(network),
                                                  "property": (prop or network.claim or DEFAULT_PROPERTY).to_json(),
                                                  "repair": outcome.to_json()}]}
    stdout.write(dumps(report) if args.format == "json" else format_repair(args.path, outcome, args.output))
    return REPAIR_EXIT[outcome.status]


def run_equiv(args: argparse.Namespace, stdout: TextIO, stderr: TextIO) -> int:
    first, second = (_read(path, args) for path in args.paths)
    answer = equivalent(first, second, Budget.of(args.timeout), signed=args.signed, sources=args.paths)
    if interruption.requested() and answer.status.value == "unknown":
        answer = replace(answer, scope=f"interrupted by {interruption.signal}: {interrupted_words(answer.scope)}")
    if args.format == "json":
        stdout.write(dumps(equivalence_json(*args.paths, answer)))
    else:
        stdout.write(format_equivalence(*args.paths, answer))
    return equivalence_exit(answer)


def run_export(args: argparse.Namespace, stdout: TextIO, stderr: TextIO) -> int:
    netlist = _read(args.path, args)
    prop = parse_property(args.property) if args.property else netlist.claim or DEFAULT_PROPERTY
    check_fits(prop, netlist, args.path, where="--property" if args.property else "property")
    text = export_text(netlist, prop, args.to, args.path, width=args.width, style=args.style)
    if args.output:
        _write(args.output, text)
        what = "the netlist (not checked by export)" if args.to in ("bristol", "verilog") else prop.describe()
        print(f"wrote {args.output}: {args.to} for {what}", file=stderr)
    else:
        stdout.write(text)
    return EXIT_PROVED


COMMANDS = {"check": run_check, "stats": run_stats, "build": run_build, "draw": run_draw, "repair": run_repair,
            "equiv": run_equiv, "export": run_export}

#: Exit status of ``repair`` by outcome: a verified repair (or nothing to repair) 0, none within the
#: search 1, budget, undecided or interrupted 3.
REPAIR_EXIT = {"repaired": 0, "holds": 0, "none": 1, "budget": 3, "unknown": 3, "interrupted": 3}


def main(argv: Sequence[str] | None = None, stdout: TextIO | None = None, stderr: TextIO | None = None) -> int:
    """Run sortcheck with ``argv`` (default: the process arguments) and return the exit status."""
    stdout = stdout or sys.stdout
    stderr = stderr or sys.stderr
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
        if args.command is None:
            parser.print_help(stderr)
            return EXIT_ERROR
        with catching_signals(), ending_children():  # no child process outlives the command
            return COMMANDS[args.command](args, stdout, stderr)
    except SystemExit as exit_request:  # --help and --version
        return int(exit_request.code or 0)
    except SortcheckError as error:
        print(f"sortcheck: error: {error}", file=stderr)
        return EXIT_ERROR
    except KeyboardInterrupt:
        print("sortcheck: interrupted", file=stderr)
        return 130


def run() -> None:
    """Entry point of the ``sortcheck`` console script.

    After the command, the exit handlers run and the output is flushed, and
    then the process ends without tearing down its objects one by one: after
    a large repair search that teardown alone took 2.6 s, which made an
    interrupted run end late (and every other run too).
    """
    status = main()
    atexit._run_exitfuncs()
    for stream in (sys.stdout, sys.stderr):
        try:
            stream.flush()
        except (OSError, ValueError):  # closed, or a broken pipe
            pass
    os._exit(status)
